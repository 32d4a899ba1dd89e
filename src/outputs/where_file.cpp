// The file of `check --where` (where_file.hpp).
#include "hearthray/where_file.hpp"

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"

namespace hearthray {
namespace {

// The findings as cells: points, and per cell its points, kind and item number.
struct Cells {
  std::vector<Vec3> points;
  std::vector<std::vector<std::size_t>> cells;
  std::vector<int> kind, item;
  std::vector<std::string> group;  // per cell, the OBJ group it belongs to

  void add(std::vector<Vec3> corners, int k, int i, const std::string& g) {
    std::vector<std::size_t> ids;
    for (const Vec3& p : corners) {
      ids.push_back(points.size());
      points.push_back(p);
    }
    cells.push_back(ids);
    kind.push_back(k);
    item.push_back(i);
    group.push_back(g);
  }
};

// OBJ group names: no blanks.
std::string group_name(std::string s) {
  for (char& c : s)
    if (c == ' ' || c == '\t') c = '_';
  return s;
}

Cells cells_of(const Scene& scene, const WhereFindings& f) {
  Cells c;
  for (std::size_t g = 0; g < f.gaps.size(); ++g)
    for (const auto& e : f.gaps[g].edges)
      c.add({e[0], e[1]}, 1, int(g + 1), "gap_" + std::to_string(g + 1));
  for (std::size_t k = 0; k < f.contacts.size(); ++k) {
    const FaceContact& t = f.contacts[k];
    const char* prefix = t.kind == ContactKind::touching  ? "touching_"
                         : t.kind == ContactKind::doubled ? "doubled_"
                                                          : "crossing_";
    const int kind = t.kind == ContactKind::touching ? 2 : t.kind == ContactKind::doubled ? 3 : 5;
    const std::string name = prefix + group_name(scene.surfaces[t.surface_a].name) + "_" +
                             group_name(scene.surfaces[t.surface_b].name);
    for (const auto& piece : t.pieces)
      c.add({piece[0], piece[1], piece[2]}, kind, int(k + 1), name);
    for (const auto& line : t.lines) c.add({line[0], line[1]}, kind, int(k + 1), name);
  }
  for (std::size_t k = 0; k < f.back_hits.size(); ++k) {
    const std::string name = "back_hits_" + group_name(scene.surfaces[f.back_hits[k].surface].name);
    for (const Vec3& p : f.back_hits[k].points) c.add({p}, 4, int(k + 1), name);
  }
  return c;
}

void write_obj(std::ostream& out, const Cells& c) {
  out << "# hearthray check: gaps (lines), touching or doubled faces (faces), back-face hits "
         "(points); metres\n";
  std::string current;
  for (std::size_t i = 0; i < c.cells.size(); ++i) {
    if (c.group[i] != current) out << "g " << (current = c.group[i]) << "\n";
    for (std::size_t id : c.cells[i]) {
      const Vec3& p = c.points[id];
      out << "v " << shortest(p.x) << ' ' << shortest(p.y) << ' ' << shortest(p.z) << "\n";
    }
    const std::size_t n = c.cells[i].size();
    out << (n == 1 ? "p" : n == 2 ? "l" : "f");
    for (std::size_t k = n; k > 0; --k) out << " -" << k;
    out << "\n";
  }
}

void write_vtu(std::ostream& out, const Cells& c) {
  out << "<?xml version=\"1.0\"?>\n"
         "<VTKFile type=\"UnstructuredGrid\" version=\"0.1\" byte_order=\"LittleEndian\">\n"
         "<UnstructuredGrid>\n<Piece NumberOfPoints=\""
      << c.points.size() << "\" NumberOfCells=\"" << c.cells.size() << "\">\n";
  out << "<Points>\n<DataArray type=\"Float64\" NumberOfComponents=\"3\" format=\"ascii\">\n";
  for (const Vec3& p : c.points)
    out << shortest(p.x) << ' ' << shortest(p.y) << ' ' << shortest(p.z) << "\n";
  out << "</DataArray>\n</Points>\n<Cells>\n"
         "<DataArray type=\"Int64\" Name=\"connectivity\" format=\"ascii\">\n";
  for (const auto& cell : c.cells)
    for (std::size_t id : cell) out << id << "\n";
  out << "</DataArray>\n<DataArray type=\"Int64\" Name=\"offsets\" format=\"ascii\">\n";
  std::size_t offset = 0;
  for (const auto& cell : c.cells) out << (offset += cell.size()) << "\n";
  out << "</DataArray>\n<DataArray type=\"UInt8\" Name=\"types\" format=\"ascii\">\n";
  for (const auto& cell : c.cells)  // VTK_VERTEX 1, VTK_LINE 3, VTK_TRIANGLE 5
    out << (cell.size() == 1 ? 1 : cell.size() == 2 ? 3 : 5) << "\n";
  out << "</DataArray>\n</Cells>\n<CellData Scalars=\"kind\">\n"
         "<DataArray type=\"Int32\" Name=\"kind\" format=\"ascii\">\n";
  for (int k : c.kind) out << k << "\n";
  out << "</DataArray>\n<DataArray type=\"Int32\" Name=\"item\" format=\"ascii\">\n";
  for (int i : c.item) out << i << "\n";
  out << "</DataArray>\n</CellData>\n</Piece>\n</UnstructuredGrid>\n</VTKFile>\n";
}

}  // namespace

void write_where_file(const std::string& path, const Scene& scene, const WhereFindings& found) {
  namespace fs = std::filesystem;
  const std::string ext = fs::path(path).extension().string();
  if (ext != ".obj" && ext != ".vtu")
    throw InputError("--where '" + path + "': write .obj or .vtu (the file type is its ending)");
  const Cells cells = cells_of(scene, found);
  const std::string part = path + ".part";
  {
    std::ofstream out(part, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError("cannot open '" + path + "' for writing");
    if (ext == ".obj")
      write_obj(out, cells);
    else
      write_vtu(out, cells);
    out.flush();
    if (!out) {
      std::error_code ec;
      fs::remove(part, ec);
      throw InputError("writing '" + path + "' failed (disk full or no permission?)");
    }
  }
  std::error_code ec;
  fs::rename(part, path, ec);
  if (ec) throw InputError("cannot write '" + path + "': " + ec.message());
}

}  // namespace hearthray
