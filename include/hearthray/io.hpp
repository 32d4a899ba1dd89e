// Outputs of the view-factor stage: files other tools read and the terminal table.
// The format of a file follows its extension.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

// A ray budget set by the error wanted, as the reports echo it (RayTarget, pipeline.hpp):
// JSON "target" with these names (null when no target was set).
struct TargetReportInfo {
  bool used = false;
  double error_wanted = 0;    // largest standard error of any factor asked for
  double error_achieved = 0;  // that of the factors returned
  bool reached = false;
  std::string stopped_by;  // "target reached", "ray cap", "run-size limit", "time limit"
  std::vector<std::uint64_t> round_rays_per_patch;
  std::vector<double> round_errors;
  std::uint64_t max_rays_per_patch = 0;
  double time_limit_s = 0;  // 0: none
  std::uint64_t rays_all_rounds = 0;
  // A target on heat flows (errors are then fractions of the flows), with the surfaces' net
  // radiative heat flows and their standard errors after the last round (HeatFlowErrors).
  bool heat_flows = false;
  int heat_samples = 0;
  double heat_floor_W = 0;
  std::vector<std::string> surfaces;
  std::vector<double> net_W, net_error_W, temperature_error_K;
};

// What a report carries besides the matrix (echoed into JSON).
struct FactorReportInfo {
  std::string scene;  // scene or mesh file
  std::uint64_t seed = 0;
  std::string sampler;  // "stratified" or "sobol" (sampler_name)
  std::uint64_t rays_per_patch = 0;
  double trace_seconds = 0;
  double rays_per_second = 0;
  int threads = 0;
  std::string smoothing;  // method name, or "none (raw)"
  int smoothing_iterations = 0;
  double max_row_error = 0;
  double max_reciprocity_error = 0;
  std::vector<std::string> warnings;
  TargetReportInfo target;
};

// A CSV field quoted as RFC 4180 asks: with a comma, a double quote or a line break it is
// enclosed in double quotes, and quotes inside are doubled.
std::string csv_field(const std::string& text);

// Dense CSV: header `surface,<name 1>,...,<name N>,surroundings`, one row per emitter.
void write_factors_csv(std::ostream& out, const ViewFactors& vf);
// Matrix Market coordinate real general, N x (N+1): the last column is the surroundings.
// Comment lines list the names in order.
void write_factors_mtx(std::ostream& out, const ViewFactors& vf);
// NumPy .npy version 1.0, little-endian float64, C order, shape (N, N+1).
void write_factors_npy(std::ostream& out, const ViewFactors& vf);
// JSON: names, areas, F (dense, N x N+1 with surroundings last), standard errors, rays,
// diagnostics and `info`.
void write_factors_json(std::ostream& out, const ViewFactors& vf, const FactorReportInfo& info);

// HDF5: F as CSR arrays (N x N+1, the surroundings last) with the standard error of every
// entry, the patches (names, surfaces, sides, areas, centroids, normals, rays, triangles), the
// surface names, the mesh and the run, compressed; the layout is in the README ("HDF5 matrix
// file"). No timings: the same matrix gives the same bytes. Written whole or not at all.
void write_factors_hdf5(const std::string& path, const ViewFactors& vf, const Scene& scene,
                        const PatchSet& patches, const FactorReportInfo& info);

// Writes by extension (.csv, .mtx, .npy, .json, and .h5 when `scene` and `patches`, the model
// of the matrix, are given); throws InputError for any other extension or a file that cannot
// be written. The file is written under a temporary name and renamed.
void write_factors_file(const std::string& path, const ViewFactors& vf,
                        const FactorReportInfo& info, const Scene* scene = nullptr,
                        const PatchSet* patches = nullptr);

// A readable table for the terminal: F with standard errors, surroundings column, row sums.
void print_factors_table(std::ostream& out, const ViewFactors& vf);

}  // namespace hearthray
