// ViewFactors: Monte Carlo view factors between patches. Each patch emits its rays from
// uniformly distributed points (stratified by area along its triangle list) in
// cosine-weighted directions; F_ij = hits_ij / N_i with standard error sqrt(F(1-F)/N_i).
// Tracing is a pure function of (scene, patches, emitter range, seed, rays): shards of
// emitter ranges concatenate to the same tallies as one run.
#pragma once

#include <Eigen/SparseCore>
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "hearthray/defaults.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/statistics.hpp"
#include "hearthray/tracer.hpp"

namespace hearthray {

struct TraceProgress {
  std::uint64_t rays_done = 0;
  std::uint64_t rays_total = 0;
  double seconds = 0;  // since tracing started
};

// How emitters draw their rays' origins and directions.
//  stratified: independent random numbers, origins stratified by area along the triangle list
//    (one stratum per ray); standard errors from the binomial formula.
//  sobol: randomised quasi-Monte Carlo (sobol.hpp). A patch's N rays are split into
//    kSobolReplicates consecutive replicates, each an independently Owen-scrambled Sobol'
//    sequence keyed by (seed, patch, replicate); standard errors from the spread of the
//    replicates (Owen, "Monte Carlo theory, methods and examples", ch. 17, randomised QMC).
enum class EmissionSampler { stratified, sobol };
inline constexpr std::uint32_t kSobolReplicates = 8;
// The sampler when neither the caller nor the scene file says (see README, "Sampling").
inline constexpr EmissionSampler kDefaultSampler = EmissionSampler::sobol;
// "stratified" / "sobol": the names of the scene key [rays] sampler and of --sampler.
inline const char* sampler_name(EmissionSampler s) {
  return s == EmissionSampler::sobol ? "sobol" : "stratified";
}

// First ray of replicate r (0..replicates) of a patch emitting `total` rays: floor(r N / R).
inline std::uint64_t replicate_first_ray(std::uint64_t total, std::uint32_t r) {
  const std::uint64_t q = total / kSobolReplicates, m = total % kSobolReplicates;
  return q * r + m * r / kSobolReplicates;  // no overflow for any total
}

struct ViewFactorOptions {
  std::uint64_t rays_per_patch = kDefaultRaysPerPatch;  // rays emitted by every patch...
  std::vector<std::uint64_t> rays_for_patch;            // ...unless given here, one count per patch
  std::uint64_t seed = kDefaultSeed;                    // results depend on seed and rays only
  EmissionSampler sampler = kDefaultSampler;
  int threads = 0;                  // worker threads; 0 = all cores
  std::uint32_t emitter_begin = 0;  // emitting patches [begin, end); end 0 = all
  std::uint32_t emitter_end = 0;
  TracerOptions tracer;
  // Called now and then from worker threads (serialised); must be cheap. May be empty.
  std::function<void(const TraceProgress&)> progress;

  bool IsValid(std::string* error) const;
};

// Raw ray counts, sparse per emitter: memory follows the non-zeros.
struct Tallies {
  std::size_t patch_count = 0;
  std::uint32_t emitter_begin = 0;       // row r of the tallies is patch emitter_begin + r
  std::vector<std::uint64_t> rays;       // per emitting row: rays emitted
  std::vector<std::uint64_t> escaped;    // per emitting row: rays that hit nothing
  std::vector<std::uint64_t> back_face;  // per emitting row: rays absorbed on a back face
  // Row r: receiving patches hit_patch[hit_offset[r] .. hit_offset[r+1]) in ascending order,
  // with their counts.
  std::vector<std::uint64_t> hit_offset{0};
  std::vector<std::uint32_t> hit_patch;
  std::vector<std::uint64_t> hit_count;
  // Per surface: rays from all emitters that arrived on the back of that one-sided surface.
  std::vector<std::uint64_t> back_face_hits_on_surface;
  std::vector<std::uint64_t> hits_on_surface;  // all arrivals (front and back) per surface
  // Sampler sobol only (empty otherwise): per hit entry, and per row for the escaped and
  // back-face rays, the sum over the replicates of the squared replicate estimate
  // (c_r / M_r)^2, accumulated in replicate order (deterministic). With the estimate
  // F = hits / rays it gives the replicates' spread, hence the standard error.
  std::vector<double> hit_square;
  std::vector<double> escaped_square, back_face_square;

  std::size_t rows() const { return rays.size(); }
};

struct TraceStats {
  std::uint64_t rays = 0;
  std::uint64_t retraced = 0;  // rays traced again in robust mode (EdgeMode::checked)
  double seconds = 0;
  double rays_per_second = 0;
  int threads = 0;
};

// Traces the emitter range of `options`. Invalid options (an emitter range outside the
// patches, one ray count per patch that is not) are a programming mistake:
// std::invalid_argument.
Tallies trace_tallies(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                      const ViewFactorOptions& options, TraceStats* stats = nullptr);

// Concatenates shards (tallies of consecutive emitter ranges) into one. Shards of different
// scenes, or out of order, are a programming mistake: std::invalid_argument.
Tallies merge_shards(const std::vector<Tallies>& shards);
// Appends the shard that follows `merged` (its emitter range starts where merged's ends), as
// merge_shards does, without copying what is already merged.
void append_shard(Tallies* merged, const Tallies& shard);

using SparseMatrix = Eigen::SparseMatrix<double, Eigen::RowMajor>;

// The view-factor matrix with its statistics: what every output writer reads.
struct ViewFactors {
  std::vector<std::string> names;       // patch names
  std::vector<double> areas;            // m^2
  std::vector<std::uint64_t> rays;      // rays emitted per patch
  SparseMatrix F;                       // n x n
  std::vector<double> to_surroundings;  // per patch: fraction that escapes
  std::vector<double> to_back_faces;    // per patch: fraction absorbed on back faces
  bool smoothed = false;                // reciprocity and closure enforced
  double max_correction_sigma = 0;      // largest smoothing change, in standard errors
  // Sampler sobol: per row, the replicate standard error over the binomial one
  // (replicate_error_ratio); empty for the stratified sampler.
  std::vector<double> error_ratio;

  std::size_t size() const { return names.size(); }
  // Standard error of a factor estimated from `rays[i]` rays: sqrt(F(1-F)/N_i)
  // (factor_standard_error in statistics.hpp), times error_ratio[i] when there is one.
  double standard_error(std::size_t i, double f) const {
    const double binomial = factor_standard_error(f, rays.at(i));
    return error_ratio.empty() ? binomial : binomial * error_ratio.at(i);
  }

  // Eigen 3.4's SparseMatrix has no move operations: a "move" would copy a matrix that holds
  // gigabytes at 100k patches. These swap it instead. (Keep the member list complete.)
  ViewFactors() = default;
  ViewFactors(const ViewFactors&) = default;
  ViewFactors& operator=(const ViewFactors&) = default;
  ViewFactors(ViewFactors&& other) noexcept { *this = std::move(other); }
  ViewFactors& operator=(ViewFactors&& other) noexcept {
    names = std::move(other.names);
    areas = std::move(other.areas);
    rays = std::move(other.rays);
    F.swap(other.F);
    other.F.resize(0, 0);
    other.F.data().squeeze();
    to_surroundings = std::move(other.to_surroundings);
    to_back_faces = std::move(other.to_back_faces);
    smoothed = other.smoothed;
    max_correction_sigma = other.max_correction_sigma;
    error_ratio = std::move(other.error_ratio);
    return *this;
  }
};

// Sampler sobol: per row of the tallies, the standard error estimated from the spread of the
// replicates over the binomial standard error, pooled over the row (escaped and back-face
// rays included): sqrt(sum_j var_rep(F_ij) / sum_j F_ij (1 - F_ij) / N_i), with
// var_rep(F) = (sum_r F_r^2 - R F^2) / (R (R - 1)) over the R replicates that have rays.
// Pooled because one entry's variance from 8 replicates has 7 degrees of freedom (+-27 %);
// the row's sum is steadier. Kept within [0.01, 100]; 1 where it is undefined (a row whose
// rays all land in one place, fewer than 2 replicates). Empty for the stratified sampler.
std::vector<double> replicate_error_ratio(const Tallies& tallies);

// Raw estimate F_ij = hits_ij / N_i (no correction).
ViewFactors raw_view_factors(const PatchSet& patches, const Tallies& tallies);

}  // namespace hearthray
