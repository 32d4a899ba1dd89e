// OBJ loading. tinyobjloader (rc10) reads faces, groups and materials; our own pass over the
// text reads the vertex coordinates and checks what tinyobjloader lets through: it turns
// "nan" into 0 without a word, reads "1e999" as inf, only warns about indices past the end
// (and not at all about negative ones), and reads indices in polygons without a bounds check.
// The packaged library is also built for float coordinates; reading them ourselves keeps
// double precision.
#include "hearthray/scene.hpp"

#include <tiny_obj_loader.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <map>
#include <numeric>
#include <sstream>
#include <unordered_map>
#include <unordered_set>

#include "core/files.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "mesh/obj_text.hpp"
#include "mesh/polygon.hpp"

namespace hearthray {
namespace {

using mesh::first_non_utf8;
using mesh::parse_integer;
using mesh::parse_number;
using mesh::split_blanks;
using mesh::trim;

const char* const kUnnamed = "unnamed";

// "mesh.obj:12: ", the start of a message about one line.
std::string at_line(const std::string& name, std::size_t line_no) {
  return name + ":" + std::to_string(line_no) + ": ";
}

// Surface names go into JSON, VTU and pictures, which are UTF-8: refuse a name that is not.
void check_name_utf8(const std::string& line, const std::string& name, std::size_t line_no) {
  const std::size_t bad = first_non_utf8(line);
  if (bad == std::string::npos) return;
  char byte[8];
  std::snprintf(byte, sizeof byte, "0x%02X", static_cast<unsigned char>(line[bad]));
  throw InputError(at_line(name, line_no) + "the name on this line is not UTF-8 text (byte " +
                   byte + " at column " + std::to_string(bad + 1) +
                   "); surface names must be UTF-8: save the file as UTF-8 or rename it");
}

// What our own pass over the text finds.
struct PreScan {
  std::vector<Vec3> vertices;  // file units, double precision
  std::vector<std::string> material_libraries;
  std::vector<std::string> used_materials;  // usemtl names, in order of first use
  std::size_t faces = 0;
  std::vector<std::size_t> face_lines;    // per face ('f' line): its line number
  std::vector<std::size_t> face_corners;  // per face: its number of corners
};

// Splits text into lines the way tinyobjloader does (\n, \r\n or a lone \r end a line).
std::vector<std::string> split_lines(const std::string& text) {
  std::vector<std::string> lines;
  std::size_t start = 0;
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (text[i] == '\n' || text[i] == '\r') {
      lines.push_back(text.substr(start, i - start));
      if (text[i] == '\r' && i + 1 < text.size() && text[i + 1] == '\n') ++i;
      start = i + 1;
    }
  }
  if (start < text.size()) lines.push_back(text.substr(start));
  return lines;
}

// A 'v x y z' line (without its "v "): three finite numbers.
Vec3 parse_vertex(const std::string& rest, const std::string& name, std::size_t line_no) {
  const std::vector<std::string> t = split_blanks(rest);
  if (t.size() < 3) {
    throw InputError(at_line(name, line_no) + "vertex line has " + std::to_string(t.size()) +
                     " coordinate(s); a 'v' line needs three numbers: v x y z");
  }
  double c[3];
  for (int k = 0; k < 3; ++k) {
    if (!parse_number(t[k], &c[k]) || !std::isfinite(c[k])) {
      throw InputError(at_line(name, line_no) + "vertex coordinate '" + t[k] +
                       "' is not a finite number; write v x y z as decimal numbers");
    }
  }
  return {c[0], c[1], c[2]};
}

// A face index past the vertices read so far: checked once the whole file is read.
struct ForwardRef {
  std::size_t line;
  long index;
};

// An 'f ...' line (without its "f "): at least three corners, each v, v/vt, v//vn or
// v/vt/vn with non-zero integer indices; a vertex counted back must exist already.
std::size_t check_face(const std::string& rest, long vertices_so_far, const std::string& name,
                       std::size_t line_no, std::vector<ForwardRef>* forward) {
  const std::vector<std::string> t = split_blanks(rest);
  if (t.size() < 3) {
    throw InputError(at_line(name, line_no) + "face has " + std::to_string(t.size()) +
                     " vertex index(es); a face needs at least 3");
  }
  for (const std::string& corner : t) {
    std::vector<std::string> parts;
    std::stringstream ss(corner);
    for (std::string part; std::getline(ss, part, '/');) parts.push_back(part);
    long v = 0;
    if (parts.empty() || !parse_integer(parts[0], &v)) {
      throw InputError(at_line(name, line_no) + "face corner '" + corner +
                       "' does not start with a vertex index (an integer, in range)");
    }
    for (std::size_t k = 0; k < parts.size(); ++k) {
      long index = 0;
      if (k > 0 && parts[k].empty()) continue;
      if (!parse_integer(parts[k], &index)) {
        throw InputError(at_line(name, line_no) + "face corner '" + corner + "' has index '" +
                         parts[k] + "' that is not an integer (or is out of range)");
      }
      if (index == 0) {
        throw InputError(at_line(name, line_no) + "face corner '" + corner +
                         "' has index 0; OBJ indices start at 1 (or -1 for the last)");
      }
    }
    if (v < 0 && -v > vertices_so_far) {
      throw InputError(at_line(name, line_no) + "face refers to vertex " + std::to_string(v) +
                       " (counted back from here), but only " + std::to_string(vertices_so_far) +
                       " vertices come before it");
    }
    if (v > vertices_so_far) forward->push_back({line_no, v});
  }
  return t.size();
}

PreScan prescan(const std::string& text, const std::string& name, SurfacesFrom surfaces_from) {
  PreScan scan;
  std::vector<ForwardRef> forward;  // positive indices past the vertices read so far
  std::unordered_set<std::string> seen_materials;
  const std::vector<std::string> lines = split_lines(text);
  for (std::size_t n = 0; n < lines.size(); ++n) {
    const std::string& raw = lines[n];
    const std::size_t begin = raw.find_first_not_of(" \t");
    if (begin == std::string::npos || raw[begin] == '#') continue;
    const std::string line = raw.substr(begin);
    const bool blank_after_1 = line.size() > 1 && (line[1] == ' ' || line[1] == '\t');
    if (line[0] == 'v' && blank_after_1) {
      scan.vertices.push_back(parse_vertex(line.substr(2), name, n + 1));
    } else if (line[0] == 'f' && blank_after_1) {
      scan.face_corners.push_back(check_face(
          line.substr(2), static_cast<long>(scan.vertices.size()), name, n + 1, &forward));
      scan.face_lines.push_back(n + 1);
      ++scan.faces;
    } else if ((line[0] == 'g' || line[0] == 'o') && blank_after_1) {
      if (surfaces_from == SurfacesFrom::groups) check_name_utf8(line, name, n + 1);
    } else if (line.compare(0, 6, "usemtl") == 0) {
      if (surfaces_from == SurfacesFrom::materials) check_name_utf8(line, name, n + 1);
      const std::string material = trim(line.substr(6));
      if (seen_materials.insert(material).second) scan.used_materials.push_back(material);
    } else if (line.compare(0, 6, "mtllib") == 0 && line.size() > 6 &&
               (line[6] == ' ' || line[6] == '\t')) {
      for (const std::string& lib : split_blanks(line.substr(7))) {
        scan.material_libraries.push_back(lib);
      }
    }
  }
  const long count = static_cast<long>(scan.vertices.size());
  for (const ForwardRef& ref : forward) {
    if (ref.index > count) {
      throw InputError(at_line(name, ref.line) + "face refers to vertex " +
                       std::to_string(ref.index) + ", but the file has only " +
                       std::to_string(count) + " vertices ('v' lines)");
    }
  }
  return scan;
}

// tinyobjloader warnings we have not already turned into errors: keep the ones that tell the
// user something about the geometry; drop material ones in groups mode and the ones about
// normals and texture coordinates (unused here).
void keep_loader_warnings(const std::string& warn, const std::string& name,
                          const MeshOptions& options, std::vector<std::string>* warnings) {
  std::stringstream ss(warn);
  for (std::string line; std::getline(ss, line);) {
    line = trim(line);
    if (line.empty() || line == ".") continue;
    const bool about_materials =
        line.find("aterial") != std::string::npos || line.find("mtl") != std::string::npos;
    if (about_materials && options.surfaces_from == SurfacesFrom::groups) continue;
    if (line.find("normal indices") != std::string::npos ||
        line.find("texcoord indices") != std::string::npos) {
      continue;
    }
    warnings->push_back(name + ": " + line);
  }
}

// Surfaces taken from materials need every material used to be defined in the .mtl file.
void check_materials(const PreScan& scan, const std::vector<tinyobj::material_t>& materials,
                     const std::string& name, const std::string& mtl_dir, bool from_file,
                     std::vector<std::string>* warnings) {
  std::unordered_set<std::string> defined;
  for (const auto& m : materials) defined.insert(m.name);
  std::vector<std::string> missing;
  for (const auto& m : scan.used_materials) {
    if (!defined.count(m)) missing.push_back("'" + m + "'");
  }
  if (!missing.empty()) {
    std::string why;
    if (!from_file) {
      why = "a mesh read from a stream has no .mtl file";
    } else if (scan.material_libraries.empty()) {
      why = "the file has no 'mtllib' line naming its .mtl file";
    } else {
      why = "they are not defined in " + join(scan.material_libraries) + " (looked for in '" +
            (mtl_dir.empty() ? std::string(".") : mtl_dir) + "'; is the .mtl file missing?)";
    }
    throw InputError(name + ": surfaces are taken from materials, but material(s) " +
                     join(missing) + " used by 'usemtl' cannot be named: " + why +
                     ". Put the .mtl file beside the mesh, or take surfaces from groups");
  }
  if (scan.used_materials.empty()) {
    warnings->push_back(name +
                        ": surfaces are taken from materials, but the file has no "
                        "'usemtl' line: all faces are in one surface 'unnamed'");
  }
}

// What the triangulation met on one surface's polygons.
struct PolygonRemarks {
  std::size_t bent = 0;        // polygons not flat (a corner off the plane by > kBentShare)
  double worst_offset = 0;     // the largest distance of a corner from its polygon's plane
  double worst_size = 0;       // that polygon's size
  std::size_t worst_line = 0;  // its line in the file
  std::vector<std::size_t> crossing_lines;  // polygons that cross themselves
};

// A polygon is reported as not flat when a corner lies farther than this share of the
// polygon's size from its plane (exporters' round-off is ~1e-7 of it; common practice, no
// source).
constexpr double kBentShare = 1e-3;

// Triangles per surface name, surfaces in order of first appearance.
struct GroupedTriangles {
  std::vector<std::string> names;
  std::vector<std::vector<std::array<std::uint32_t, 3>>> per_surface;
  std::vector<PolygonRemarks> remarks;  // per surface
  Box3 used_bounds;                     // of the vertices the triangles use
};

// The surface a polygon belongs to: its group or its material.
std::string surface_of(const tinyobj::shape_t& shape, std::size_t face,
                       const std::vector<tinyobj::material_t>& materials,
                       const MeshOptions& options) {
  std::string surface;
  if (options.surfaces_from == SurfacesFrom::groups) {
    surface = trim(shape.name);
  } else {
    const auto& ids = shape.mesh.material_ids;
    const int m = face < ids.size() ? ids[face] : -1;
    if (m >= 0 && m < static_cast<int>(materials.size())) surface = trim(materials[m].name);
  }
  return surface.empty() ? kUnnamed : surface;
}

// Cuts one polygon into triangles in its own plane (mesh/polygon.hpp) and notes what it met.
void add_polygon(const std::vector<std::uint32_t>& corners, const std::vector<Vec3>& vertices,
                 std::size_t line, std::uint32_t surface, GroupedTriangles* g) {
  const mesh_detail::PolygonCut cut = mesh_detail::triangulate_polygon(corners, vertices);
  for (const auto& tri : cut.triangles) g->per_surface[surface].push_back(tri);
  for (std::uint32_t v : corners) g->used_bounds.grow(vertices[v]);
  PolygonRemarks& r = g->remarks[surface];
  if (!cut.clean) r.crossing_lines.push_back(line);
  if (cut.out_of_plane > kBentShare * cut.size) {
    ++r.bent;
    if (cut.out_of_plane / cut.size > r.worst_offset / std::max(r.worst_size, 1e-300)) {
      r.worst_offset = cut.out_of_plane;
      r.worst_size = cut.size;
      r.worst_line = line;
    }
  }
}

GroupedTriangles group_triangles(const std::vector<tinyobj::shape_t>& shapes,
                                 const std::vector<tinyobj::material_t>& materials,
                                 const std::vector<Vec3>& vertices, const PreScan& scan,
                                 const std::string& name, const MeshOptions& options) {
  GroupedTriangles g;
  std::unordered_map<std::string, std::uint32_t> index_of;
  const auto vertex_count = static_cast<int>(vertices.size());
  std::size_t face = 0;  // faces in file order, matching the pre-scan's 'f' lines
  std::vector<std::uint32_t> corners;
  for (const tinyobj::shape_t& shape : shapes) {
    const auto& idx = shape.mesh.indices;
    std::size_t next = 0;
    for (std::size_t f = 0; next < idx.size(); ++f, ++face) {
      // The corner count comes from the pre-scan: tinyobjloader keeps it in an unsigned char.
      if (face >= scan.face_corners.size() || next + scan.face_corners[face] > idx.size())
        throw InputError(name + ": cannot read the mesh: faces were read inconsistently");
      const std::string surface = surface_of(shape, f, materials, options);
      auto it = index_of.find(surface);
      if (it == index_of.end()) {
        it = index_of.emplace(surface, static_cast<std::uint32_t>(g.names.size())).first;
        g.names.push_back(surface);
        g.per_surface.emplace_back();
        g.remarks.emplace_back();
      }
      corners.clear();
      for (std::size_t k = 0; k < scan.face_corners[face]; ++k) {
        const int v = idx[next + k].vertex_index;
        // Checked by the pre-scan already; kept so a library change cannot read out of range.
        if (v < 0 || v >= vertex_count) {
          throw InputError(name + ": a face refers to vertex " + std::to_string(v + 1) +
                           ", outside the " + std::to_string(vertex_count) + " vertices");
        }
        corners.push_back(static_cast<std::uint32_t>(v));
      }
      next += scan.face_corners[face];
      add_polygon(corners, vertices, scan.face_lines[face], it->second, &g);
    }
  }
  if (g.names.empty()) {
    throw InputError(name + ": the mesh has no triangles after reading its faces");
  }
  return g;
}

// Warnings about surface `s`'s polygons: not flat, or crossing themselves. Lengths in the
// file's unit.
void polygon_warnings(const GroupedTriangles& g, std::uint32_t s, const std::string& name,
                      LengthUnit unit, std::vector<std::string>* warnings) {
  const PolygonRemarks& r = g.remarks[s];
  const std::string surface = "surface '" + g.names[s] + "': ";
  const std::string u = " " + to_string(unit);
  const double per = metres_per(unit);
  if (r.bent > 0) {
    warnings->push_back(
        at_line(name, r.worst_line) + surface + std::to_string(r.bent) +
        " polygon(s) are not flat; the worst (this line) has a corner " +
        rounded("%.3g", r.worst_offset / per) + u + " off its plane (" +
        percent(r.worst_offset / r.worst_size) + " of its size, " +
        rounded("%.4g", r.worst_size / per) + u +
        "). They are cut into triangles as written, which puts a crease in them; split "
        "them into flat faces in the modelling program if the shape matters");
  }
  if (!r.crossing_lines.empty()) {
    std::vector<std::string> lines;
    for (std::size_t line : r.crossing_lines) lines.push_back(std::to_string(line));
    warnings->push_back(at_line(name, r.crossing_lines.front()) + surface +
                        std::to_string(lines.size()) + " polygon(s) cross themselves (line(s) " +
                        join_at_most(lines, 5) +
                        "): no cut into triangles covers such an outline, and the one made may "
                        "cover area outside it or leave some out; redraw them without "
                        "crossing edges");
  }
}

// Adds surface `s` of the grouped triangles to the scene, dropping triangles whose area is at
// most `threshold`.
void add_surface(const GroupedTriangles& g, std::uint32_t s, double threshold,
                 const std::string& name, Scene* scene) {
  Surface surface;
  surface.name = g.names[s];
  surface.first_triangle = static_cast<std::uint32_t>(scene->triangles.size());
  for (const auto& tri : g.per_surface[s]) {
    const Vec3& a = scene->vertices[tri[0]];
    const Vec3& b = scene->vertices[tri[1]];
    const Vec3& c = scene->vertices[tri[2]];
    const double area = 0.5 * norm(cross(b - a, c - a));
    if (!std::isfinite(area)) {
      throw InputError(name + ": surface '" + surface.name +
                       "': a triangle's area overflows; the coordinates are too large (check "
                       "the mesh unit)");
    }
    if (area <= threshold) {
      ++surface.dropped_degenerate;
      continue;
    }
    Triangle triangle;
    triangle.v = tri;
    triangle.surface = s;
    scene->triangles.push_back(triangle);
    surface.area += area;
    for (std::uint32_t v : tri) scene->bounds.grow(scene->vertices[v]);
  }
  surface.triangle_count =
      static_cast<std::uint32_t>(scene->triangles.size()) - surface.first_triangle;
  if (surface.dropped_degenerate > 0) {
    scene->warnings.push_back(name + ": surface '" + surface.name + "': dropped " +
                              std::to_string(surface.dropped_degenerate) +
                              " degenerate (zero-area) triangle(s)");
  }
  scene->surfaces.push_back(std::move(surface));
}

// Every surface must keep a triangle after degenerate ones are dropped.
void check_usable(const Scene& scene, const std::string& name) {
  if (scene.triangles.empty()) {
    std::size_t dropped = 0;
    for (const Surface& surface : scene.surfaces) dropped += surface.dropped_degenerate;
    throw InputError(name + ": the mesh has no usable triangle: all " + std::to_string(dropped) +
                     " triangles have zero area (degenerate)");
  }
  for (const Surface& surface : scene.surfaces) {
    if (surface.triangle_count == 0) {
      throw InputError(name + ": surface '" + surface.name +
                       "' has only degenerate (zero-area) "
                       "triangles (" +
                       std::to_string(surface.dropped_degenerate) +
                       "); fix its faces or remove it");
    }
  }
}

// Tracing (single-precision Embree, a self-hit offset relative to the model) is checked
// scale-free from 10 micrometres to 10,000 km; the span accepted keeps a factor 10 off both.
void check_scale(double diagonal, const std::string& name, const MeshOptions& options) {
  if (diagonal >= kMinModelSize_m && diagonal <= kMaxModelSize_m) return;
  throw InputError(name + ": the model is " + rounded("%.3g", diagonal) +
                   " m across (bounding-box diagonal, its coordinates read in " +
                   to_string(options.unit) + "); hearthray handles models from 0.1 mm to " +
                   "1000 km across. Is the unit right? Set it with [mesh] unit = \"mm\" (or m, " +
                   "cm, in, ft) in a scene file");
}

// Reads a material library as tinyobjloader's MaterialFileReader does, but only a regular
// file of bounded size (an 'mtllib /dev/zero' would never end).
class CheckedMaterialReader : public tinyobj::MaterialReader {
 public:
  explicit CheckedMaterialReader(std::string dir) : dir_(std::move(dir)) {}
  bool operator()(const std::string& id, std::vector<tinyobj::material_t>* materials,
                  std::map<std::string, int>* by_name, std::string* warn,
                  std::string* err) override {
    const std::string path = dir_.empty() ? id : (std::filesystem::path(dir_) / id).string();
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) {
      if (warn) *warn += "Material file [ " + path + " ] not found.\n";
      return false;
    }
    std::istringstream in(read_regular_file(path, "material library", kMaxMaterialBytes));
    tinyobj::LoadMtl(by_name, materials, &in, warn, err);
    return true;
  }

 private:
  std::string dir_;
};

// Sizes of what the tool models (a small kiln to a large hall), for the size check of the
// mesh unit: bounding-box diagonals outside this range are taken for a wrong unit (common
// practice, no source).
constexpr double kSmallestModel = 0.05, kLargestModel = 200;  // m

// A warning when the model's size is implausible in its unit (a furnace drawn in mm read as
// metres is kilometres across), suggesting the unit that gives the size nearest a few metres.
void check_size(const Scene& scene, const std::string& name, LengthUnit unit,
                std::vector<std::string>* warnings) {
  const double d = scene.bounds.diagonal();
  if (!(d < kSmallestModel || d > kLargestModel)) return;
  const double in_file = d / metres_per(unit);
  LengthUnit best = unit;
  double best_distance = INFINITY;
  for (LengthUnit u :
       {LengthUnit::mm, LengthUnit::cm, LengthUnit::m, LengthUnit::in, LengthUnit::ft}) {
    const double size = in_file * metres_per(u);
    const double distance = std::fabs(std::log(size / 3.0));  // nearest 3 m, by ratio
    if (size >= kSmallestModel && size <= kLargestModel && distance < best_distance)
      best = u, best_distance = distance;
  }
  std::string text = name + ": the model is " + rounded("%.4g", d) +
                     " m across (bounding-box diagonal, coordinates read in " + to_string(unit) +
                     "); a furnace, kiln or room is 0.05 to 200 m.";
  if (best != unit) {
    const std::string u = to_string(best);
    text += " If the coordinates are in " + u + " (" + rounded("%.4g", in_file * metres_per(best)) +
            " m across), give the unit: --unit " + u + " for a bare mesh, or unit = \"" + u +
            "\" in [mesh] of the scene file";
  } else {
    text += " Check the unit of the coordinates";
  }
  warnings->push_back(text);
}

Scene build_scene(const std::string& text, const std::string& name, const std::string& mtl_dir,
                  bool from_file, const MeshOptions& options) {
  if (!(options.degenerate_relative_area >= 0) ||
      !std::isfinite(options.degenerate_relative_area)) {
    throw InputError("MeshOptions::degenerate_relative_area must be a finite number >= 0");
  }
  PreScan scan = prescan(text, name, options.surfaces_from);
  if (scan.faces == 0) {
    throw InputError(name +
                     ": the mesh has no faces; an OBJ mesh needs 'v x y z' vertex lines "
                     "and 'f i j k' face lines");
  }

  tinyobj::attrib_t attrib;
  std::vector<tinyobj::shape_t> shapes;
  std::vector<tinyobj::material_t> materials;
  std::string warn, err;
  std::istringstream in(text);
  // The .mtl file is read only when it names the surfaces.
  CheckedMaterialReader file_reader(mtl_dir);
  const bool read_materials = from_file && options.surfaces_from == SurfacesFrom::materials;
  tinyobj::MaterialReader* reader = read_materials ? &file_reader : nullptr;
  const bool ok = tinyobj::LoadObj(&attrib, &shapes, &materials, &warn, &err, &in, reader,
                                   /*triangulate=*/false);
  if (!ok) throw InputError(name + ": cannot read the mesh: " + trim(err));
  if (attrib.vertices.size() != 3 * scan.vertices.size()) {
    throw InputError(name + ": cannot read the mesh: vertex lines were read inconsistently (" +
                     std::to_string(scan.vertices.size()) + " found)");
  }

  Scene scene;
  scene.source = name;
  keep_loader_warnings(warn, name, options, &scene.warnings);
  if (!trim(err).empty()) scene.warnings.push_back(name + ": " + trim(err));
  if (options.surfaces_from == SurfacesFrom::materials)
    check_materials(scan, materials, name, mtl_dir, from_file, &scene.warnings);

  const double scale = metres_per(options.unit);
  scene.vertices.reserve(scan.vertices.size());
  for (const Vec3& p : scan.vertices) scene.vertices.push_back(p * scale);
  const GroupedTriangles grouped =
      group_triangles(shapes, materials, scene.vertices, scan, name, options);

  // Scale-free threshold: the same mesh in any unit drops the same triangles.
  const double diagonal = grouped.used_bounds.diagonal();
  check_scale(diagonal, name, options);
  const double threshold = options.degenerate_relative_area * diagonal * diagonal;
  for (std::uint32_t s = 0; s < grouped.names.size(); ++s) {
    polygon_warnings(grouped, s, name, options.unit, &scene.warnings);
    add_surface(grouped, s, threshold, name, &scene);
  }
  check_usable(scene, name);
  check_size(scene, name, options.unit, &scene.warnings);
  return scene;
}

}  // namespace

Scene load_obj(const std::string& path, const MeshOptions& options) {
  const std::string text = read_regular_file(path, "mesh file", kMaxMeshBytes);
  const std::string mtl_dir = std::filesystem::path(path).parent_path().string();
  return build_scene(text, path, mtl_dir, /*from_file=*/true, options);
}

Scene load_obj(std::istream& in, const std::string& name, const MeshOptions& options) {
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw InputError(name + ": the mesh stream could not be read");
  return build_scene(buffer.str(), name, "", /*from_file=*/false, options);
}

int Scene::find_surface(const std::string& name) const {
  for (std::size_t i = 0; i < surfaces.size(); ++i) {
    if (surfaces[i].name == name) return static_cast<int>(i);
  }
  return -1;
}

Vec3 Scene::normal(std::uint32_t t) const {
  const Triangle& tri = triangles[t];
  const Vec3& a = vertices[tri.v[0]];
  return normalized(cross(vertices[tri.v[1]] - a, vertices[tri.v[2]] - a));
}

double Scene::triangle_area(std::uint32_t t) const {
  const Triangle& tri = triangles[t];
  const Vec3& a = vertices[tri.v[0]];
  return 0.5 * norm(cross(vertices[tri.v[1]] - a, vertices[tri.v[2]] - a));
}

std::vector<std::string> Scene::surface_names() const {
  std::vector<std::string> out;
  out.reserve(surfaces.size());
  for (const Surface& s : surfaces) out.push_back(s.name);
  return out;
}

}  // namespace hearthray
