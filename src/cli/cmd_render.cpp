// `hearthray render`: a picture (PNG, or SVG or PDF by the output's extension) of the model
// coloured by a per-patch quantity. Until per-patch results are stored, the quantities are those
// that need no solve: the surface, the patch area, and the view factor to a named surface from a
// quick trace.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <iostream>

#include "commands.hpp"
#include "hearthray/error.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/render.hpp"
#include "hearthray/thermal_report.hpp"

namespace hearthray::cli {

namespace {

constexpr const char* kViewFactorTo = "view-factor-to=";

// "x,y,z" as parsed by the option, in the mesh's unit, to metres.
std::optional<Vec3> point_option(const std::vector<double>& v, const char* option, double scale) {
  if (v.empty()) return std::nullopt;
  if (v.size() != 3) throw InputError(std::string(option) + " expects three numbers x,y,z");
  return Vec3{v[0], v[1], v[2]} * scale;
}

std::string known_surfaces(const Scene& scene) {
  std::string names;
  for (const std::string& n : scene.surface_names()) names += (names.empty() ? "" : ", ") + n;
  return names;
}

// Fields of a solve's results, in the order of SolvedFields::fields.
const std::string kSolvedFields[] = {"temperature", "net-flux", "irradiation", "radiosity"};

// What a picture draws: the scene as traced for it, its patches, the field and how to colour it.
struct Drawing {
  Scene scene;
  PatchSet patches;
  PatchField field;
  std::vector<std::string> categories;
  bool diverging = false;
  std::optional<bool> converged;  // for a solved field: whether that solve converged
};

// A model field that needs no solve: surface, area or a quick view factor.
Drawing model_field(const SceneFile& file, const RenderArgs& args) {
  Drawing d;
  d.scene = load_scene(file);
  d.patches = make_surface_patches(d.scene);
  for (const std::string& w : d.scene.warnings) std::cerr << "warning: " << w << "\n";
  if (args.field == "surface") {
    d.field = surface_index_field(d.patches);
    d.categories = d.scene.surface_names();
  } else if (args.field == "area") {
    d.field = patch_area_field(d.patches);
  } else if (args.field.rfind(kViewFactorTo, 0) == 0) {
    const std::string name = args.field.substr(std::string(kViewFactorTo).size());
    const int target = d.scene.find_surface(name);
    if (target < 0)
      throw InputError("--field " + args.field + ": no surface named '" + name +
                       "'; the model has " + known_surfaces(d.scene));
    // A quick raw estimate on whole surfaces (the patches of the picture).
    const FactorRun run =
        quick_view_factors(d.scene, args.rays, args.seed, args.threads, args.force);
    d.field = view_factor_to_surface_field(d.scene, d.patches, run.factors, std::uint32_t(target));
  } else if (std::count(std::begin(kSolvedFields), std::end(kSolvedFields), args.field)) {
    throw InputError("--field " + args.field +
                     " is a solved field: give --results DIR, the folder `hearthray solve "
                     "-o DIR` wrote for this scene");
  } else {
    throw InputError("unknown --field '" + args.field +
                     "': use surface, area, view-factor-to=<surface name>, or with --results "
                     "temperature, net-flux, irradiation or radiosity");
  }
  return d;
}

// A solved field read back from a solve's surfaces.csv, on the patches that solve used.
Drawing solved_field(const SceneFile& file, const RenderArgs& args) {
  const std::string* wanted =
      std::find(std::begin(kSolvedFields), std::end(kSolvedFields), args.field);
  if (wanted == std::end(kSolvedFields))
    throw InputError("--field " + args.field +
                     " with --results: use temperature, net-flux, irradiation or radiosity");
  PatchPlan plan = plan_scene(file, load_scene(file), PipelineOptions{});
  const SolvedFields solved = read_solved_fields(
      (std::filesystem::path(args.results) / "surfaces.csv").string(), plan.patches);
  Drawing d;
  d.scene = std::move(plan.scene);
  d.patches = std::move(plan.patches);
  // kSolvedFields is in the order of SolvedFields::fields.
  d.field = shown_in(solved.fields[std::size_t(wanted - std::begin(kSolvedFields))],
                     parse_unit_system(args.units));
  d.diverging = args.field == "net-flux";
  d.converged = solved.converged;
  return d;
}

}  // namespace

int run_render_command(const RenderArgs& args) {
  const auto start = std::chrono::steady_clock::now();
  const SceneFile file = open_scene_with_unit(args.input, args.unit);
  const Drawing d = args.results.empty() ? model_field(file, args) : solved_field(file, args);
  const Tracer tracer(d.scene, TracerOptions{});
  const PatchField& field = d.field;
  RenderOptions options;
  options.categories = d.categories;
  options.diverging = d.diverging;

  const double unit = metres_per(file.mesh.unit);
  options.width = args.width;
  options.height = args.height;
  options.camera = point_option(args.camera, "--camera", unit);
  options.target = point_option(args.target, "--target", unit);
  if (!args.up.empty()) options.up = *point_option(args.up, "--up", 1.0);
  options.fov_degrees = args.fov;
  options.hidden = args.hide;
  options.threads = args.threads;
  if (!args.range.empty()) {
    if (args.range.size() != 2 || !(args.range[0] < args.range[1]))
      throw InputError("--range expects two numbers low,high with low below high");
    options.range_min = args.range[0];
    options.range_max = args.range[1];
  }
  if (!args.no_title) {
    const std::string where = std::filesystem::path(args.input).filename().string();
    if (!args.title.empty())
      options.title = args.title;
    else if (d.converged)  // a solved field: what, where, and whether the solve converged
      options.title = solved_picture_title(field.name, field.unit, where, *d.converged);
    else
      options.title = where + ": " + field.name;
  }
  std::string problem;
  if (!options.IsValid(&problem)) throw InputError(problem);

  const Picture picture = render(d.scene, d.patches, tracer, field, options);
  write_picture(args.output, picture);
  if (!args.quiet) {
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::cout << "wrote " << args.output << " (" << picture.width() << " x " << picture.height()
              << ", " << field.name << ", " << seconds << " s)\n";
    if (!options.title.empty()) std::cout << "title: " << options.title << "\n";
  }
  return 0;
}

}  // namespace hearthray::cli
