// `hearthray render`: a picture (PNG, or SVG or PDF by the output's extension) of the model
// coloured by a per-patch quantity. Until per-patch results are stored, the quantities are those
// that need no solve: the surface, the patch area, and the view factor to a named surface from a
// quick trace.
#include <chrono>
#include <cmath>
#include <filesystem>
#include <iostream>

#include "commands.hpp"
#include "hearthray/error.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/render.hpp"

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

}  // namespace

int run_render_command(const RenderArgs& args) {
  const auto start = std::chrono::steady_clock::now();
  const SceneFile file = open_scene_with_unit(args.input, args.unit);
  const Scene scene = load_scene(file);
  const PatchSet patches = make_surface_patches(scene);
  for (const std::string& w : scene.warnings) std::cerr << "warning: " << w << "\n";
  const Tracer tracer(scene, TracerOptions{});

  RenderOptions options;
  PatchField field;
  if (args.field == "surface") {
    field = surface_index_field(patches);
    options.categories = scene.surface_names();
  } else if (args.field == "area") {
    field = patch_area_field(patches);
  } else if (args.field.rfind(kViewFactorTo, 0) == 0) {
    const std::string name = args.field.substr(std::string(kViewFactorTo).size());
    const int target = scene.find_surface(name);
    if (target < 0)
      throw InputError("--field " + args.field + ": no surface named '" + name +
                       "'; the model has " + known_surfaces(scene));
    // A quick raw estimate on whole surfaces (the patches of the picture).
    const FactorRun run = quick_view_factors(scene, args.rays, args.seed, args.threads, args.force);
    field = view_factor_to_surface_field(scene, patches, run.factors, std::uint32_t(target));
  } else {
    throw InputError("unknown --field '" + args.field +
                     "': use surface, area or view-factor-to=<surface name>");
  }

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
    options.title = args.title.empty()
                        ? std::filesystem::path(args.input).filename().string() + ": " + field.name
                        : args.title;
  }
  std::string problem;
  if (!options.IsValid(&problem)) throw InputError(problem);

  const Picture picture = render(scene, patches, tracer, field, options);
  write_picture(args.output, picture);
  if (!args.quiet) {
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::cout << "wrote " << args.output << " (" << picture.width() << " x " << picture.height()
              << ", " << field.name << ", " << seconds << " s)\n";
  }
  return 0;
}

}  // namespace hearthray::cli
