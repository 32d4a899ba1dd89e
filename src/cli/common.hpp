// Shared pieces of the command-line tool: running the view-factor stages with a progress
// line, and printing warnings. The tool only parses arguments, calls library stages and
// writes outputs.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "hearthray/diagnostics.hpp"
#include "hearthray/io.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray::cli {

inline constexpr std::uint64_t kDefaultRaysPerPatch = 100000;
inline constexpr std::uint64_t kDefaultSeed = 1;

struct RaySettings {
  std::optional<std::uint64_t> rays;  // command line over scene file over default
  std::optional<std::uint64_t> seed;
  int threads = 0;
  bool raw = false;     // skip smoothing
  bool quiet = false;   // no progress line, no summary
};

struct FactorRun {
  PatchSet patches;
  Tallies tallies;
  ViewFactors factors;
  TraceStats stats;
  SmoothingSummary smoothing;
  RayDiagnostics diagnostics;
  std::uint64_t rays_per_patch = 0;
  std::uint64_t seed = 0;
};

// Traces, diagnoses and (unless raw) smooths.
FactorRun run_view_factors(const SceneFile& file, const Scene& scene, const RaySettings& settings);

// The report fields for the JSON output.
FactorReportInfo report_info(const SceneFile& file, const FactorRun& run);

// Warnings and scene warnings to stderr, prefixed "warning: ".
void print_warnings(const Scene& scene, const RayDiagnostics& diagnostics, bool notes);

// One line about the smoothing, e.g. for the terminal.
std::string smoothing_line(const FactorRun& run);

}  // namespace hearthray::cli
