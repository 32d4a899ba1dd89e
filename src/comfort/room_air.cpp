// The room air's heat balance solved with the exchange (see include/hearthray/room_air.hpp).
#include "hearthray/room_air.hpp"

#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

// The air balance is solved when its residual is within this share of its largest flow (far
// below anything a reader sees, well above the exchange's own round-off), or the secant step
// is below kStep_K.
constexpr double kRelativeTolerance = 1e-9;
constexpr double kStep_K = 1e-9;
constexpr int kMaxSolves = 60;
// First two guesses: 20 C and 1 K above; a secant step is held within this many kelvin.
constexpr double kFirstGuess_K = 293.15;
constexpr double kLargestStep_K = 200;

std::vector<std::size_t> room_air_nodes(const ThermalModel& model) {
  std::vector<std::size_t> nodes;
  for (std::size_t k = 0; k < model.nodes.size(); ++k) {
    const auto& c = model.nodes[k].condition.convection;
    if (c && c->fluid_is_room_air && c->h > 0) nodes.push_back(k);
  }
  return nodes;
}

struct AirBalance {
  ThermalModel* model;
  const std::vector<std::size_t>& nodes;
  const RoomAirInput& input;
  double conductance;
  const ExchangeOptions& options;
  ExchangeResult* result;
  int solves = 0;

  // Into the air minus out with the ventilation, at air temperature T_a; false when the
  // exchange did not converge.
  bool residual(double air_K, double* R, double* scale) {
    for (std::size_t k : nodes) model->nodes[k].condition.convection->fluid_K = air_K;
    *result = solve_exchange(model->problem(), options);
    ++solves;
    if (result->status != ExchangeStatus::converged) return false;
    double convection = 0, largest = std::abs(input.gains_W);
    for (std::size_t k : nodes) {
      convection += result->nodes[k].convection_W;
      largest = std::max(largest, std::abs(result->nodes[k].convection_W));
    }
    const double vent = conductance * (air_K - input.outside_K);
    *R = convection + input.gains_W - vent;
    *scale = std::max({largest, std::abs(vent), 1.0});
    return true;
  }
};

}  // namespace

double ventilation_flow(const RoomAirInput& input, double volume_m3) {
  return input.ventilation_kind == VentilationKind::volume_flow
             ? input.ventilation
             : input.ventilation * volume_m3 / 3600.0;
}

RoomAirResult solve_room_air(ThermalModel* model, const RoomAirInput& input, double volume_m3,
                             const ExchangeOptions& options, ExchangeResult* result) {
  const std::vector<std::size_t> nodes = room_air_nodes(*model);
  if (nodes.empty())
    throw InputError(
        "[room_air] is given but no surface convects to the room air: write convection = { h = "
        "\"2.5 W/m2K\", fluid = \"room_air\" } in [defaults] or in the surfaces' tables");
  RoomAirResult out;
  out.volume_m3 = input.ventilation_kind == VentilationKind::air_changes_per_hour ? volume_m3 : 0;
  out.flow_m3_s = ventilation_flow(input, volume_m3);
  out.conductance_W_K = input.density * input.heat_capacity * out.flow_m3_s;
  out.gains_W = input.gains_W;
  AirBalance air{model, nodes, input, out.conductance_W_K, options, result};

  // Secant on T_a, guarded by the bracket [lo, hi] of the residual's signs (R decreases in
  // T_a): a step that would leave the bracket, or has no usable slope, bisects it instead.
  double x0 = kFirstGuess_K, x1 = kFirstGuess_K + 1, R0 = 0, R1 = 0, scale = 1;
  double lo = -INFINITY, hi = INFINITY;
  bool ok = air.residual(x0, &R0, &scale);
  if (ok && R0 > 0) lo = x0;
  if (ok && R0 < 0) hi = x0;
  ok = ok && air.residual(x1, &R1, &scale);
  while (ok) {
    if (R1 > 0) lo = std::max(lo, x1);
    if (R1 < 0) hi = std::min(hi, x1);
    if (std::abs(R1) <= kRelativeTolerance * scale || std::abs(x1 - x0) <= kStep_K) break;
    if (air.solves >= kMaxSolves) {
      ok = false;
      out.message = "the room-air balance did not converge in " + std::to_string(kMaxSolves) +
                    " exchange solves";
      break;
    }
    double x = R1 != R0 ? x1 - R1 * (x1 - x0) / (R1 - R0) : NAN;
    if (std::isfinite(x)) x = std::clamp(x, x1 - kLargestStep_K, x1 + kLargestStep_K);
    const bool bracketed = std::isfinite(lo) && std::isfinite(hi);
    if (bracketed && !(x > lo && x < hi)) x = 0.5 * (lo + hi);
    if (!std::isfinite(x)) x = x1 + (R1 > 0 ? 1 : -1);
    x0 = x1, R0 = R1, x1 = x;
    ok = air.residual(x1, &R1, &scale);
  }
  out.iterations = air.solves;
  out.air_K = x1;
  if (!ok && out.message.empty())
    out.message = "the exchange did not converge at air " + rounded("%.2f C", x1 - kZeroCelsius) +
                  ": " + result->message;
  out.converged = ok;
  for (std::size_t k : nodes) out.convection_W += result->nodes[k].convection_W;
  out.ventilation_W = out.conductance_W_K * (out.air_K - input.outside_K);
  out.residual_W = out.convection_W + out.gains_W - out.ventilation_W;
  return out;
}

}  // namespace hearthray
