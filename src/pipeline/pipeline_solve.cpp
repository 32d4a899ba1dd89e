// The pipeline from the view factors on: the thermal model, the exchange solve and the
// comfort figures.
#include <stdexcept>

#include "core/text.hpp"
#include "hearthray/gas_zones.hpp"
#include "pipeline/pipeline_run.hpp"

namespace hearthray {

using pipeline_detail::in_arena;
using pipeline_detail::Reporter;

namespace {

// A point whose rays leave the room more often than this is probably outside it.
constexpr double kLostWarning = 1e-3;

std::string scene_name(const SceneFile& file) {
  return file.path.empty() ? file.mesh_path : file.path;
}

// The run's factors move into the model (at 100k patches they are gigabytes); the run keeps
// what the reports read of them.
void build_model(const ThermalInput& thermal, const PipelineOptions& options, SolvedScene* s) {
  ViewFactors& factors = s->run.factors;
  const bool smoothed = factors.smoothed;
  const double correction = factors.max_correction_sigma;
  try {
    s->model = build_thermal_model(thermal, s->run.scene, s->run.patches, std::move(factors),
                                   options.thermal_model);
  } catch (const InputError& e) {
    throw RefusedInput(e.what(), s->run.diagnostics.warnings);
  }
  factors = ViewFactors{};
  factors.smoothed = smoothed;
  factors.max_correction_sigma = correction;
}

// A surface is refused as flipped when more than this share of the rays reaching it (and at
// least kBackHitsSeen of them) arrive on its back: its front faces away from the rest of
// the scene. A smaller share is a surface partly seen from behind (a warning).
constexpr double kFlippedShare = 0.5;
constexpr std::uint64_t kBackHitsSeen = 100;

// Throws RefusedInput naming the surfaces whose rays mostly arrive on their back, unless the
// scene file says so is intended (expect_back_hits = true). Without this, a flipped wall in a
// scene with [surroundings] sends its heat "to the surroundings" and the solve looks fine.
void refuse_flipped(const SolvedScene& s) {
  std::vector<std::string> flipped;
  std::string first;
  for (std::size_t i = 0; i < s.run.diagnostics.surfaces.size(); ++i) {
    const SurfaceRayReport& r = s.run.diagnostics.surfaces[i];
    if (r.touching || r.back_face_hits < kBackHitsSeen ||
        !(double(r.back_face_hits) > kFlippedShare * double(r.arrivals)))
      continue;
    const SurfaceSpec* spec = s.file.find(r.name);
    if ((spec && spec->expect_back_hits) || s.file.defaults.expect_back_hits) continue;
    flipped.push_back("'" + r.name + "' (" +
                      percent(double(r.back_face_hits) / double(r.arrivals)) + ")");
    if (first.empty()) first = r.name;
  }
  if (flipped.empty()) return;
  throw RefusedInput(
      scene_name(s.file) + ": most rays reaching surface(s) " + join(flipped) +
          " arrive on their back side: their fronts face away from the rest of the scene, so "
          "they would radiate out of the model and the heat flows would be wrong. Fix the "
          "normals first: flip the faces of these surfaces in the modelling program (the "
          "front is the side from which the corners run counter-clockwise; hearthray check "
          "shows where the rays land). A thin sheet seen from both sides is two_sided = true "
          "in [surface." +
          first +
          "]. Only if the back is meant to be hit, say expect_back_hits = true there; and only "
          "if radiation really leaves the scene, give [surroundings]",
      s.run.diagnostics.warnings);
}

double room_volume(const SolvedScene& s) {
  const RoomAirInput& air = *s.file.room_air;
  if (air.volume_m3) return *air.volume_m3;
  if (air.ventilation_kind == VentilationKind::volume_flow) return 0;  // not needed
  const double volume = gas_volume_by_divergence(s.run.scene);
  if (!s.model.mesh_closed || !(volume > 0))
    throw InputError(scene_name(s.file) + ":" + std::to_string(air.line) +
                     ": [room_air] gives air changes per hour, but the mesh does not enclose a "
                     "room whose volume can be measured (its one-sided surfaces do not close, "
                     "or face outward); give volume = \"54 m3\" in [room_air]");
  return volume;
}

// The exchange together with the room air's balance; an unsolved balance marks the result.
void solve_room_air_exchange(SolvedScene* s, const ExchangeOptions& options) {
  s->room_air = solve_room_air(&s->model, *s->file.room_air, room_volume(*s), options, &s->result);
  // Whoever reads the comfort input's air temperature (reports, summaries) reads the solved one.
  if (s->file.comfort) s->file.comfort->air_K = s->room_air->air_K;
  if (!s->room_air->converged && s->result.status == ExchangeStatus::converged) {
    s->result.status = ExchangeStatus::not_converged;
    s->result.message = s->room_air->message;
  }
}

void solve_exchange_into(SolvedScene* s, const ExchangeOptions& options) {
  if (s->file.room_air)
    solve_room_air_exchange(s, options);
  else
    s->result = solve_exchange(s->model.problem(), options);
}

}  // namespace

SolvedScene model_scene(SceneFile file, Scene scene, const PipelineOptions& options) {
  pipeline_detail::check_options(options);
  return in_arena(options.threads, [&] {
    SolvedScene s;
    s.file = std::move(file);
    // Thermal input checked before any ray is traced: a typo costs no tracing time.
    const ThermalInput thermal = thermal_input(s.file, scene);
    // A target on heat flows judges each round by a solve of its factors.
    const pipeline_detail::HeatFlowJudge judge = [&](const FactorRun& run) {
      try {
        return pipeline_detail::heat_flow_errors(thermal, run, options);
      } catch (const InputError& e) {
        throw RefusedInput(e.what(), run.diagnostics.warnings);
      }
    };
    s.run = pipeline_detail::factor_run(s.file, scene, options, judge);
    s.run.tallies = Tallies{};  // smoothed (and cached): the counts are no longer needed
    refuse_flipped(s);
    Reporter(options).start(PipelineStage::thermal_model);
    build_model(thermal, options, &s);
    // A leak folded back into a closed enclosure is reported by the model's note, not as
    // radiation to the surroundings.
    for (const Warning& w : s.run.warnings) {
      if (!(s.model.leaks_folded && w.kind == WarningKind::leak)) s.warnings.push_back(w);
    }
    s.notes = defaults_taken(s.file, s.run.scene);
    s.notes.insert(s.notes.end(), s.run.notes.begin(), s.run.notes.end());
    s.notes.insert(s.notes.end(), s.model.notes.begin(), s.model.notes.end());
    return s;
  });
}

void solve_model_exchange(SolvedScene* s, const PipelineOptions& options) {
  pipeline_detail::check_options(options);
  in_arena(options.threads, [&] {
    Reporter(options).start(PipelineStage::exchange);
    try {
      solve_exchange_into(s, options.exchange);
    } catch (const InputError& e) {
      throw RefusedInput(e.what(), s->run.diagnostics.warnings);
    }
  });
}

SolvedScene solve_scene(const std::string& path, const PipelineOptions& options) {
  SceneFile file = open_scene(path);
  Scene scene = load_scene(file);
  SolvedScene s = model_scene(std::move(file), std::move(scene), options);
  solve_model_exchange(&s, options);
  return s;
}

void check_comfort_input(const SceneFile& file, const Scene& scene) {
  if (!file.comfort) {
    throw InputError(scene_name(file) +
                     ": no [comfort] table: add one with air_temperature = \"20 C\" and "
                     "[comfort.point.NAME] position = [\"1.2 m\", \"2.0 m\", \"0.6 m\"] or "
                     "[comfort.grid] height = \"0.6 m\"");
  }
  comfort_points(scene, *file.comfort);
}

std::vector<PointFactors> trace_scene_angle_factors(const SolvedScene& s,
                                                    const std::vector<ComfortPoint>& points,
                                                    const PipelineOptions& options) {
  pipeline_detail::check_options(options);
  if (!s.file.comfort) throw std::logic_error("angle factors: the scene has no [comfort] table");
  return in_arena(options.threads, [&] {
    const Reporter reporter(options);
    reporter.start(PipelineStage::build_tracer);
    const Tracer tracer(s.run.scene, options.tracer);
    reporter.start(PipelineStage::comfort);
    AngleFactorOptions angle;
    angle.rays = s.file.comfort->rays;
    angle.seed = s.run.seed;
    angle.threads = options.threads;
    return trace_angle_factors(s.run.scene, s.run.patches, tracer, points, angle);
  });
}

std::vector<PointComfort> evaluate_scene_comfort(const SolvedScene& s,
                                                 const std::vector<ComfortPoint>& points,
                                                 const std::vector<PointFactors>& factors) {
  const ComfortInput& in = *s.file.comfort;
  RadiantField field;
  for (const FaceResult& f : s.result.faces) field.radiosity.push_back(f.radiosity);
  field.surroundings_K = s.model.surroundings_K.value_or(0.0);
  const ComfortConditions air{s.room_air ? s.room_air->air_K : in.air_K, in.air_speed, in.person};
  std::vector<PointComfort> out;
  for (std::size_t k = 0; k < points.size(); ++k)
    out.push_back(evaluate_comfort(points[k], factors[k], field, air));
  return out;
}

SceneComfort scene_comfort(const SolvedScene& s, const PipelineOptions& options) {
  pipeline_detail::check_options(options);
  if (!s.file.comfort) throw std::logic_error("scene_comfort: the scene has no [comfort] table");
  if (s.result.status != ExchangeStatus::converged)
    throw std::logic_error("scene_comfort: the exchange solve has not converged");
  const std::vector<ComfortPoint> points = comfort_points(s.run.scene, *s.file.comfort);
  const std::vector<PointFactors> factors = trace_scene_angle_factors(s, points, options);
  SceneComfort out;
  out.points = evaluate_scene_comfort(s, points, factors);
  for (std::size_t k = 0; k < points.size(); ++k) {
    const double lost = out.points[k].lost_fraction;
    if (lost <= kLostWarning) continue;
    out.warnings.push_back(
        {WarningKind::comfort_point,
         scene_name(s.file) + ": " + std::to_string(100 * lost).substr(0, 5) +
             " % of the rays from point " + points[k].name +
             " leave the room or meet the back of a wall: is the point inside?" +
             (s.model.surroundings_K ? "" : " (they are counted at 0 K: no [surroundings])")});
  }
  return out;
}

}  // namespace hearthray
