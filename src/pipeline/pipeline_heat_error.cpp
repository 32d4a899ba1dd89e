// The standard errors of the surfaces' net radiative heat flows that follow from the view
// factors' standard errors (HeatFlowErrors, pipeline.hpp), for a ray target on heat flows.
//
// Method: a parametric bootstrap of the tallies, i.e. a first-order (delta-method) propagation
// done by sampling rather than by derivatives. Each of kHeatFlowSamples samples perturbs every
// emitter's row of counts (hits per receiving patch, escaped, back faces) by a normal draw with
// the row's multinomial covariance, (diag(F) - F F^T) / N, times the row's replicate error
// ratio squared for the sobol sampler (the same standard errors the factors report): with z
// standard normal per entry and s = sum_j sqrt(F_j) z_j, the change of F_j is
// ratio / sqrt(N) (sqrt(F_j) z_j - F_j s), whose covariance is exactly that (sum_j F_j = 1),
// so every row still sums to one. The perturbed counts then go through the same smoothing
// (reciprocity and closure) as the run's, the same thermal model and the same exchange solve;
// the standard error of a surface's flow is the spread (n - 1) of the solves that converged.
// The smoothing's gain (it pools the two directions of every pair) is thereby counted, as are
// the correlations within a row and the solve's non-linearity. Counts are scaled by kCountScale
// before rounding to whole rays (the smoothing is unchanged by a common scale) so that the
// rounding adds no noise; a count that would go negative (an entry of a few hits) is set to 0.
// Draws come from a counter-based hash of (seed, sample, row, entry) and the samples are kept
// by index: the errors are the same for any thread count.
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>

#include "hearthray/error.hpp"
#include "hearthray/hash.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/units.hpp"
#include "pipeline/pipeline_run.hpp"

namespace hearthray::pipeline_detail {

namespace {

constexpr double kCountScale = 1024;

// A standard normal draw for (key, index) (Box and Muller, 1958).
double normal_draw(std::uint64_t key, std::uint64_t index) {
  const std::uint64_t a = mix64(key + (2 * index + 1) * 0x9e3779b97f4a7c15ull);
  const std::uint64_t b = mix64(key + (2 * index + 2) * 0x9e3779b97f4a7c15ull);
  constexpr double k53 = 1.0 / 9007199254740992.0;
  const double u1 = (double(a >> 11) + 0.5) * k53, u2 = double(b >> 11) * k53;
  return std::sqrt(-2 * std::log(u1)) * std::cos(2 * kPi * u2);
}

std::uint64_t scaled_count(double count) {
  return count > 0 ? std::uint64_t(std::llround(count * kCountScale)) : 0;
}

// The tallies with every row's counts perturbed once (see the top of the file).
Tallies perturbed_tallies(const Tallies& t, const std::vector<double>& ratio, std::uint64_t key) {
  Tallies out = t;
  out.hit_square.clear();
  out.escaped_square.clear();
  out.back_face_square.clear();
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::uint64_t begin = t.hit_offset[r], end = t.hit_offset[r + 1];
    double n = double(t.escaped[r] + t.back_face[r]);
    for (std::uint64_t k = begin; k < end; ++k) n += double(t.hit_count[k]);
    if (!(n > 0)) continue;
    const std::uint64_t row_key = mix64(key + r * 0xbf58476d1ce4e5b9ull);
    const std::uint64_t entries = end - begin + 2;  // hits, escaped, back faces
    auto count = [&](std::uint64_t e) {
      return double(e < end - begin ? t.hit_count[begin + e]
                                    : (e == end - begin ? t.escaped[r] : t.back_face[r]));
    };
    double s = 0;
    std::vector<double> z(entries);
    for (std::uint64_t e = 0; e < entries; ++e) {
      z[e] = normal_draw(row_key, e);
      s += std::sqrt(count(e) / n) * z[e];
    }
    const double scale = (ratio.empty() ? 1.0 : ratio[r]) * std::sqrt(n);
    std::uint64_t rays = 0;
    for (std::uint64_t e = 0; e < entries; ++e) {
      const double f = count(e) / n;
      const std::uint64_t c = scaled_count(count(e) + scale * (std::sqrt(f) * z[e] - f * s));
      rays += c;
      if (e < end - begin)
        out.hit_count[begin + e] = c;
      else if (e == end - begin)
        out.escaped[r] = c;
      else
        out.back_face[r] = c;
    }
    out.rays[r] = rays;
  }
  return out;
}

struct Solved {
  bool converged = false;
  std::vector<std::string> names;
  std::vector<double> net_W, temperature_K;
};

Solved solve_with(const ThermalInput& thermal, const FactorRun& run, ViewFactors factors,
                  const PipelineOptions& options) {
  const ThermalModel model = build_thermal_model(thermal, run.scene, run.patches,
                                                 std::move(factors), options.thermal_model);
  const ExchangeResult result = solve_exchange(model.problem(), options.exchange);
  Solved out;
  out.converged = result.status == ExchangeStatus::converged;
  for (const SurfaceHeat& h : surface_heat(model, result)) {
    out.names.push_back(h.name);
    out.net_W.push_back(h.net_W);
    out.temperature_K.push_back(h.temperature_K);
  }
  return out;
}

// Sample standard deviation (n - 1) of `values[m][k]` over the samples m, per k; taken from
// the differences to the first sample, so that equal values (a temperature held) give 0.
std::vector<double> spread(const std::vector<const std::vector<double>*>& values,
                           std::size_t size) {
  std::vector<double> out(size, 0.0);
  const double n = double(values.size());
  for (std::size_t k = 0; k < size; ++k) {
    const double first = (*values.front())[k];
    double mean = 0, square = 0;
    for (const std::vector<double>* v : values) mean += ((*v)[k] - first) / n;
    for (const std::vector<double>* v : values)
      square += ((*v)[k] - first - mean) * ((*v)[k] - first - mean);
    out[k] = std::sqrt(square / (n - 1));
  }
  return out;
}

}  // namespace

HeatFlowErrors heat_flow_errors(const ThermalInput& thermal, const FactorRun& run,
                                const PipelineOptions& options) {
  HeatFlowErrors errors;
  const Solved base = solve_with(thermal, run, run.factors, options);
  errors.net_W = base.net_W;
  errors.surfaces = base.names;
  if (!base.converged) return errors;
  const std::vector<double> ratio = replicate_error_ratio(run.tallies);
  const std::uint64_t key = mix64(run.seed ^ 0x4a7c15f39cc0605cull);
  std::vector<Solved> samples(kHeatFlowSamples);
  tbb::parallel_for(0, kHeatFlowSamples, [&](int m) {
    const Tallies t = perturbed_tallies(run.tallies, ratio, mix64(key + std::uint64_t(m)));
    SmoothingSummary summary;
    ViewFactors f = options.smooth
                        ? smooth_view_factors(run.patches, t, options.smoothing, &summary)
                        : raw_view_factors(run.patches, t);
    samples[std::size_t(m)] = solve_with(thermal, run, std::move(f), options);
  });
  std::vector<const std::vector<double>*> net, temperature;
  for (const Solved& s : samples) {
    if (!s.converged) continue;
    net.push_back(&s.net_W);
    temperature.push_back(&s.temperature_K);
  }
  errors.samples = int(net.size());
  if (errors.samples < 2) return errors;
  errors.judged = true;
  errors.net_error_W = spread(net, base.net_W.size());
  errors.temperature_error_K = spread(temperature, base.net_W.size());
  double largest = 0;
  for (double q : base.net_W) largest = std::max(largest, std::fabs(q));
  errors.floor_W = kHeatFlowFloorShare * largest;
  for (std::size_t k = 0; k < base.net_W.size(); ++k) {
    const double scale = std::max(std::fabs(base.net_W[k]), errors.floor_W);
    const double relative =
        scale > 0 ? errors.net_error_W[k] / scale : (errors.net_error_W[k] > 0 ? HUGE_VAL : 0.0);
    if (relative > errors.largest_relative || k == 0) {
      errors.largest_relative = relative;
      errors.worst = k;
    }
  }
  return errors;
}

}  // namespace hearthray::pipeline_detail
