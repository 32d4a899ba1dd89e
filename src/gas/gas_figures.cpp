// Zones as a VTU file and as a picture of a cut through them (see gas_report.hpp).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/gas_report.hpp"
#include "hearthray/units.hpp"
#include "pictures/canvas.hpp"

namespace hearthray {

void write_zones_vtu(const std::string& path, const GasRun& run) {
  const GasExchange& x = run.exchange;
  const std::size_t Z = x.zone_count();
  const std::string part = path + ".part";
  {
    std::ofstream out(part);
    if (!out) throw InputError("cannot write " + path);
    out << "<?xml version=\"1.0\"?>\n<VTKFile type=\"UnstructuredGrid\" version=\"0.1\" "
           "byte_order=\"LittleEndian\">\n<UnstructuredGrid>\n<FieldData>\n<DataArray "
           "type=\"Int32\" Name=\"converged\" NumberOfTuples=\"1\" format=\"ascii\">"
        << (run.solve.converged ? 1 : 0) << "</DataArray>\n</FieldData>\n<Piece NumberOfPoints=\""
        << 8 * Z << "\" NumberOfCells=\"" << Z << "\">\n";
    out << "<Points>\n<DataArray type=\"Float64\" NumberOfComponents=\"3\" format=\"ascii\">\n";
    for (std::size_t z = 0; z < Z; ++z) {
      const Box3 b = x.grid.cell_box(x.zone_cell[z]);
      // VTK hexahedron order: the bottom face counter-clockwise, then the top face.
      const double xs[8] = {b.lo.x, b.hi.x, b.hi.x, b.lo.x, b.lo.x, b.hi.x, b.hi.x, b.lo.x};
      const double ys[8] = {b.lo.y, b.lo.y, b.hi.y, b.hi.y, b.lo.y, b.lo.y, b.hi.y, b.hi.y};
      for (int k = 0; k < 8; ++k)
        out << shortest(xs[k]) << ' ' << shortest(ys[k]) << ' ' << shortest(k < 4 ? b.lo.z : b.hi.z)
            << '\n';
    }
    out << "</DataArray>\n</Points>\n<Cells>\n"
           "<DataArray type=\"Int64\" Name=\"connectivity\" format=\"ascii\">\n";
    for (std::size_t i = 0; i < 8 * Z; ++i) out << i << ((i % 8 == 7) ? '\n' : ' ');
    out << "</DataArray>\n<DataArray type=\"Int64\" Name=\"offsets\" format=\"ascii\">\n";
    for (std::size_t z = 0; z < Z; ++z) out << 8 * (z + 1) << '\n';
    out << "</DataArray>\n<DataArray type=\"UInt8\" Name=\"types\" format=\"ascii\">\n";
    for (std::size_t z = 0; z < Z; ++z) out << "12\n";
    out << "</DataArray>\n</Cells>\n<CellData>\n";
    auto array = [&](const char* name, auto value) {
      out << "<DataArray type=\"Float64\" Name=\"" << name << "\" format=\"ascii\">\n";
      for (std::size_t z = 0; z < Z; ++z) out << shortest(value(z)) << '\n';
      out << "</DataArray>\n";
    };
    array("zone", [](std::size_t z) { return double(z); });
    array("temperature [K]", [&](std::size_t z) { return run.solve.zones[z].temperature; });
    array("volume [m3]", [&](std::size_t z) { return x.volume[z]; });
    array("heat release [W]", [&](std::size_t z) { return run.solve.zones[z].heat_release; });
    array("emitted [W]", [&](std::size_t z) { return run.solve.zones[z].emitted; });
    array("absorbed [W]", [&](std::size_t z) { return run.solve.zones[z].absorbed; });
    out << "</CellData>\n</Piece>\n</UnstructuredGrid>\n</VTKFile>\n";
    if (!out.flush()) throw InputError("cannot write " + path);
  }
  if (std::rename(part.c_str(), path.c_str()) != 0) {
    std::remove(part.c_str());
    throw InputError("cannot write " + path);
  }
}

namespace {

using pictures::Canvas;
using pictures::kInk;
using pictures::kSoftInk;
constexpr Colour kBackground{0.969, 0.969, 0.961};
constexpr double kFont = 13, kPad = 24, kTop = 64, kBottom = 48, kBarGap = 24;

}  // namespace

Picture zone_cut_picture(const GasRun& run, const Scene& scene, int across) {
  if (across < 0 || across > 2) throw InputError("zone picture: the cut is across x, y or z");
  const GasExchange& x = run.exchange;
  const int u = across == 0 ? 1 : 0, v = across == 2 ? 1 : 2;  // drawn axes
  const Box3 box = x.grid.box();
  const int layer = x.grid.cells()[std::size_t(across)] / 2;
  const double plane = box.lo[across] + (layer + 0.5) * x.grid.cell_size()[across];
  // Pixels per metre: the longer side about 720 px.
  const double wu = box.hi[u] - box.lo[u], wv = box.hi[v] - box.lo[v];
  const double ppm = 720 / std::max(wu, wv);
  double lo = INFINITY, hi = -INFINITY;
  for (const ZoneGasResult& z : run.solve.zones) {
    lo = std::min(lo, z.temperature - kZeroCelsius);
    hi = std::max(hi, z.temperature - kZeroCelsius);
  }
  if (hi - lo < 1) lo -= 0.5, hi += 0.5;
  const pictures::ColourBar bar{lo, hi, sequential_colour, false, {}};
  Canvas measure(16, 16);
  const double bar_width = pictures::colour_bar_width(measure, bar, kFont);
  const double left = kPad, top = kTop;
  const int width = int(std::ceil(kPad + wu * ppm + kBarGap + bar_width + kPad));
  const int height = int(std::ceil(kTop + wv * ppm + kBottom));
  Canvas c(width, height);
  c.fill_rect(0, 0, width, height, kBackground);
  auto px = [&](double a) { return left + (a - box.lo[u]) * ppm; };
  auto py = [&](double b) { return top + (box.hi[v] - b) * ppm; };
  // Cells of the cut layer, coloured by their zone's temperature.
  for (std::size_t z = 0; z < x.zone_count(); ++z) {
    if (x.grid.cell_index(x.zone_cell[z])[std::size_t(across)] != layer) continue;
    const Box3 b = x.grid.cell_box(x.zone_cell[z]);
    const double t = run.solve.zones[z].temperature - kZeroCelsius;
    const Colour fill = sequential_colour((t - lo) / (hi - lo));
    c.fill_rect(px(b.lo[u]), py(b.hi[v]), (b.hi[u] - b.lo[u]) * ppm, (b.hi[v] - b.lo[v]) * ppm,
                fill);
    const double cw = (b.hi[u] - b.lo[u]) * ppm, ch = (b.hi[v] - b.lo[v]) * ppm;
    if (cw > 44 && ch > 20) {
      const Colour ink = (t - lo) / (hi - lo) > 0.55 ? kInk : Colour{1, 1, 1};
      c.text(px(0.5 * (b.lo[u] + b.hi[u])), py(0.5 * (b.lo[v] + b.hi[v])) + 0.35 * kFont,
             rounded("%.0f", t), kFont, ink, pictures::Align::centre);
    }
  }
  // Surfaces where the plane cuts them: each triangle's segment in the plane.
  for (const Triangle& t : scene.triangles) {
    std::vector<std::array<double, 2>> pts;
    for (int e = 0; e < 3; ++e) {
      const Vec3 a = scene.vertices[t.v[std::size_t(e)]];
      const Vec3 b = scene.vertices[t.v[std::size_t((e + 1) % 3)]];
      const double da = a[across] - plane, db = b[across] - plane;
      if ((da < 0) == (db < 0) || da == db) continue;
      const double s = da / (da - db);
      pts.push_back({a[u] + s * (b[u] - a[u]), a[v] + s * (b[v] - a[v])});
    }
    if (pts.size() == 2)
      c.line(px(pts[0][0]), py(pts[0][1]), px(pts[1][0]), py(pts[1][1]), 2.5, kInk);
  }
  c.stroke_rect(left, top, wu * ppm, wv * ppm, 1, kSoftInk);
  pictures::draw_scale_bar(c, left, top + wv * ppm + 12, wu, ppm, 0.9 * kFont, kInk);
  const double bx = left + wu * ppm + kBarGap;
  c.text(bx, top - 8, "in °C", kFont, kInk);
  pictures::draw_colour_bar(c, bar, bx, top, top + wv * ppm, kFont, kInk);
  c.text(kPad, 24,
         std::string("Gas temperature in the zones") +
             (run.solve.converged ? " (zone solve converged)"
                                  : " \u2014 NOT CONVERGED, not an answer"),
         1.2 * kFont, kInk, pictures::Align::left, pictures::Weight::bold);
  const char* axis = "xyz";
  char sub[200];
  std::snprintf(sub, sizeof sub,
                "Cut at %c = %.2f m through the middle zone layer; %c across, %c up; surfaces cut "
                "by the plane in black",
                axis[across], plane, axis[u], axis[v]);
  c.text(kPad, 44, pictures::fit_text(c, sub, width - 2 * kPad, kFont), kFont, kSoftInk);
  return c.finish();
}

}  // namespace hearthray
