// Solve outputs: terminal table, per-face CSV and report.json. Files carry every double as
// the shortest text that reads back the same; the table rounds for reading.
#include "hearthray/thermal_report.hpp"

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <nlohmann/json.hpp>
#include <ostream>

#include "core/text.hpp"
#include "hearthray/io.hpp"
#include "hearthray/outer_case.hpp"
#include "hearthray/units.hpp"
#include "outputs/target_json.hpp"

namespace hearthray {
namespace {

using json = nlohmann::ordered_json;  // keys in the order written

constexpr int kWidth = 12;

// Watts and W/m^2 with one decimal, large values in exponent form; never "-0.0".
std::string watts(double v) {
  if (!std::isfinite(v)) return "n/a";
  if (std::abs(v) < 0.05) v = 0;
  return rounded(std::abs(v) >= 1e8 ? "%.4g" : "%.1f", v);
}

// A value wider than its column keeps a blank on the side of its neighbour: columns never run
// together.
std::string pad(const std::string& s, std::size_t width, bool right) {
  if (s.size() >= width) return right ? " " + s : s + " ";
  const std::string fill(width - s.size(), ' ');
  return right ? fill + s : s + fill;
}

json condition_json(const NodeCondition& c) {
  json j;
  switch (c.kind) {
    case ConditionKind::temperature:
      j["kind"] = "temperature";
      j["temperature_K"] = c.value;
      break;
    case ConditionKind::heat_flux:
      j["kind"] = "heat_flux";
      j["heat_flux_W_m2"] = c.value;
      break;
    case ConditionKind::power:
      j["kind"] = "power";
      j["power_W"] = c.value;
      break;
    case ConditionKind::adiabatic:
      j["kind"] = "adiabatic";
      break;
  }
  j["convection"] = c.convection
                        ? json{{"h_W_m2K", c.convection->h}, {"fluid_K", c.convection->fluid_K}}
                        : json(nullptr);
  j["wall"] = c.wall_loss ? json{{"U_W_m2K", c.wall_loss->U}, {"outside_K", c.wall_loss->outside_K}}
                          : json(nullptr);
  return j;
}

const char* side_name(Side side) {
  return side == Side::front ? "front" : "back";
}

// The units of one report.
struct Shown {
  ResultUnit T, P, q, A;
  explicit Shown(UnitSystem u)
      : T(result_unit(u, ResultKind::temperature)),
        P(result_unit(u, ResultKind::power)),
        q(result_unit(u, ResultKind::heat_flux)),
        A(result_unit(u, ResultKind::area)) {}
};

// The energy balance, each flow on its own line: what is put in, where it is taken out.
void print_balance(std::ostream& out, const HeatBalance& b, const Shown& u) {
  const double relative = b.largest_W > 0 ? b.residual_W / b.largest_W : 0.0;
  auto row = [&](const std::string& label, double watts_value, const std::string& where) {
    out << "  " << pad(label, 42, false) << pad(watts(u.P.from_si(watts_value)), 14, true) << " "
        << u.P.label << (where.empty() ? "" : "  (" + where + ")") << "\n";
  };
  out << "energy balance (each flow separately; heat put in = the other lines summed)\n";
  row("heat put in (gross)", b.gross_input_W,
      b.sources.empty() ? "none" : join_at_most(b.sources, 5));
  row("heat taken by loads and sinks", b.taken_out_W,
      b.sinks.empty() ? "none" : join_at_most(b.sinks, 5));
  row("wall losses (through the walls)", b.wall_loss_W, "");
  row("convection to the fluids", b.convection_W, "");
  row("radiation out of the openings", b.to_surroundings_W, "to the surroundings");
  out << "  " << pad("residual", 42, false)
      << pad(rounded("%.3g", u.P.from_si(b.residual_W)), 14, true) << " " << u.P.label << "  ("
      << rounded("%.2g", std::abs(relative)) << " of the largest flow)\n\n";
}

// Outer case temperatures of the walls that lose heat, with a warning where they burn.
void print_outer_cases(std::ostream& out, const std::vector<OuterCase>& cases, const Shown& u) {
  if (cases.empty()) return;
  out << "outer case (from each wall's largest loss flux; natural convection by Churchill & Chu "
         "1975 plus radiation, emissivity "
      << rounded("%.2g", kCaseEmissivity) << ", to a room at the wall's outside temperature)\n";
  for (const OuterCase& c : cases) {
    out << "  " << pad(c.surface, 20, false)
        << pad(rounded("%.1f", u.T.from_si(c.temperature_K)), 8, true) << " " << u.T.label
        << "  at " << watts(u.q.from_si(c.flux_W_m2)) << " " << u.q.label
        << (c.hazard == TouchHazard::none ? "" : "  WARNING: " + hazard_text(c.hazard)) << "\n";
  }
  out << "  the wall loss leaves out the outside film, so these are upper bounds\n\n";
}

}  // namespace

std::string to_string(ExchangeStatus status) {
  switch (status) {
    case ExchangeStatus::converged:
      return "converged";
    case ExchangeStatus::not_converged:
      return "not_converged";
    case ExchangeStatus::singular:
      return "singular";
  }
  return "unknown";
}

std::string solved_picture_title(const std::string& quantity, const std::string& unit,
                                 const std::string& where, bool converged) {
  std::string what = quantity;
  if (!what.empty() && what[0] >= 'a' && what[0] <= 'z') what[0] = char(what[0] - 'a' + 'A');
  if (!unit.empty() && unit != "-") what += " in " + unit;
  return what + ", " + where +
         (converged ? " (solve converged)" : " \u2014 NOT CONVERGED, not an answer");
}

namespace {

// One line per surface, under two header lines (titles, units).
void print_surface_rows(std::ostream& out, const std::vector<SurfaceHeat>& surfaces,
                        const Shown& u) {
  const std::pair<const char*, std::string> columns[] = {
      {"area", u.A.label},       {"emissivity", ""},
      {"T", u.T.label},          {"T", "K"},
      {"radiosity", u.q.label},  {"irradiation", u.q.label},
      {"net flux", u.q.label},   {"net rad.", u.P.label},
      {"convection", u.P.label}, {"wall loss", u.P.label},
      {"heat input", u.P.label}};
  std::size_t name_width = 7;
  for (const SurfaceHeat& s : surfaces) name_width = std::max(name_width, s.name.size() + 2);
  std::string titles = pad("surface", name_width, false), units(name_width, ' ');
  for (const auto& [title, unit] : columns) {
    titles += pad(title, kWidth, true);
    units += pad(unit, kWidth, true);
  }
  out << titles << "\n" << units << "\n";
  for (const SurfaceHeat& s : surfaces) {
    std::string line = pad(s.name + (s.two_sided ? " *" : ""), name_width, false);
    const std::string cells[] = {rounded("%.4g", u.A.from_si(s.area_m2)),
                                 rounded("%.3g", s.emissivity),
                                 rounded("%.1f", u.T.from_si(s.temperature_K)),
                                 rounded("%.1f", s.temperature_K),
                                 watts(u.q.from_si(s.radiosity_W_m2)),
                                 watts(u.q.from_si(s.irradiation_W_m2)),
                                 watts(u.q.from_si(s.net_flux_W_m2)),
                                 watts(u.P.from_si(s.net_W)),
                                 watts(u.P.from_si(s.convection_W)),
                                 watts(u.P.from_si(s.wall_loss_W)),
                                 watts(u.P.from_si(s.heat_input_W))};
    for (const std::string& c : cells) line += pad(c, kWidth, true);
    out << line << "\n";
  }
}

}  // namespace

void print_solve_table(std::ostream& out, const std::vector<SurfaceHeat>& surfaces,
                       const HeatBalance& balance, const ExchangeResult& result,
                       const std::vector<OuterCase>& cases, UnitSystem units) {
  const Shown u(units);
  print_surface_rows(out, surfaces, u);
  bool any_two_sided = false;
  for (const SurfaceHeat& s : surfaces) any_two_sided = any_two_sided || s.two_sided;
  for (const SurfaceHeat& s : surfaces) {
    if (s.pieces <= 1) continue;
    out << "  " << s.name << ": " << s.pieces << " patches; T above is their area-weighted mean, "
        << "they range from " << rounded("%.1f", u.T.from_si(s.temperature_min_K)) << " to "
        << rounded("%.1f", u.T.from_si(s.temperature_max_K)) << " " << u.T.label
        << " (each in surfaces.csv)\n";
  }
  if (any_two_sided) {
    out << "* two-sided: both faces on one line (" << u.q.label << " averaged over them, "
        << u.P.label << " summed); each face is in surfaces.csv\n";
  }
  out << "net rad.: net heat leaving by radiation; heat input = net rad. + convection + wall "
         "loss (positive: heat put into the surface)\n\n";

  print_balance(out, balance, u);
  print_outer_cases(out, cases, u);

  out << "solver: ";
  if (result.status == ExchangeStatus::converged) {
    out << "converged after " << result.iterations << " Newton iteration(s)";
  } else {
    out << (result.status == ExchangeStatus::singular ? "FAILED (singular)" : "NOT CONVERGED")
        << " after " << result.iterations << " Newton iteration(s): the values above are not "
        << "an answer";
  }
  out << "; largest node residual " << rounded("%.3g", u.P.from_si(result.final_residual_W)) << " "
      << u.P.label << "\n";
  if (!result.message.empty()) out << "  " << result.message << "\n";
  out << "\ncaution: " << kEngineeringCaution << "\n";
}

void write_surfaces_csv(std::ostream& out, const ThermalModel& model, const ExchangeResult& result,
                        UnitSystem units) {
  // The unit of each column is in its name: temperature_F, net_Btu_h, ...
  const Shown u(units);
  const std::string q = "_" + u.q.key, P = "_" + u.P.key;
  out << "surface,face,side,area_" << u.A.key << ",emissivity,temperature_K,temperature_" << u.T.key
      << ",radiosity" << q << ",irradiation" << q << ",net_flux" << q << ",net" << P
      << ",convection" << P << ",wall_loss" << P << ",heat_input" << P << ",converged\n";
  // Every row says whether the solve converged: a row copied out of the file keeps it.
  const char* converged = result.status == ExchangeStatus::converged ? "yes" : "no";
  std::vector<double> node_area(model.nodes.size(), 0.0);
  for (std::size_t f = 0; f < model.faces.size(); ++f) {
    node_area[model.faces[f].node] += model.factors.areas[f];
  }
  for (std::size_t f = 0; f < model.faces.size() && f < result.faces.size(); ++f) {
    const std::uint32_t k = model.faces[f].node;
    const NodeResult& n = result.nodes[k];
    const FaceResult& face = result.faces[f];
    const double share = model.factors.areas[f] / node_area[k];
    const double convection = n.convection_W * share, wall = n.wall_loss_W * share;
    out << csv_field(model.surface_names[model.node_surface[k]]) << ","
        << csv_field(model.factors.names[f]) << "," << side_name(model.face_side[f]) << ","
        << shortest(u.A.from_si(model.factors.areas[f])) << ","
        << shortest(model.faces[f].emissivity) << "," << shortest(n.temperature_K) << ","
        << shortest(u.T.from_si(n.temperature_K)) << "," << shortest(u.q.from_si(face.radiosity))
        << "," << shortest(u.q.from_si(face.irradiation)) << ","
        << shortest(u.q.from_si(face.net_flux)) << "," << shortest(u.P.from_si(face.net_power))
        << "," << shortest(u.P.from_si(convection)) << "," << shortest(u.P.from_si(wall)) << ","
        << shortest(u.P.from_si(face.net_power + convection + wall)) << "," << converged << "\n";
  }
}

namespace {

// The inputs echoed: files, rays, surroundings, each surface's emissivity and condition.
json scene_json(const SolveReportInfo& info, const ThermalModel& model) {
  json scene_surfaces = json::array();
  for (std::size_t k = 0; k < model.surface_names.size(); ++k) {
    json s;
    s["name"] = model.surface_names[k];
    s["two_sided"] = bool(model.two_sided[k]);
    s["emissivity"] = model.emissivity[k];
    s["condition"] = condition_json(model.surface_conditions[k]);
    scene_surfaces.push_back(s);
  }
  json scene;
  scene["file"] = info.scene;
  scene["mesh"] = {{"file", info.mesh}, {"unit", info.unit}, {"surfaces_from", info.surfaces_from}};
  scene["rays"] = {
      {"per_patch", info.rays_per_patch}, {"seed", info.seed}, {"sampler", info.sampler}};
  scene["surroundings_K"] = model.surroundings_K ? json(*model.surroundings_K) : json(nullptr);
  scene["surfaces"] = scene_surfaces;
  return scene;
}

json view_factors_json(const SolveReportInfo& info, const ThermalModel& model) {
  json vf;
  vf["rays_per_patch"] = info.rays_per_patch;
  vf["rays_total"] = info.rays_total;
  vf["seed"] = info.seed;
  vf["sampler"] = info.sampler;
  vf["seconds"] = info.trace_seconds ? json(*info.trace_seconds) : json("cache");
  vf["cache_file"] = info.cache_file.empty() ? json(nullptr) : json(info.cache_file);
  vf["smoothing"] = info.smoothing;
  vf["smoothing_iterations"] = info.smoothing_iterations;
  vf["max_correction_sigma"] = info.max_correction_sigma;
  vf["escaped_fraction"] = info.escaped_fraction;
  vf["back_face_fraction"] = info.back_face_fraction;
  vf["mesh_closed"] = model.mesh_closed;
  vf["leaks_folded"] = model.leaks_folded;
  vf["warnings"] = info.warnings;
  vf["files"] = info.files;
  vf["target"] = target_json(info.target);
  return vf;
}

json surfaces_json(const ThermalModel& model, const ExchangeResult& result) {
  json surfaces = json::array();
  for (const SurfaceHeat& s : surface_heat(model, result)) {
    // Faces listed for whole surfaces; a surface cut into patches has them in surfaces.csv.
    json faces = json::array();
    for (std::size_t f : s.pieces == 1 ? s.faces : std::vector<std::size_t>{}) {
      const FaceResult& r = result.faces[f];
      faces.push_back({{"name", model.factors.names[f]},
                       {"side", side_name(model.face_side[f])},
                       {"area_m2", model.factors.areas[f]},
                       {"radiosity_W_m2", r.radiosity},
                       {"irradiation_W_m2", r.irradiation},
                       {"net_flux_W_m2", r.net_flux},
                       {"net_W", r.net_power}});
    }
    surfaces.push_back({{"name", s.name},
                        {"two_sided", s.two_sided},
                        {"area_m2", s.area_m2},
                        {"emissivity", s.emissivity},
                        {"temperature_K", s.temperature_K},
                        {"temperature_C", s.temperature_K - kZeroCelsius},
                        {"temperature_min_K", s.temperature_min_K},
                        {"temperature_max_K", s.temperature_max_K},
                        {"patches_per_side", s.pieces},
                        {"net_W", s.net_W},
                        {"net_flux_W_m2", s.net_flux_W_m2},
                        {"radiosity_W_m2", s.radiosity_W_m2},
                        {"irradiation_W_m2", s.irradiation_W_m2},
                        {"convection_W", s.convection_W},
                        {"wall_loss_W", s.wall_loss_W},
                        {"heat_input_W", s.heat_input_W},
                        {"faces", faces}});
  }
  return surfaces;
}

json balance_json(const HeatBalance& b) {
  return {{"gross_input_W", b.gross_input_W},
          {"taken_by_loads_and_sinks_W", b.taken_out_W},
          {"wall_loss_W", b.wall_loss_W},
          {"convection_W", b.convection_W},
          {"to_surroundings_W", b.to_surroundings_W},
          {"residual_W", b.residual_W},
          {"heat_input_W", b.heat_input_W},
          {"sources", b.sources},
          {"sinks", b.sinks},
          {"largest_W", b.largest_W},
          {"relative_residual", b.largest_W > 0 ? b.residual_W / b.largest_W : 0.0},
          {"meaning",
           "gross_input_W = taken_by_loads_and_sinks_W + wall_loss_W + convection_W + "
           "to_surroundings_W + residual_W; heat_input_W is gross input less what is taken"}};
}

json outer_case_json(const std::vector<OuterCase>& cases) {
  json list = json::array();
  for (const OuterCase& c : cases) {
    list.push_back({{"surface", c.surface},
                    {"wall_loss_flux_W_m2", c.flux_W_m2},
                    {"room_K", c.room_K},
                    {"temperature_K", c.temperature_K},
                    {"temperature_C", c.temperature_K - kZeroCelsius},
                    {"convection_h_W_m2K", c.convection_h},
                    {"hot_to_touch", c.hazard != TouchHazard::none},
                    {"warning", hazard_text(c.hazard)}});
  }
  return {
      {"method",
       "case temperature that gives off the largest wall-loss flux of the surface by natural "
       "convection (Churchill & Chu 1975, vertical plate as tall as the model) and radiation "
       "(emissivity 0.9) to a room at the wall's outside temperature; an upper bound, as the "
       "wall loss leaves out the outside film"},
      {"touch_thresholds", "ISO 13732-1: 65 C bare metal about 1 s, 48 C about 10 min (recalled)"},
      {"surfaces", list}};
}

}  // namespace

void write_solve_json(std::ostream& out, const SolveReportInfo& info, const ThermalModel& model,
                      const ExchangeResult& result) {
  json doc;
  doc["tool"] = "hearthray";
  doc["version"] = info.version;
  doc["caution"] = kEngineeringCaution;
  doc["scene"] = scene_json(info, model);
  doc["view_factors"] = view_factors_json(info, model);
  doc["files"] = info.files;  // the files of this run beside report.json (as view_factors.files)
  doc["solver"] = {{"method", "net radiation (radiosity), Newton on surface temperatures"},
                   {"status", to_string(result.status)},
                   {"message", result.message},
                   {"iterations", result.iterations},
                   {"final_residual_W", result.final_residual_W}};
  doc["surfaces"] = surfaces_json(model, result);
  doc["balance"] = balance_json(heat_balance(model, result));
  doc["outer_case"] = outer_case_json(outer_cases(model, result, info.model_height_m));
  doc["notes"] = info.notes;
  out << doc.dump(2, ' ', false, json::error_handler_t::replace) << "\n";
}

namespace {

// The largest p (1 - p) of factors p clamped to [0, 1], as a vectorised max reduction (this
// file is compiled with -fopenmp-simd and -fno-trapping-math, CMakeLists.txt): a max is
// exact, so the lanes' order does not matter, and a NaN never enters (m < NaN is false).
[[gnu::target_clones("avx2", "default")]] double largest_term(const double* values,
                                                              std::size_t count, double term) {
#pragma omp simd reduction(max : term)
  for (std::size_t k = 0; k < count; ++k) {
    const double v = values[k];
    const double p = v < 0.0 ? 0.0 : (1.0 < v ? 1.0 : v);  // std::clamp(v, 0, 1)
    const double t = p * (1 - p);
    term = term < t ? t : term;  // std::max(term, t)
  }
  return term;
}

// The largest standard error of row f's factors and of its fraction to the surroundings, as
// the largest of vf.standard_error(f, F_fj) (0 for an empty row). That error,
// sqrt(p (1 - p) / N) times the row's error ratio, is a non-decreasing function of the rounded
// p (1 - p) (each rounded operation is monotone), so the largest is the one of the largest
// p (1 - p): one square root a row rather than one an entry, and the same value. NaN terms are
// skipped by the max as before.
double largest_standard_error(const ViewFactors& vf, std::size_t f) {
  const double* values = vf.F.valuePtr() + vf.F.outerIndexPtr()[f];
  const std::size_t count = std::size_t(vf.F.row(Eigen::Index(f)).nonZeros());
  double term = largest_term(values, count, 0.0);  // largest p (1 - p)
  if (f < vf.to_surroundings.size()) term = largest_term(&vf.to_surroundings[f], 1, term);
  const double binomial = std::sqrt(term / static_cast<double>(vf.rays[f]));
  return std::max(0.0, vf.error_ratio.empty() ? binomial : binomial * vf.error_ratio.at(f));
}

}  // namespace

std::vector<PatchField> solve_fields(const ThermalModel& model, const ExchangeResult& result) {
  const std::size_t n = model.faces.size();
  PatchField temperature{"temperature", "°C", std::vector<double>(n)};
  PatchField net{"net radiative flux", "W/m²", std::vector<double>(n)};
  PatchField irradiation{"irradiation", "W/m²", std::vector<double>(n)};
  PatchField radiosity{"radiosity", "W/m²", std::vector<double>(n)};
  PatchField input{"heat input flux", "W/m²", std::vector<double>(n)};
  PatchField error{"view-factor standard error", "-", std::vector<double>(n)};
  std::vector<double> node_area(model.nodes.size(), 0.0);
  for (std::size_t f = 0; f < n; ++f) node_area[model.faces[f].node] += model.factors.areas[f];
  const ViewFactors& vf = model.factors;
  // Each face on its own (the largest standard error reads the face's row of F, some 1e8
  // entries in all): in parallel, the same values for any thread count.
  tbb::parallel_for(
      tbb::blocked_range<std::size_t>(0, std::min(n, result.faces.size()), 512),
      [&](const tbb::blocked_range<std::size_t>& range) {
        for (std::size_t f = range.begin(); f != range.end(); ++f) {
          const std::uint32_t k = model.faces[f].node;
          const NodeResult& node = result.nodes[k];
          const FaceResult& face = result.faces[f];
          temperature.values[f] = node.temperature_K - kZeroCelsius;
          net.values[f] = face.net_flux;
          irradiation.values[f] = face.irradiation;
          radiosity.values[f] = face.radiosity;
          // Convection and wall loss are per m^2 of the node's faces.
          input.values[f] = face.net_flux + (node.convection_W + node.wall_loss_W) / node_area[k];
          error.values[f] =
              f < vf.rays.size() && vf.rays[f] > 0 ? largest_standard_error(vf, f) : NAN;
        }
      });
  return {temperature, net, irradiation, radiosity, input, error};
}

PatchField shown_in(const PatchField& field, UnitSystem units) {
  PatchField out = field;
  if (field.unit == "\u00b0C") {
    const ResultUnit T = result_unit(units, ResultKind::temperature);
    for (double& v : out.values) v = T.from_si(v + kZeroCelsius);
    out.unit = T.text;
  } else if (field.unit == "W/m\u00b2") {
    const ResultUnit q = result_unit(units, ResultKind::heat_flux);
    for (double& v : out.values) v = q.from_si(v);
    out.unit = q.text;
  }
  return out;
}

}  // namespace hearthray
