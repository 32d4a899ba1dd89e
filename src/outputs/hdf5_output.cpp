// The view-factor matrix as an HDF5 file: the sparse matrix in CSR arrays with its standard
// errors, the patches (names, areas, geometry, rays), the surfaces, the mesh and the run, all
// compressed. The layout is in the README ("HDF5 matrix file"); keep both in step and raise
// kFormatVersion when a reader would need to know.
#include <tbb/enumerable_thread_specific.h>

#include <algorithm>
#include <cmath>
#include <cstring>
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

// Row starts of F as CSR, N x (N + 1): each row's stored entries, then the surroundings when
// not zero.
std::vector<std::int64_t> row_starts(const ViewFactors& vf) {
  std::vector<std::int64_t> indptr(vf.size() + 1, 0);
  for (std::size_t i = 0; i < vf.size(); ++i)
    indptr[i + 1] = indptr[i] + std::int64_t(vf.F.row(Eigen::Index(i)).nonZeros()) +
                    (vf.to_surroundings[i] != 0 ? 1 : 0);
  return indptr;
}

// Calls part(k, i, p0, p1, surroundings) for each row i holding some of the entries
// [first, first + count) of the CSR rows: its stored entries p0..p1 (positions in F's arrays)
// fall at k.. from `first`, followed by its surroundings entry when `surroundings`.
template <class Part>
void for_row_parts(const ViewFactors& vf, const std::vector<std::int64_t>& indptr,
                   std::uint64_t first, std::uint64_t count, Part part) {
  const SparseMatrix& F = vf.F;
  const auto after = std::upper_bound(indptr.begin(), indptr.end(), std::int64_t(first));
  std::size_t i = std::size_t(after - indptr.begin()) - 1;  // the row holding `first`
  const std::int64_t end = std::int64_t(first + count);
  for (std::int64_t e = std::int64_t(first); e < end; ++i) {
    const std::int64_t row_end = std::min(indptr[i + 1], end) - indptr[i];  // within the row
    if (e - indptr[i] >= row_end) continue;                                 // an empty row
    const std::int64_t start = F.outerIndexPtr()[i];
    const std::int64_t stored =
        F.isCompressed() ? F.outerIndexPtr()[i + 1] - start : std::int64_t(F.innerNonZeroPtr()[i]);
    const std::int64_t j0 = e - indptr[i], j1 = std::max(j0, std::min(stored, row_end));
    part(std::uint64_t(e) - first, i, start + j0, start + j1, row_end > stored);
    e = indptr[i] + row_end;
  }
}

// The entries are made chunk by chunk in parallel, straight into the file's types: the host's
// byte order must be the file's (little-endian).
static_assert(__BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__,
              "the matrix file's datasets are little-endian, written from memory as they are");

// Value k of a chunk being made.
template <class T>
void put(unsigned char* out, std::uint64_t k, T value) {
  std::memcpy(out + k * sizeof(T), &value, sizeof(T));
}

// A standard error as stored: float32 rounded to 16 significant bits (the low byte of its
// significand zero; half away from zero, from the double in one step), a relative rounding of
// at most 2^-16, about 1.5e-5. An error estimate needs far less: it is itself uncertain by
// about 1/(2 sqrt(hits)) relative, 1.6e-3 even for a factor of 1 from 10^5 rays, and
// uncertainties are usually quoted to at most two significant digits (GUM, JCGM 100:2008,
// 7.2.6; recalled). The byte dropped is random and incompressible: it would take one byte per
// entry, about a tenth of the file.
// Written with a select rather than a branch, so that stored_errors' loop is vectorised.
inline float error_to_store(double se) {
  constexpr int kDropped = 52 - 15;  // of a double's 52 significand bits, 15 kept (+ the hidden 1)
  constexpr std::uint64_t kExponent = 0x7ff0000000000000ull;
  std::uint64_t bits;
  std::memcpy(&bits, &se, sizeof bits);
  const std::uint64_t rounded =
      (bits + (std::uint64_t(1) << (kDropped - 1))) & ~((std::uint64_t(1) << kDropped) - 1);
  bits = (bits & kExponent) == kExponent ? bits : rounded;  // infinities and NaN as they are
  std::memcpy(&se, &bits, sizeof se);
  return static_cast<float>(se);  // exact: 16 significant bits fit in a float's 24
}

// error_to_store(vf.standard_error(i, f)) of the factors f of a row emitting `rays` > 0 rays,
// `ratio` its error ratio (1 without one): factor_standard_error and the ratio written as one
// loop of selects that GCC vectorises (this file is compiled with -fno-math-errno and
// -fno-trapping-math, CMakeLists.txt), instead of calls with branches per entry. The same
// operations, so the same bits (tests/python/check_hdf5.py checks every stored error to the
// bit); x * 1 is x, so a row without a ratio takes 1.
[[gnu::target_clones("avx2", "default")]] void stored_errors(const double* factors,
                                                             std::size_t count, double rays,
                                                             double ratio, float* out) {
  for (std::size_t k = 0; k < count; ++k) {
    const double f = factors[k];
    const double p = f < 0.0 ? 0.0 : (1.0 < f ? 1.0 : f);  // std::clamp(f, 0.0, 1.0)
    out[k] = error_to_store(std::sqrt(p * (1 - p) / rays) * ratio);
  }
}

// F as CSR, N x (N + 1); standard_error aligned with data, as float32 (error_to_store): at a
// quarter of the bytes of doubles it no longer makes up half the file.
void write_matrix(const hdf5::File& file, const ViewFactors& vf) {
  const std::size_t n = vf.size();
  const std::vector<std::int64_t> indptr = row_starts(vf);
  const std::uint64_t entries = std::uint64_t(indptr.back());
  file.group("/F");
  file.attribute("/F", "shape", std::vector<std::int64_t>{std::int64_t(n), std::int64_t(n) + 1});
  file.attribute("/F", "smoothed", std::int64_t(vf.smoothed));
  file.attribute("/F", "max_correction_sigma", vf.max_correction_sigma);
  const std::int32_t surroundings_column = std::int32_t(n);
  hdf5::Dataset data(file, "/F/data", H5T_IEEE_F64LE, entries);
  data.write_rows([&](std::uint64_t first, std::uint64_t count, unsigned char* out) {
    for_row_parts(vf, indptr, first, count,
                  [&](std::uint64_t k, std::size_t i, std::int64_t p0, std::int64_t p1, bool s) {
                    std::memcpy(out + 8 * k, vf.F.valuePtr() + p0, 8 * std::size_t(p1 - p0));
                    if (s) put(out, k + std::uint64_t(p1 - p0), vf.to_surroundings[i]);
                  });
  });
  hdf5::Dataset indices(file, "/F/indices", H5T_STD_I32LE, entries);
  indices.write_rows([&](std::uint64_t first, std::uint64_t count, unsigned char* out) {
    for_row_parts(vf, indptr, first, count,
                  [&](std::uint64_t k, std::size_t, std::int64_t p0, std::int64_t p1, bool s) {
                    for (std::int64_t p = p0; p < p1; ++p, ++k)
                      put(out, k, std::int32_t(vf.F.innerIndexPtr()[p]));
                    if (s) put(out, k, surroundings_column);
                  });
  });
  hdf5::Dataset errors(file, "/F/standard_error", H5T_IEEE_F32LE, entries);
  tbb::enumerable_thread_specific<std::vector<float>> scratch;
  errors.write_rows([&](std::uint64_t first, std::uint64_t count, unsigned char* out) {
    for_row_parts(vf, indptr, first, count,
                  [&](std::uint64_t k, std::size_t i, std::int64_t p0, std::int64_t p1, bool s) {
                    if (vf.rays.at(i) > 0) {
                      std::vector<float>& row = scratch.local();
                      row.resize(std::size_t(p1 - p0));
                      stored_errors(vf.F.valuePtr() + p0, row.size(), double(vf.rays[i]),
                                    vf.error_ratio.empty() ? 1.0 : vf.error_ratio.at(i),
                                    row.data());
                      std::memcpy(out + 4 * k, row.data(), 4 * row.size());
                      k += row.size();
                    } else {
                      for (std::int64_t p = p0; p < p1; ++p, ++k)
                        put(out, k, error_to_store(vf.standard_error(i, vf.F.valuePtr()[p])));
                    }
                    if (s) put(out, k, error_to_store(vf.standard_error(i, vf.to_surroundings[i])));
                  });
  });
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
