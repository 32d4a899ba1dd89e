// Private to the outputs: the "target" object of report.json and of the factors' JSON.
#pragma once

#include <nlohmann/json.hpp>

#include "hearthray/io.hpp"

namespace hearthray {

// Per surface: its net radiative heat flow, the flow's standard error and the mean
// temperature's (null when the errors are unknown).
inline nlohmann::json heat_flow_errors_json(const TargetReportInfo& t) {
  if (t.surfaces.empty()) return nullptr;
  nlohmann::json rows = nlohmann::json::array();
  for (std::size_t k = 0; k < t.surfaces.size(); ++k) {
    rows.push_back({{"surface", t.surfaces[k]},
                    {"net_radiation_W", t.net_W[k]},
                    {"net_radiation_standard_error_W", t.net_error_W[k]},
                    {"temperature_standard_error_K", t.temperature_error_K[k]}});
  }
  return {
      {"method", "spread of " + std::to_string(t.heat_samples) +
                     " solves with the ray counts perturbed by their sampling distribution, then "
                     "smoothed as the run's"},
      {"floor_W", t.heat_floor_W},
      {"surfaces", rows}};
}

inline nlohmann::json target_json(const TargetReportInfo& t) {
  if (!t.used) return nullptr;
  const char* error_is =
      t.heat_flows ? "the largest standard error of a surface's net radiative heat flow over "
                     "that flow (at least floor_W), as a fraction"
                   : "the largest standard error of any view factor (absolute)";
  return {{"error_wanted", t.error_wanted},
          {"error_achieved", t.error_achieved},
          {"error_is", error_is},
          {"heat_flow_errors", t.heat_flows ? heat_flow_errors_json(t) : nlohmann::json(nullptr)},
          {"reached", t.reached},
          {"stopped_by", t.stopped_by},
          {"round_rays_per_patch", t.round_rays_per_patch},
          {"round_errors", t.round_errors},
          {"max_rays_per_patch", t.max_rays_per_patch},
          {"time_limit_s", t.time_limit_s > 0 ? nlohmann::json(t.time_limit_s) : nullptr},
          {"rays_all_rounds", t.rays_all_rounds}};
}

}  // namespace hearthray
