// The pipeline: the stages run in order for one scene, as the command-line tool runs them and
// as a library user calls them.
//
//   scene file (or a Scene)  -> planned patches and rays  (plan_patches)
//                            -> view factors               (traced, or tallies from the cache;
//                                                           diagnosed; smoothed unless raw)
//                            -> thermal model and exchange (solve_scene)
//                            -> comfort at points          (scene_comfort)
//
// One PipelineOptions in, a result struct out. Every call runs its stages in a TBB task arena
// of `threads` threads, so `threads = 1` keeps the whole run (tracer build, tracing,
// smoothing, exchange solve, angle factors) on one thread. Nothing here prints: progress goes
// to a callback, problems come back as Warning values, bad input throws InputError.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/comfort.hpp"
#include "hearthray/defaults.hpp"
#include "hearthray/diagnostics.hpp"
#include "hearthray/error.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/room_air.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"
#include "hearthray/warning.hpp"

namespace hearthray {

enum class PipelineStage {
  build_tracer,
  trace,
  read_cache,
  smooth,
  thermal_model,
  exchange,
  comfort
};
std::string to_string(PipelineStage stage);

// Reported once when a stage starts (done = 0) and, while tracing, now and then with the rays
// done so far.
struct PipelineProgress {
  PipelineStage stage = PipelineStage::trace;
  std::uint64_t done = 0;   // rays traced (trace); 0 otherwise
  std::uint64_t total = 0;  // rays to trace (trace); 0 otherwise
  double seconds = 0;       // since the stage started
};

struct PipelineOptions {
  // Rays of every patch, over the scene file's [rays]; empty: the file's, else
  // kDefaultRaysPerPatch.
  std::optional<std::uint64_t> rays_per_patch;
  std::optional<std::uint64_t> seed;  // over the scene file's seed; empty: its, else kDefaultSeed
  std::optional<EmissionSampler>
      sampler;  // over the scene file's; empty: its, else kDefaultSampler
  // A ray budget set by the error wanted (see RayTarget below), over the scene file's
  // [rays] target_error, max_per_patch and time_limit. With a target, rays_per_patch (or the
  // file's per_patch) is the first round's rays.
  std::optional<double> target_error;
  bool target_on_heat_flows = false;  // target_error is relative on the surfaces' heat flows
  std::optional<std::uint64_t> max_rays_per_patch;
  std::optional<double> time_limit_s;
  int threads = 0;         // threads of every stage; 0 = all cores
  bool smooth = true;      // enforce reciprocity and closure (false: raw factors)
  bool force = false;      // run even when check_run_size refuses the run's size
  bool use_cache = false;  // tallies from the view-factor cache, traced ones stored
  std::string cache_dir;   // "" = default_cache_dir() (cache.hpp)
  TracerOptions tracer;
  SmoothingOptions smoothing;
  ThermalModelOptions thermal_model;
  ExchangeOptions exchange;
  // Called on stage starts and during tracing (from worker threads, one call at a time); must
  // be cheap. May be empty.
  std::function<void(const PipelineProgress&)> progress;
  // Tracing split over processes (the tool under mpirun: src/cli/processes.cpp). When set, it
  // is called instead of tracing every emitter here, with the patch count, the rays of each
  // patch and `trace`, which traces the emitters [begin, end) in this process (begin < end).
  // It returns the tallies of all emitters (the ranges' shards appended in order, as
  // merge_shards does) and fills the stats, or throws to end this process's run. Tallies are a
  // pure function of (scene, emitter range, seed, rays): any split gives the same numbers.
  // Empty: every emitter traced here.
  using TraceRange =
      std::function<Tallies(std::uint32_t begin, std::uint32_t end, TraceStats* stats)>;
  std::function<Tallies(const std::vector<std::uint64_t>& rays, const TraceRange& trace,
                        TraceStats* stats)>
      split_tracing;

  bool IsValid(std::string* error) const;
};

// What happened with the view-factor cache.
enum class CacheOutcome {
  not_used,    // use_cache was false
  no_folder,   // no cache folder known (no HEARTHRAY_CACHE, XDG_CACHE_HOME or HOME): traced
  hit,         // tallies read from the cache: no ray was traced
  stored,      // traced, and the tallies stored in the cache
  not_stored,  // traced; storing failed (a warning says why)
};

// A ray budget set by the error wanted: tracing in rounds until the largest standard error of
// any view factor (to a patch or to the surroundings, as ViewFactors::standard_error gives it
// for the factors returned) is at most `error`. The first round's rays per patch are rounded
// up to a power of two (at least 8: with the sobol sampler, 8 replicates of 2^m points, each
// an Owen-scrambled (t, m, 4)-net); each further round multiplies them by the power of two
// that the 1/sqrt(N) law predicts is enough (at least 2), so a round's rays are the first
// points of the next round's sequences and every round keeps whole nets. Rounds are decided on
// the tallies only (deterministic); only the time limit depends on the clock: a round whose
// predicted end (from the last round's time) is past it is not started.
//
// A target on heat flows (target_on_heat_flows, "0.5 %") judges each round instead by the
// standard errors of the surfaces' net radiative heat flows (HeatFlowErrors): met when, for
// every surface k, error_k / max(|Q_k|, floor) <= the target, the floor being
// kHeatFlowFloorShare of the largest |Q| of any surface. Only model_scene (solve, comfort,
// fire) can judge it; run_view_factors refuses it (InputError).
enum class TargetStop { reached, ray_cap, run_size, time_limit, not_solved };
std::string to_string(TargetStop stop);  // "target reached", "ray cap", ...
inline constexpr std::uint64_t kDefaultTargetFirstRays = 8192;
inline constexpr std::uint64_t kDefaultTargetMaxRaysPerPatch = std::uint64_t(1) << 24;

// The standard errors of the surfaces' net radiative heat flows that follow from the view
// factors' standard errors (first-order: the spread of kHeatFlowSamples solves with the factors
// perturbed as their sampling distribution says; see pipeline_heat_error.cpp and README,
// "Heat flows to an error wanted").
inline constexpr int kHeatFlowSamples = 32;
// Flows below this share of the largest are judged against that share of it: a surface near
// radiative balance (Q ~ 0) would otherwise ask for unlimited rays.
inline constexpr double kHeatFlowFloorShare = 0.05;
struct HeatFlowErrors {
  bool judged = false;          // the exchange converged (and at least 2 perturbed solves did)
  int samples = 0;              // perturbed solves that converged
  double floor_W = 0;           // kHeatFlowFloorShare x the largest |net_W|
  double largest_relative = 0;  // max over surfaces of error / max(|net_W|, floor_W)
  std::size_t worst = 0;        // the surface with that largest relative error
  std::vector<std::string> surfaces;        // per surface, as surface_heat lists them
  std::vector<double> net_W;                // net radiation leaving, of the factors returned
  std::vector<double> net_error_W;          // its standard error
  std::vector<double> temperature_error_K;  // standard error of the mean temperature
};

struct RayTarget {
  bool used = false;
  bool heat_flows = false;  // relative on heat flows: error, achieved are fractions of the flows
  HeatFlowErrors heat;      // heat_flows: those of the last round
  double error = 0;         // the largest standard error wanted
  double achieved = 0;      // the largest standard error of the factors returned
  TargetStop stop = TargetStop::reached;
  std::uint64_t max_rays_per_patch = kDefaultTargetMaxRaysPerPatch;
  double time_limit_s = 0;                // 0: none
  std::vector<std::uint64_t> round_rays;  // rays per patch of each round
  std::vector<double> round_errors;       // largest standard error after each round
  std::uint64_t rays_all_rounds = 0;      // rays of every round, traced or from the cache
  double seconds = 0;                     // all rounds, wall clock

  bool reached() const { return used && stop == TargetStop::reached; }
};

// View factors of a scene, with everything needed to use and report them.
struct FactorRun {
  Scene scene;  // as traced: surfaces cut into patches where asked
  PatchSet patches;
  std::vector<PatchSpec> specs;      // per surface
  std::vector<std::uint64_t> rays;   // per patch
  std::uint64_t rays_per_patch = 0;  // when every patch has the same rays, else 0
  std::uint64_t seed = 0;
  EmissionSampler sampler = kDefaultSampler;
  Tallies tallies;  // the ray counts (emptied by solve_scene once the factors are made)
  ViewFactors factors;
  TraceStats stats;  // rays: those traced or read from the cache
  SmoothingSummary smoothing;
  RayDiagnostics diagnostics;
  CacheOutcome cache = CacheOutcome::not_used;
  std::string cache_path;          // the cache file read or written ("" when none)
  std::vector<Warning> warnings;   // mesh, then ray diagnostics, then cache
  std::vector<std::string> notes;  // from the ray diagnostics
  RayTarget target;                // rounds to an error wanted (target.used), else unused
  // The tracer the rays were traced with (default options), kept for the run's pictures;
  // null when nothing was traced (a cache hit) or the run was traced with other options.
  std::shared_ptr<const Tracer> tracer;

  bool from_cache() const { return cache == CacheOutcome::hit; }
};

// The size of a run, estimated before anything is subdivided, allocated or traced.
struct RunSize {
  double patches = 0;
  double triangles = 0;     // after subdivision to the patch sizes
  double rays = 0;          // in all
  double memory_bytes = 0;  // rough: triangles and an upper bound of the factor matrix
  double seconds = 0;       // rough: at an order-of-magnitude ray rate
};
RunSize estimate_run_size(const Scene& scene, const std::vector<PatchSpec>& specs,
                          const RayBudget& budget);
// Throws InputError (naming `what`, e.g. the scene file) with the estimate when a run would
// exceed the limits of patches, triangles or rays (see run_size.cpp).
void check_run_size(const RunSize& size, const std::string& what);

// The largest standard error of any factor (to a patch or to the surroundings).
double largest_standard_error(const ViewFactors& factors);

// The scene file's patches and rays (rays_per_patch of the options over its [rays]). Unless
// options.force, refuses (InputError) a run too large to finish: see check_run_size.
PatchPlan plan_scene(const SceneFile& file, const Scene& scene, const PipelineOptions& options);

// Plans, traces (or reads the cache when options.use_cache), diagnoses and smooths (unless
// !options.smooth). `scene` is load_scene(file).
FactorRun run_view_factors(const SceneFile& file, const Scene& scene,
                           const PipelineOptions& options);
// The same for a scene without a scene file: one patch per surface side, never cached.
FactorRun run_view_factors(const Scene& scene, const PipelineOptions& options);

// A scene through the exchange solve. The model points into its own factors only while its
// problem() is in use; the struct may be moved.
struct SolvedScene {
  SceneFile file;
  FactorRun run;  // its tallies emptied, its factors moved into the model (sizes kept)
  ThermalModel model;
  ExchangeResult result;  // empty until solve_model_exchange; check its status
  // With [room_air]: the solved air temperature and its balance (set by solve_model_exchange;
  // the model's room-air films and file.comfort->air_K are left at that temperature). Check
  // its `converged` too.
  std::optional<RoomAirResult> room_air;
  std::vector<Warning> warnings;   // as run.warnings, without a leak the model folded back
  std::vector<std::string> notes;  // ray diagnostics, then the thermal model
};

// Bad input found once the view factors exist: the thermal model or the exchange refused the
// scene. Carries the ray warnings that may explain it (flipped normals, a leak).
class RefusedInput : public InputError {
 public:
  RefusedInput(const std::string& message, std::vector<Warning> ray_warnings)
      : InputError(message), ray_warnings_(std::move(ray_warnings)) {}
  const std::vector<Warning>& ray_warnings() const { return ray_warnings_; }

 private:
  std::vector<Warning> ray_warnings_;
};

// Checks the thermal input (before any ray is traced), computes the view factors (through
// the cache when asked) and builds the thermal model. Throws InputError for bad input,
// RefusedInput when the model refuses the scene.
SolvedScene model_scene(SceneFile file, Scene scene, const PipelineOptions& options);
// Solves the exchange of a modelled scene into scene->result (with [room_air]: together with
// the air's heat balance, into scene->room_air; an unsolved air balance leaves the result
// marked not_converged). Throws RefusedInput when the exchange refuses it; non-convergence is
// the result's status.
void solve_model_exchange(SolvedScene* scene, const PipelineOptions& options);
// open_scene + load_scene + model_scene + solve_model_exchange.
SolvedScene solve_scene(const std::string& path, const PipelineOptions& options);

// Comfort figures at the points of the scene file's [comfort] table.
struct SceneComfort {
  std::vector<PointComfort> points;
  std::vector<Warning> warnings;  // comfort_point: rays of a point leaving the room
};

// Throws InputError when the scene file has no [comfort] table or a point is not usable.
// Call before model_scene: a typo costs no tracing time.
void check_comfort_input(const SceneFile& file, const Scene& scene);
// Angle factors from every point, radiant temperatures from the solved radiosities (the air
// temperature from [comfort], or the solved one with [room_air]). Throws std::logic_error when
// the exchange has not converged.
SceneComfort scene_comfort(const SolvedScene& solved, const PipelineOptions& options);
// The two halves of scene_comfort, for callers that solve again at other conditions (goal
// seek): the angle factors of `points` traced once (in the options' arena), and the figures at
// the scene's current solution (its radiosities and air temperature), no ray traced.
std::vector<PointFactors> trace_scene_angle_factors(const SolvedScene& solved,
                                                    const std::vector<ComfortPoint>& points,
                                                    const PipelineOptions& options);
std::vector<PointComfort> evaluate_scene_comfort(const SolvedScene& solved,
                                                 const std::vector<ComfortPoint>& points,
                                                 const std::vector<PointFactors>& factors);

}  // namespace hearthray
