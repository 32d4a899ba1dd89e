#include "support/traced_case.hpp"

#include <stdexcept>

#include "hearthray/pipeline.hpp"

namespace hearthray::testing {

TracedCase trace_case(Scene scene, std::uint64_t rays, std::uint64_t seed, int threads) {
  PipelineOptions options;
  options.rays_per_patch = rays;
  options.seed = seed;
  options.threads = threads;
  FactorRun run = run_view_factors(scene, options);
  TracedCase c;
  c.scene = std::move(scene);
  c.patches = std::move(run.patches);
  c.tallies = std::move(run.tallies);
  c.raw = raw_view_factors(c.patches, c.tallies);
  c.smoothed = std::move(run.factors);
  c.smoothing = run.smoothing;
  return c;
}

std::size_t patch_index(const ViewFactors& vf, const std::string& name) {
  for (std::size_t i = 0; i < vf.names.size(); ++i) {
    if (vf.names[i] == name) return i;
  }
  throw std::out_of_range("no patch named '" + name + "'");
}

double factor(const ViewFactors& vf, const std::string& from, const std::string& to) {
  return vf.F.coeff(static_cast<Eigen::Index>(patch_index(vf, from)),
                    static_cast<Eigen::Index>(patch_index(vf, to)));
}

double row_sum(const ViewFactors& vf, std::size_t i) {
  double sum = 0;
  for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
    sum += it.value();
  }
  return sum;
}

std::uint64_t hit_count(const Tallies& tallies, std::size_t from, std::size_t to) {
  const std::size_t r = from - tallies.emitter_begin;
  for (std::uint64_t k = tallies.hit_offset[r]; k < tallies.hit_offset[r + 1]; ++k) {
    if (tallies.hit_patch[k] == to) return tallies.hit_count[k];
  }
  return 0;
}

}  // namespace hearthray::testing
