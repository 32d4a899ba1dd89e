#pragma once

#include <optional>
#include <string>
#include <vector>

#include "common.hpp"

namespace hearthray::cli {

struct FactorsArgs {
  std::string input;                 // scene.toml or mesh.obj
  std::string unit;                  // --unit of a bare mesh ("" = m)
  std::vector<std::string> outputs;  // -o, format by extension
  RaySettings rays;
  std::string cache_dir;  // --cache; "" = default
  bool no_cache = false;
};
int run_factors_command(const FactorsArgs& args);

struct CheckArgs {
  std::string input;
  std::string unit;   // --unit of a bare mesh ("" = m)
  std::string where;  // --where: file of gaps, contacts and back hits (.obj or .vtu)
  std::uint64_t rays = kQuickRaysPerPatch;  // quick estimate
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;
  bool force = false;  // run even when the estimated size is past the limits
};
int run_check_command(const CheckArgs& args);

struct SolveArgs {
  std::string input;       // scene.toml
  std::string output_dir;  // -o: surfaces.csv, report.json, view_factors.csv/.json
  RaySettings rays;
  std::string cache_dir;  // --cache; "" = default
  bool no_cache = false;
  std::string units = "si";  // --units: si | us | kcal, for the table, surfaces.csv, pictures
  bool matrix_text = false;  // --matrix-text: a large matrix as view_factors.mtx, not .h5
};
// Exit codes: 0 solved, 2 bad input, 4 the solver did not converge (outputs still written),
// 5 a target error was not reached (a cap stopped the rounds; outputs still written, from the
// last round; 4 wins when both happen).
inline constexpr int kExitNotConverged = 4;
inline constexpr int kExitTargetNotReached = 5;
int run_solve_command(const SolveArgs& args);
// The same for a scene with a [gas] table (the zone method).
int run_gas_solve(const SolveArgs& args, const SceneFile& file);
// A firing over time (the scene's [firing] table): exit 0 when the schedule ran to its end,
// 2 for bad input, 4 when it could not be completed (outputs still written).
int run_fire_command(const SolveArgs& args);

struct ComfortArgs {
  std::vector<std::string> inputs;  // comfort: one scene; compare: two or more
  std::string output_dir;           // -o: comfort.csv, comfort.txt, maps; compare: maps
  RaySettings rays;                 // --threads, --quiet; rays and seed from the scene
  std::string cache_dir;            // --cache; "" = default
  bool no_cache = false;
  std::vector<double> range;  // --range low,high (C) of the temperature maps
};
// Exit codes as for solve. `comfort`: table, summary, cautions, files. `compare`: the scenes
// side by side.
int run_comfort_command(const ComfortArgs& args);
int run_compare_command(const ComfortArgs& args);

struct SizeArgs {
  std::vector<std::string> inputs;    // one or more scenes (layouts of a room)
  std::string output_dir;             // -o: maps, sizing.csv, report.html
  std::optional<double> operative_C;  // --operative: target operative temperature (C)
  std::vector<std::string> at;        // --at: zone (default), points, or point names
  std::vector<double> pmv;            // --pmv low,high
  RaySettings rays;                   // --threads, --quiet; rays and seed from the scenes
  std::string cache_dir;              // --cache; "" = default
  bool no_cache = false;
};
// Exit codes: 0 (also when a target is not reached: the output says so), 2 bad input, 4 a
// scene's first solve did not converge.
int run_size_command(const SizeArgs& args);

struct RenderArgs {
  std::string input;              // scene.toml or mesh.obj
  std::string unit;               // --unit of a bare mesh ("" = m)
  std::string output;             // -o picture.png
  std::string field = "surface";  // surface | area | view-factor-to=<surface>
  int width = 800, height = 600;
  std::vector<double> camera, target, up;  // x,y,z; camera and target in the mesh's unit
  double fov = 30;                         // vertical, degrees
  std::vector<std::string> hide;           // surfaces cut away
  std::string title;                       // "" = file name and field
  bool no_title = false;
  std::vector<double> range;                // low,high of the colour bar
  std::string results;                      // --results DIR: a solve's output folder
  std::string units = "si";                 // --units for solved fields
  std::uint64_t rays = kQuickRaysPerPatch;  // per patch, for view-factor-to
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;
  bool quiet = false;
  bool force = false;  // run even when the estimated size is past the limits
};
int run_render_command(const RenderArgs& args);

}  // namespace hearthray::cli
