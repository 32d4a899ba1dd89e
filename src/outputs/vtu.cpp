// ASCII VTK XML unstructured grid. ASCII rather than appended binary: any reader accepts it,
// and a person can look inside; numbers carry 17 significant digits, so a reader gets back the
// doubles that were written.
#include "hearthray/vtu.hpp"

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <memory>
#include <set>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "outputs/atomic_file.hpp"

namespace hearthray {
namespace {

struct FileCloser {
  void operator()(std::FILE* f) const {
    if (f) std::fclose(f);
  }
};
using File = std::unique_ptr<std::FILE, FileCloser>;

// Text for an XML comment: "--" may not appear inside one.
std::string comment_safe(const std::string& text) {
  std::string out;
  for (char c : text) out += (c == '-' && !out.empty() && out.back() == '-') ? '_' : c;
  return out;
}

// Writes `count` values produced by `value(i)` with `format`, eight to a line.
template <class F>
void write_values(std::FILE* f, std::size_t count, F value) {
  for (std::size_t i = 0; i < count; ++i) {
    value(f, i);
    std::fputc((i % 8 == 7 || i + 1 == count) ? '\n' : ' ', f);
  }
}

void write_double(std::FILE* f, double v) {
  std::fputs(shortest(v).c_str(), f);
}

// The points are the vertices the patches use, in mesh order; the cells are the patches'
// triangles, in patch order.
struct Layout {
  std::vector<std::int64_t> point_of_vertex;  // per mesh vertex; -1 when unused
  std::vector<std::uint32_t> points;          // mesh vertex of each point
  std::vector<std::uint32_t> cell_patch;      // patch of each cell
};

Layout layout(const Scene& scene, const PatchSet& patches) {
  Layout l;
  l.point_of_vertex.assign(scene.vertices.size(), -1);
  for (std::uint32_t t : patches.triangle_index)
    for (std::uint32_t v : scene.triangles[t].v) l.point_of_vertex[v] = 0;
  for (std::size_t v = 0; v < scene.vertices.size(); ++v) {
    if (l.point_of_vertex[v] < 0) continue;
    l.point_of_vertex[v] = std::int64_t(l.points.size());
    l.points.push_back(std::uint32_t(v));
  }
  l.cell_patch.resize(patches.triangle_index.size());
  for (std::size_t p = 0; p < patches.size(); ++p)
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k)
      l.cell_patch[k] = std::uint32_t(p);
  return l;
}

void write_points(std::FILE* f, const Scene& scene, const Layout& l) {
  std::fputs("      <Points>\n", f);
  std::fputs(
      "        <DataArray type=\"Float64\" Name=\"Points\" NumberOfComponents=\"3\" "
      "format=\"ascii\">\n",
      f);
  write_values(f, 3 * l.points.size(), [&](std::FILE* out, std::size_t i) {
    write_double(out, scene.vertices[l.points[i / 3]][int(i % 3)]);
  });
  std::fputs("        </DataArray>\n      </Points>\n", f);
}

// Triangles, wound so that a back-side patch faces the way it radiates.
void write_cells(std::FILE* f, const Scene& scene, const PatchSet& patches, const Layout& l) {
  const std::size_t n_cells = l.cell_patch.size();
  std::fputs("      <Cells>\n", f);
  std::fputs("        <DataArray type=\"Int64\" Name=\"connectivity\" format=\"ascii\">\n", f);
  write_values(f, 3 * n_cells, [&](std::FILE* out, std::size_t i) {
    const std::size_t cell = i / 3;
    const Triangle& tri = scene.triangles[patches.triangle_index[cell]];
    const bool back = patches.patches[l.cell_patch[cell]].side == Side::back;
    static constexpr int kFront[3] = {0, 1, 2}, kBack[3] = {0, 2, 1};
    const int corner = (back ? kBack : kFront)[i % 3];
    std::fprintf(out, "%lld", static_cast<long long>(l.point_of_vertex[tri.v[corner]]));
  });
  std::fputs("        </DataArray>\n", f);
  std::fputs("        <DataArray type=\"Int64\" Name=\"offsets\" format=\"ascii\">\n", f);
  write_values(f, n_cells, [&](std::FILE* out, std::size_t i) {
    std::fprintf(out, "%llu", static_cast<unsigned long long>(3 * (i + 1)));
  });
  std::fputs("        </DataArray>\n", f);
  std::fputs("        <DataArray type=\"UInt8\" Name=\"types\" format=\"ascii\">\n", f);
  write_values(f, n_cells, [&](std::FILE* out, std::size_t) { std::fputs("5", out); });
  std::fputs("        </DataArray>\n      </Cells>\n", f);
}

// Surface, patch and side of every cell, then the fields.
void write_cell_data(std::FILE* f, const PatchSet& patches, const std::vector<PatchField>& fields,
                     const Layout& l) {
  const std::size_t n_cells = l.cell_patch.size();
  std::fputs("      <CellData Scalars=\"surface\">\n", f);
  auto int_array = [&](const char* name, auto value) {
    std::fprintf(f, "        <DataArray type=\"Int32\" Name=\"%s\" format=\"ascii\">\n", name);
    write_values(f, n_cells, [&](std::FILE* out, std::size_t i) {
      std::fprintf(out, "%ld", static_cast<long>(value(l.cell_patch[i])));
    });
    std::fputs("        </DataArray>\n", f);
  };
  int_array("surface", [&](std::uint32_t p) { return patches.patches[p].surface; });
  int_array("patch", [&](std::uint32_t p) { return p; });
  int_array("side", [&](std::uint32_t p) { return patches.patches[p].side == Side::back; });
  for (const PatchField& field : fields) {
    std::fprintf(f, "        <DataArray type=\"Float64\" Name=\"%s\" format=\"ascii\">\n",
                 markup_escape(vtu_array_name(field)).c_str());
    write_values(f, n_cells, [&](std::FILE* out, std::size_t i) {
      write_double(out, field.values[l.cell_patch[i]]);
    });
    std::fputs("        </DataArray>\n", f);
  }
  std::fputs("      </CellData>\n", f);
}

// Field data of the grid: the flags, then the surface names as a String array, which the VTK
// XML format writes in ASCII as the character codes of each string followed by a 0.
void write_field_data(std::FILE* f, const Scene& scene, const std::vector<VtuFlag>& field_data) {
  std::fputs("    <FieldData>\n", f);
  for (const VtuFlag& flag : field_data)
    std::fprintf(f,
                 "      <DataArray type=\"Int32\" Name=\"%s\" NumberOfTuples=\"1\" "
                 "format=\"ascii\">%ld</DataArray>\n",
                 markup_escape(flag.name).c_str(), static_cast<long>(flag.value));
  std::fprintf(f,
               "      <DataArray type=\"String\" Name=\"surface_names\" NumberOfTuples=\"%zu\" "
               "format=\"ascii\">\n",
               scene.surfaces.size());
  for (const Surface& surface : scene.surfaces) {
    std::fputs("       ", f);
    for (char c : surface.name) std::fprintf(f, " %d", int(static_cast<unsigned char>(c)));
    std::fputs(" 0\n", f);
  }
  std::fputs("      </DataArray>\n    </FieldData>\n", f);
}

void write_grid(std::FILE* f, const Scene& scene, const PatchSet& patches,
                const std::vector<PatchField>& fields, const std::vector<VtuFlag>& field_data,
                const Layout& l) {
  std::fputs("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n", f);
  std::fputs("<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\">\n",
             f);
  std::fputs("<!-- written by hearthray; surfaces:", f);
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s)
    std::fprintf(f, " %zu %s%s", s, comment_safe(scene.surfaces[s].name).c_str(),
                 s + 1 < scene.surfaces.size() ? "," : "");
  std::fputs(" -->\n", f);
  std::fputs("  <UnstructuredGrid>\n", f);
  write_field_data(f, scene, field_data);
  std::fprintf(f, "    <Piece NumberOfPoints=\"%zu\" NumberOfCells=\"%zu\">\n", l.points.size(),
               l.cell_patch.size());
  write_points(f, scene, l);
  write_cells(f, scene, patches, l);
  write_cell_data(f, patches, fields, l);
  std::fputs("    </Piece>\n  </UnstructuredGrid>\n</VTKFile>\n", f);
}

}  // namespace

std::string vtu_array_name(const PatchField& field) {
  return field.unit.empty() ? field.name : field.name + " [" + field.unit + "]";
}

void write_vtu(const std::string& path, const Scene& scene, const PatchSet& patches,
               const std::vector<PatchField>& fields, const std::vector<VtuFlag>& field_data) {
  std::set<std::string> names{"surface", "patch", "side"};
  for (const PatchField& field : fields) {
    check_field(field, patches);
    if (!names.insert(vtu_array_name(field)).second)
      throw InputError("cannot write '" + path + "': two cell arrays would be named '" +
                       vtu_array_name(field) + "'");
  }
  const Layout l = layout(scene, patches);

  write_file_atomically(path, [&](const std::string& temporary) {
    File file(std::fopen(temporary.c_str(), "wb"));
    if (!file) throw InputError("cannot open '" + path + "' for writing");
    write_grid(file.get(), scene, patches, fields, field_data, l);
    const bool failed = std::ferror(file.get()) != 0;
    if (std::fclose(file.release()) != 0 || failed)
      throw InputError("writing '" + path + "' failed (disk full or no permission?)");
  });
}

}  // namespace hearthray
