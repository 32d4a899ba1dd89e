// The view-factor matrix as an HDF5 file: the sparse matrix in CSR arrays with its standard
// errors, the patches (names, areas, geometry, rays), the surfaces, the mesh and the run, all
// compressed. The layout is in the README ("HDF5 matrix file"); keep both in step and raise
// kFormatVersion when a reader would need to know.
#include <algorithm>
#include <limits>

#include "hearthray/error.hpp"
#include "hearthray/io.hpp"
#include "hearthray/patch_geometry.hpp"
#include "hearthray/version.hpp"
#include "outputs/atomic_file.hpp"
#include "outputs/hdf5_file.hpp"

namespace hearthray {

namespace {

constexpr std::int64_t kFormatVersion = 1;
// Non-zeros gathered before each write: 1 Mi entries (20 MiB), so that a matrix of hundreds of
// millions of entries is written without a second copy of it.
constexpr std::size_t kBlock = std::size_t(1) << 20;

void write_header(const hdf5::File& file, const ViewFactors& vf) {
  file.attribute("/", "format", std::string("hearthray view factors"));
  file.attribute("/", "format_version", kFormatVersion);
  file.attribute("/", "hearthray_version", std::string(kVersion));
  file.attribute("/", "rows_and_columns",
                 std::string("row i = emitting patch i; column j < N = receiving patch j; "
                             "column N = the surroundings; patch i is row i of /patches"));
  file.attribute("/", "caution",
                 std::string("Engineering estimate only. View factors are Monte Carlo estimates "
                             "for the mesh as given, each with the standard error stored beside "
                             "it; the mesh approximates the real geometry."));
  file.attribute("/", "patch_count", std::int64_t(vf.size()));
}

// F as CSR, N x (N + 1): each row's stored entries, then the surroundings when not zero.
// standard_error is aligned with data, stored as float32: seven significant digits are more
// than an error estimate needs, and at half the bytes (random mantissas hardly compress) it
// no longer makes up half the file.
void write_matrix(const hdf5::File& file, const ViewFactors& vf) {
  const std::size_t n = vf.size();
  std::uint64_t entries = std::uint64_t(vf.F.nonZeros());
  for (double s : vf.to_surroundings) entries += s != 0 ? 1 : 0;
  file.group("/F");
  file.attribute("/F", "shape", std::vector<std::int64_t>{std::int64_t(n), std::int64_t(n) + 1});
  file.attribute("/F", "smoothed", std::int64_t(vf.smoothed));
  file.attribute("/F", "max_correction_sigma", vf.max_correction_sigma);
  hdf5::Dataset data(file, "/F/data", H5T_IEEE_F64LE, entries);
  hdf5::Dataset indices(file, "/F/indices", H5T_STD_I32LE, entries);
  hdf5::Dataset errors(file, "/F/standard_error", H5T_IEEE_F32LE, entries);
  std::vector<double> values, standard_errors;
  std::vector<std::int32_t> columns;
  std::vector<std::int64_t> indptr{0};
  indptr.reserve(n + 1);
  auto flush = [&] {
    data.append(values.data(), values.size(), H5T_NATIVE_DOUBLE);
    indices.append(columns.data(), columns.size(), H5T_NATIVE_INT32);
    errors.append(standard_errors.data(), standard_errors.size(), H5T_NATIVE_DOUBLE);
    values.clear();
    columns.clear();
    standard_errors.clear();
  };
  auto add = [&](std::size_t row, std::int64_t column, double f) {
    values.push_back(f);
    columns.push_back(std::int32_t(column));
    standard_errors.push_back(vf.standard_error(row, f));
    if (values.size() == kBlock) flush();
  };
  for (std::size_t i = 0; i < n; ++i) {
    for (SparseMatrix::InnerIterator it(vf.F, Eigen::Index(i)); it; ++it)
      add(i, it.col(), it.value());
    if (vf.to_surroundings[i] != 0) add(i, std::int64_t(n), vf.to_surroundings[i]);
    indptr.push_back(indptr.back() + std::int64_t(vf.F.row(Eigen::Index(i)).nonZeros()) +
                     (vf.to_surroundings[i] != 0 ? 1 : 0));
  }
  flush();
  data.finish();
  indices.finish();
  errors.finish();
  file.int64s("/F/indptr", indptr);
}

void write_patches(const hdf5::File& file, const ViewFactors& vf, const Scene& scene,
                   const PatchSet& patches) {
  const std::size_t n = patches.size();
  const PatchGeometry g = patch_geometry(scene, patches);
  std::vector<std::int32_t> surface(n);
  std::vector<std::int8_t> side(n);
  std::vector<double> centroid(3 * n), normal(3 * n);
  std::vector<std::int64_t> offsets(patches.triangle_offset.begin(), patches.triangle_offset.end());
  for (std::size_t p = 0; p < n; ++p) {
    surface[p] = std::int32_t(patches.patches[p].surface);
    side[p] = patches.patches[p].side == Side::back ? 1 : 0;
    for (int axis = 0; axis < 3; ++axis) {
      centroid[3 * p + std::size_t(axis)] = g.centroid[p][axis];
      normal[3 * p + std::size_t(axis)] = g.normal[p][axis];
    }
  }
  file.group("/patches");
  file.strings("/patches/name", vf.names);
  file.int32s("/patches/surface_index", surface);
  file.int8s("/patches/side", side);
  file.doubles("/patches/area_m2", vf.areas);
  file.doubles("/patches/centroid_m", centroid, 3);
  file.doubles("/patches/normal", normal, 3);
  file.uint64s("/patches/rays", vf.rays);
  file.doubles("/patches/to_back_faces", vf.to_back_faces);
  file.int64s("/patches/triangle_offset", offsets);
  file.group("/surfaces");
  file.strings("/surfaces/name", scene.surface_names());
}

// The mesh vertices, and the triangles of the patches in patch order (a triangle of a
// two-sided surface twice), each wound counter-clockwise seen from the side its patch
// radiates from.
void write_mesh(const hdf5::File& file, const Scene& scene, const PatchSet& patches) {
  std::vector<double> vertices;
  vertices.reserve(3 * scene.vertices.size());
  for (const Vec3& v : scene.vertices) vertices.insert(vertices.end(), {v.x, v.y, v.z});
  std::vector<std::int64_t> triangles;
  triangles.reserve(3 * patches.triangle_index.size());
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const bool back = patches.patches[p].side == Side::back;
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
      const Triangle& t = scene.triangles[patches.triangle_index[k]];
      triangles.insert(triangles.end(), {t.v[0], back ? t.v[2] : t.v[1], back ? t.v[1] : t.v[2]});
    }
  }
  file.group("/mesh");
  file.doubles("/mesh/vertices_m", vertices, 3);
  file.int64s("/mesh/triangles", triangles, 3);
}

// The run, without timings or thread counts: the same inputs give the same bytes.
void write_run(const hdf5::File& file, const FactorReportInfo& info) {
  file.group("/run");
  file.attribute("/run", "scene", info.scene);
  file.attribute("/run", "seed", std::int64_t(info.seed));
  file.attribute("/run", "rays_per_patch", std::int64_t(info.rays_per_patch));
  file.attribute("/run", "smoothing", info.smoothing);
  file.attribute("/run", "smoothing_iterations", std::int64_t(info.smoothing_iterations));
  file.attribute("/run", "max_row_error", info.max_row_error);
  file.attribute("/run", "max_reciprocity_error", info.max_reciprocity_error);
  file.strings("/run/warnings", info.warnings);
}

}  // namespace

void write_factors_hdf5(const std::string& path, const ViewFactors& vf, const Scene& scene,
                        const PatchSet& patches, const FactorReportInfo& info) {
  if (vf.size() != patches.size() || std::size_t(vf.F.rows()) != vf.size() ||
      vf.to_surroundings.size() != vf.size())
    throw InputError("cannot write '" + path + "': the matrix has " + std::to_string(vf.F.rows()) +
                     " rows but the model has " + std::to_string(patches.size()) +
                     " patches (merge shards first)");
  if (vf.size() >= std::size_t(std::numeric_limits<std::int32_t>::max()))
    throw InputError("cannot write '" + path + "': more patches than 32-bit column indices hold");
  write_file_atomically(path, [&](const std::string& temporary) {
    hdf5::File file(temporary, path);
    write_header(file, vf);
    write_matrix(file, vf);
    write_patches(file, vf, scene, patches);
    write_mesh(file, scene, patches);
    write_run(file, info);
    file.close();
  });
}

}  // namespace hearthray
