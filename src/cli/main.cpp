// hearthray: thermal radiation between surfaces. This file only parses arguments; each
// command calls library stages (see commands.hpp).
#include <CLI/CLI.hpp>
#include <iostream>

#include "commands.hpp"
#include "hearthray/error.hpp"

using namespace hearthray::cli;

int main(int argc, char** argv) {
  CLI::App app{
      "hearthray: view factors and radiant heat exchange between the surfaces of a 3-D model.\n"
      "Results are engineering estimates; furnace, kiln and heater design follows local codes,\n"
      "the equipment maker's instructions and licensed practice."};
  app.require_subcommand(1);
  app.set_version_flag("--version", "hearthray 0.1.0");

  FactorsArgs factors;
  CLI::App* cmd_factors = app.add_subcommand(
      "factors", "View factors between every pair of surfaces, with standard errors");
  cmd_factors->add_option("scene", factors.input, "Scene file (.toml) or mesh (.obj)")->required();
  cmd_factors->add_option("--rays", factors.rays.rays, "Rays per surface (default 100000)")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 40));
  cmd_factors->add_option("--seed", factors.rays.seed, "Random seed (default 1)");
  cmd_factors->add_option("--threads", factors.rays.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));
  cmd_factors->add_flag("--raw", factors.rays.raw, "Skip the reciprocity and closure correction");
  cmd_factors->add_flag("-q,--quiet", factors.rays.quiet, "No progress line or summary");
  cmd_factors->add_option("-o,--output", factors.outputs,
                          "Output file: .csv, .mtx, .npy or .json (repeatable)");

  CheckArgs check;
  CLI::App* cmd_check = app.add_subcommand(
      "check", "Mesh report: triangles, areas, topology, back-face hits, escaping rays");
  cmd_check->add_option("scene", check.input, "Scene file (.toml) or mesh (.obj)")->required();
  cmd_check->add_option("--rays", check.rays, "Rays per surface for the quick estimate")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{1} << 32));
  cmd_check->add_option("--seed", check.seed, "Random seed");
  cmd_check->add_option("--threads", check.threads, "Worker threads (default: all)")
      ->check(CLI::Range(0, 1024));

  auto known = [&](const std::string& name) {
    for (const CLI::App* sub : app.get_subcommands({}))
      if (sub->get_name() == name) return true;
    return false;
  };
  if (argc > 1 && argv[1][0] != '-' && !known(argv[1])) {
    std::cerr << "error: unknown command '" << argv[1] << "': use one of";
    for (const CLI::App* sub : app.get_subcommands({})) std::cerr << " " << sub->get_name();
    std::cerr << " (see hearthray --help)\n";
    return 2;
  }
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

  try {
    if (*cmd_factors) return run_factors_command(factors);
    if (*cmd_check) return run_check_command(check);
  } catch (const hearthray::InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 2;
  } catch (const std::exception& e) {
    std::cerr << "error: internal: " << e.what() << "\n";
    return 3;
  }
  return 0;
}
