// hearthray: thermal radiation between surfaces. This file only parses arguments; each
// command calls the library's pipeline (see commands.hpp).
#include <CLI/CLI.hpp>
#include <cstdint>
#include <iostream>
#include <limits>
#include <new>

#include "commands.hpp"
#include "hearthray/error.hpp"
#include "hearthray/pipeline.hpp"  // the target defaults
#include "hearthray/version.hpp"
#include "processes.hpp"

using namespace hearthray::cli;

namespace {

// Seeds are whole numbers 0 .. 2^63 - 1 on the command line as in the scene file's [rays]
// (TOML integers are signed 64-bit): "-1" is refused, not wrapped to 2^64 - 1.
CLI::Range seed_range() {
  return CLI::Range(std::int64_t{0}, std::numeric_limits<std::int64_t>::max());
}

const char* const kUnitHelp = "Unit of a bare mesh's coordinates: mm, cm, m, in or ft (default m)";

// The commands, and the arguments CLI11 fills for each.
struct Commands {
  FactorsArgs factors;
  CheckArgs check;
  SolveArgs solve, fire;
  ComfortArgs comfort, compare;
  SizeArgs size;
  RenderArgs render;
  CLI::App *cmd_factors = nullptr, *cmd_check = nullptr, *cmd_solve = nullptr,
           *cmd_comfort = nullptr, *cmd_compare = nullptr, *cmd_render = nullptr,
           *cmd_fire = nullptr, *cmd_size = nullptr;
};

void add_sampler_option(CLI::App* cmd, RaySettings& rays) {
  cmd->add_option("--sampler", rays.sampler,
                  std::string("How surfaces emit rays: sobol (scrambled Sobol' points, errors from "
                              "8 replicates) or stratified (plain Monte Carlo); default: scene, ") +
                      hearthray::sampler_name(hearthray::kDefaultSampler))
      ->check(CLI::IsMember({"sobol", "stratified"}));
}

// --target-error E, --max-rays N and --time-limit T: rounds of rays until an error wanted.
void add_target_options(CLI::App* cmd, RaySettings& rays) {
  cmd->add_option("--target-error", rays.target_error,
                  "Trace in rounds until every view factor's standard error is at most this "
                  "(e.g. 0.001), or with solve every surface's net heat flow is within this "
                  "percentage (e.g. 0.5%); --rays gives the first round (default " +
                      std::to_string(hearthray::kDefaultTargetFirstRays) + ")");
  cmd->add_option("--max-rays", rays.max_rays,
                  "With --target-error: at most this many rays per patch (default " +
                      std::to_string(hearthray::kDefaultTargetMaxRaysPerPatch) + ")")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 40));
  cmd->add_option("--time-limit", rays.time_limit,
                  "With --target-error: start no round predicted to end after this time, e.g. "
                  "\"10 min\"");
}

// --cache DIR and --no-cache (which exclude each other).
void add_cache_options(CLI::App* cmd, std::string* dir, bool* no_cache) {
  CLI::Option* cache_dir = cmd->add_option("--cache", *dir,
                                           "View-factor cache folder (default: $HEARTHRAY_CACHE, "
                                           "$XDG_CACHE_HOME/hearthray or ~/.cache/hearthray)");
  cmd->add_flag("--no-cache", *no_cache, "Always trace; neither read nor write the cache")
      ->excludes(cache_dir);
}

CLI::App* add_factors_command(CLI::App& app, FactorsArgs& factors) {
  CLI::App* cmd_factors = app.add_subcommand(
      "factors", "View factors between every pair of surfaces, with standard errors");
  cmd_factors->add_option("scene", factors.input, "Scene file (.toml) or mesh (.obj)")->required();
  cmd_factors->add_option("--unit", factors.unit, kUnitHelp);
  cmd_factors
      ->add_option(
          "--rays", factors.rays.rays,
          "Rays per surface (default " + std::to_string(hearthray::kDefaultRaysPerPatch) + ")")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 40));
  cmd_factors
      ->add_option("--seed", factors.rays.seed,
                   "Random seed (default " + std::to_string(hearthray::kDefaultSeed) + ")")
      ->check(seed_range());
  add_sampler_option(cmd_factors, factors.rays);
  add_target_options(cmd_factors, factors.rays);
  cmd_factors->add_option("--threads", factors.rays.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  cmd_factors->add_flag("--raw", factors.rays.raw, "Skip the reciprocity and closure correction");
  cmd_factors->add_flag("--force", factors.rays.force,
                        "Run even when the estimated patches, rays or memory are past the limits");
  cmd_factors->add_flag("-q,--quiet", factors.rays.quiet, "No progress line or summary");
  cmd_factors->add_option(
      "-o,--output", factors.outputs,
      "Output file: .csv, .mtx, .npy, .json or .h5 (repeatable); the patch table "
      "and VTU are written beside it");
  add_cache_options(cmd_factors, &factors.cache_dir, &factors.no_cache);
  return cmd_factors;
}

CLI::App* add_check_command(CLI::App& app, CheckArgs& check) {
  CLI::App* cmd_check = app.add_subcommand(
      "check", "Mesh report: triangles, areas, topology, back-face hits, escaping rays");
  cmd_check->add_option("scene", check.input, "Scene file (.toml) or mesh (.obj)")->required();
  cmd_check->add_option("--unit", check.unit, kUnitHelp);
  cmd_check->add_option("--where", check.where,
                        "Write gaps, touching faces and back hits as lines and points a viewer "
                        "opens (.obj or .vtu)");
  cmd_check->add_option("--rays", check.rays, "Rays per surface for the quick estimate")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 32));
  cmd_check->add_option("--seed", check.seed, "Random seed")->check(seed_range());
  cmd_check->add_option("--threads", check.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  cmd_check->add_flag("--force", check.force,
                      "Run even when the estimated patches, rays or memory are past the limits");
  return cmd_check;
}

// `solve` and `fire` take the same options.
CLI::App* add_scene_command(CLI::App& app, const std::string& name, const std::string& what,
                            const std::string& output_help, SolveArgs& solve) {
  CLI::App* cmd_solve = app.add_subcommand(name, what);
  cmd_solve->add_option("scene", solve.input, "Scene file (.toml) with thermal conditions")
      ->required();
  cmd_solve->add_option("-o,--output", solve.output_dir, output_help);
  cmd_solve->add_flag("-q,--quiet", solve.rays.quiet, "No progress, notes or summary lines");
  cmd_solve->add_flag("--force", solve.rays.force,
                      "Run even when the estimated patches, rays or memory are past the limits");
  cmd_solve
      ->add_option("--rays", solve.rays.rays,
                   "Rays per surface (default: scene, " +
                       std::to_string(hearthray::kDefaultRaysPerPatch) + ")")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 40));
  cmd_solve
      ->add_option("--seed", solve.rays.seed,
                   "Random seed (default: scene, " + std::to_string(hearthray::kDefaultSeed) + ")")
      ->check(seed_range());
  add_sampler_option(cmd_solve, solve.rays);
  add_target_options(cmd_solve, solve.rays);
  cmd_solve->add_option("--threads", solve.rays.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  cmd_solve->add_flag("--matrix-text", solve.matrix_text,
                      "Above 200 patches, write the view factors as Matrix Market text "
                      "(view_factors.mtx) instead of compressed HDF5 (view_factors.h5)");
  add_cache_options(cmd_solve, &solve.cache_dir, &solve.no_cache);
  return cmd_solve;
}

// `comfort` (one scene) and `compare` (two or more) take the same options.
void add_comfort_commands(CLI::App& app, Commands* c) {
  ComfortArgs& comfort = c->comfort;
  ComfortArgs& compare = c->compare;
  CLI::App* cmd_comfort = c->cmd_comfort = app.add_subcommand(
      "comfort", "Radiant comfort at points and over a grid: t_mr, t_o, asymmetry, maps");
  CLI::App* cmd_compare = c->cmd_compare = app.add_subcommand(
      "compare", "Comfort of two or more scenes (e.g. panel layouts) side by side");
  for (auto [cmd, a] : {std::pair{cmd_comfort, &comfort}, std::pair{cmd_compare, &compare}}) {
    const bool one = cmd == cmd_comfort;
    cmd->add_option("scene", a->inputs,
                    one ? "Scene file (.toml) with a [comfort] table"
                        : "Scene files (.toml) with [comfort] tables")
        ->required()
        ->expected(one ? 1 : 2, one ? 1 : 64);
    cmd->add_option("-o,--output", a->output_dir,
                    one ? "Folder for comfort.csv and maps"
                        : "Folder for the scenes' maps, side by side on one colour range");
    cmd->add_option("--range", a->range,
                    "Colour range low,high in C of the temperature maps (compare: the same for "
                    "all scenes by default)")
        ->delimiter(',')
        ->expected(2);
    cmd->add_flag("-q,--quiet", a->rays.quiet, "No progress, notes or view-factor lines");
    cmd->add_flag("--force", a->rays.force,
                  "Run even when the estimated patches, rays or memory are past the limits");
    cmd->add_option("--threads", a->rays.threads, "Worker threads (default: all)")
        ->check(CLI::Range(0, 1024));
    CLI::Option* dir = cmd->add_option("--cache", a->cache_dir, "View-factor cache folder");
    cmd->add_flag("--no-cache", a->no_cache, "Always trace view factors")->excludes(dir);
  }
}

// `size`: the least heater power for a comfort target, for one or more layouts.
CLI::App* add_size_command(CLI::App& app, SizeArgs& a) {
  CLI::App* cmd = app.add_subcommand(
      "size", "Least heater power meeting a comfort target, per layout, with verdicts and report");
  cmd->add_option("scene", a.inputs, "Scene files (.toml) with [comfort] tables: the layouts")
      ->required()
      ->expected(1, 64);
  cmd->add_option("--operative", a.operative_C, "Target operative temperature in C");
  cmd->add_option("--at", a.at,
                  "Where the operative target applies: zone (mean over the grid, default), "
                  "points (every named point) or point names")
      ->delimiter(',');
  cmd->add_option("--pmv", a.pmv, "Target PMV band low,high, e.g. -0.5,0.5 (every point)")
      ->delimiter(',')
      ->expected(2);
  cmd->add_option("-o,--output", a.output_dir, "Folder for the maps, sizing.csv and report.html");
  cmd->add_flag("-q,--quiet", a.rays.quiet, "No progress, notes or view-factor lines");
  cmd->add_flag("--force", a.rays.force,
                "Run even when the estimated patches, rays or memory are past the limits");
  cmd->add_option("--threads", a.rays.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  CLI::Option* dir = cmd->add_option("--cache", a.cache_dir, "View-factor cache folder");
  cmd->add_flag("--no-cache", a.no_cache, "Always trace view factors")->excludes(dir);
  return cmd;
}

CLI::App* add_render_command(CLI::App& app, RenderArgs& render) {
  CLI::App* cmd_render = app.add_subcommand(
      "render", "PNG picture of the model coloured by surface, patch area or a view factor");
  cmd_render->add_option("scene", render.input, "Scene file (.toml) or mesh (.obj)")->required();
  cmd_render->add_option("--unit", render.unit, kUnitHelp);
  cmd_render->add_option("-o,--output", render.output, "Picture file (.png)")->required();
  cmd_render->add_option("--field", render.field,
                         "surface, area, view-factor-to=<surface>; with --results: temperature, "
                         "net-flux, irradiation, radiosity (default surface)");
  cmd_render->add_option("--width", render.width, "Pixels (default 800)")
      ->check(CLI::Range(16, 16384));
  cmd_render->add_option("--height", render.height, "Pixels (default 600)")
      ->check(CLI::Range(16, 16384));
  cmd_render->add_option("--camera", render.camera, "Camera position x,y,z in the mesh's unit")
      ->delimiter(',')
      ->expected(3);
  cmd_render->add_option("--target", render.target, "Point looked at x,y,z (default: centre)")
      ->delimiter(',')
      ->expected(3);
  cmd_render->add_option("--up", render.up, "Up direction x,y,z (default 0,0,1)")
      ->delimiter(',')
      ->expected(3);
  cmd_render->add_option("--fov", render.fov, "Vertical field of view, degrees (default 30)")
      ->check(CLI::Range(0.1, 170.0));
  cmd_render->add_option("--hide", render.hide, "Surfaces to cut away: name,name,...")
      ->delimiter(',');
  cmd_render->add_option("--title", render.title, "Title line (default: file and field)");
  cmd_render->add_flag("--no-title", render.no_title, "No title line");
  cmd_render->add_option("--range", render.range, "Colour bar low,high (default: the data's)")
      ->delimiter(',')
      ->expected(2);
  cmd_render
      ->add_option("--rays", render.rays,
                   "Rays per surface for view-factor-to (default " +
                       std::to_string(hearthray::kQuickRaysPerPatch) + ")")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 32));
  cmd_render
      ->add_option("--seed", render.seed,
                   "Random seed (default " + std::to_string(hearthray::kDefaultSeed) + ")")
      ->check(seed_range());
  cmd_render->add_option("--threads", render.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  cmd_render->add_option("--results", render.results,
                         "Folder a solve wrote (-o): draw its temperature, net-flux, irradiation "
                         "or radiosity");
  cmd_render->add_option("--units", render.units,
                         "Units of a solved field: si (C, W/m2), us (F, Btu/(h ft2)) or kcal "
                         "(C, kcal/(h m2)) (default si)");
  cmd_render->add_flag("-q,--quiet", render.quiet, "No summary line");
  cmd_render->add_flag("--force", render.force,
                       "Run even when the estimated patches, rays or memory are past the limits");
  return cmd_render;
}

// An unknown first word gets the list of commands, not CLI11's generic message. Returns
// whether it printed an error.
bool unknown_command(const CLI::App& app, int argc, char** argv) {
  auto known = [&](const std::string& name) {
    for (const CLI::App* sub : app.get_subcommands({}))
      if (sub->get_name() == name) return true;
    return false;
  };
  if (argc <= 1 || argv[1][0] == '-' || known(argv[1])) return false;
  std::cerr << "error: unknown command '" << argv[1] << "': use one of";
  for (const CLI::App* sub : app.get_subcommands({})) std::cerr << " " << sub->get_name();
  std::cerr << " (see hearthray --help)\n";
  return true;
}

// Parses the command line. Returns -1 to go on, else the exit code (help, version, errors).
int parse(CLI::App& app, int argc, char** argv) {
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::Success& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::cerr << "error: " << e.what() << " (see hearthray " << (argc > 1 ? argv[1] : "")
              << " --help)\n";
    return 2;
  }
  return -1;
}

// Runs the command given; bad input is exit 2, anything else an internal failure (exit 3).
int run(const Commands& c) {
  try {
    // Under mpirun, commands that do not split their tracing run on process 0 alone.
    set_command_splits(*c.cmd_factors || *c.cmd_solve);
    if (is_helper_process() && !command_splits()) return 0;
    if (*c.cmd_factors) return run_factors_command(c.factors);
    if (*c.cmd_check) return run_check_command(c.check);
    if (*c.cmd_solve) return run_solve_command(c.solve);
    if (*c.cmd_render) return run_render_command(c.render);
    if (*c.cmd_fire) return run_fire_command(c.fire);
    if (*c.cmd_comfort) return run_comfort_command(c.comfort);
    if (*c.cmd_compare) return run_compare_command(c.compare);
    if (*c.cmd_size) return run_size_command(c.size);
  } catch (const ProcessesStop& stop) {
    return stop.status;
  } catch (const hearthray::InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 2;
  } catch (const std::bad_alloc&) {
    std::cerr << "error: out of memory: the run needs more memory than this machine gives it; "
                 "use fewer patches (larger patches = \"...\") or fewer surfaces\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << "error: internal: " << e.what() << "\n";
    return 3;
  }
  return 0;
}

int run_command_line(int argc, char** argv) {
  CLI::App app{
      "hearthray: view factors and radiant heat exchange between the surfaces of a 3-D model.\n"
      "Results are engineering estimates; furnace, kiln and heater design follows local codes,\n"
      "the equipment maker's instructions and licensed practice."};
  app.require_subcommand(1);
  app.set_version_flag("--version", std::string("hearthray ") + hearthray::kVersion);
  Commands c;
  c.cmd_factors = add_factors_command(app, c.factors);
  c.cmd_check = add_check_command(app, c.check);
  c.cmd_solve = add_scene_command(
      app, "solve", "Radiant heat exchange: heat flows and surface temperatures from a scene file",
      "Folder for surfaces.csv, report.json and view_factors.csv/.json", c.solve);
  c.cmd_solve->add_option("--units", c.solve.units,
                          "Units of the table, surfaces.csv and pictures: si (C, W, W/m2), us "
                          "(F, Btu/h, Btu/(h ft2)) or kcal (C, kcal/h, kcal/(h m2)); report.json "
                          "stays SI (default si)");
  c.cmd_fire = add_scene_command(
      app, "fire",
      "A firing over time: the scene's [firing] schedule, walls and loads with heat capacity",
      "Folder for firing.csv, report.json and the pictures against time", c.fire);
  add_comfort_commands(app, &c);
  c.cmd_size = add_size_command(app, c.size);
  c.cmd_render = add_render_command(app, c.render);
  if (unknown_command(app, argc, argv)) return 2;
  if (const int status = parse(app, argc, argv); status >= 0) return status;
  return run(c);
}

}  // namespace

// Under an MPI launcher, every process of the job runs this (see processes.hpp).
int main(int argc, char** argv) {
  start_processes(&argc, &argv);
  return finish_processes(run_command_line(argc, argv));
}
