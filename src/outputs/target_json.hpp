// Private to the outputs: the "target" object of report.json and of the factors' JSON.
#pragma once

#include <nlohmann/json.hpp>

#include "hearthray/io.hpp"

namespace hearthray {

inline nlohmann::json target_json(const TargetReportInfo& t) {
  if (!t.used) return nullptr;
  return {{"error_wanted", t.error_wanted},
          {"error_achieved", t.error_achieved},
          {"error_is", "the largest standard error of any view factor (absolute)"},
          {"reached", t.reached},
          {"stopped_by", t.stopped_by},
          {"round_rays_per_patch", t.round_rays_per_patch},
          {"round_errors", t.round_errors},
          {"max_rays_per_patch", t.max_rays_per_patch},
          {"time_limit_s", t.time_limit_s > 0 ? nlohmann::json(t.time_limit_s) : nullptr},
          {"rays_all_rounds", t.rays_all_rounds}};
}

}  // namespace hearthray
