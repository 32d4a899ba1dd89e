// `hearthray solve`: scene -> view factors (traced, or from the cache) -> thermal model ->
// exchange solve -> table and files.
#include <tbb/task_arena.h>
#include <tbb/task_group.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <optional>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/patch_geometry.hpp"
#include "hearthray/render.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/units.hpp"
#include "hearthray/version.hpp"
#include "hearthray/vtu.hpp"
#include "output_folder.hpp"
#include "processes.hpp"

namespace hearthray::cli {

namespace {

namespace fs = std::filesystem;

// Up to this many patches the view factors are written densely (CSV and JSON); beyond, sparse
// and compressed as HDF5 (a dense 20k x 20k matrix would be 3 GB of text, and even the sparse
// Matrix Market text of 100k patches is gigabytes), or as Matrix Market text when asked.
constexpr std::size_t kDenseFactorFileLimit = 200;

// The height of the model's case: its extent along z, the vertical of the scene frame.
double model_height(const Scene& scene) {
  return scene.bounds.hi.z - scene.bounds.lo.z;
}

SolveReportInfo solve_info(const SceneFile& file, const FactorRun& run, const ThermalModel& model,
                           const std::vector<Warning>& warnings) {
  SolveReportInfo info;
  info.version = kVersion;
  info.scene = file.path;
  info.mesh = file.mesh_path;
  info.unit = to_string(file.mesh.unit);
  info.surfaces_from = file.mesh.surfaces_from == SurfacesFrom::groups ? "groups" : "materials";
  info.rays_per_patch = run.rays_per_patch;
  info.seed = run.seed;
  info.sampler = sampler_name(run.sampler);
  info.rays_total = run.diagnostics.emitted;
  if (!run.from_cache()) info.trace_seconds = run.stats.seconds;
  info.cache_file = run.cache_path;
  const FactorReportInfo factor_info = report_info(file, run);
  info.smoothing = factor_info.smoothing;
  info.smoothing_iterations = factor_info.smoothing_iterations;
  info.max_correction_sigma = run.factors.max_correction_sigma;
  const double emitted = double(std::max<std::uint64_t>(run.diagnostics.emitted, 1));
  info.escaped_fraction = double(run.diagnostics.escaped) / emitted;
  info.back_face_fraction = double(run.diagnostics.back_face_hits) / emitted;
  // The scene's and the rays' warnings: a cache that could not be used is no property of it.
  for (const Warning& w : warnings)
    if (w.kind != WarningKind::cache) info.warnings.push_back(w.text);
  info.notes = model.notes;
  info.target = factor_info.target;
  info.model_height_m = model_height(run.scene);
  info.notes.push_back(
      "report.json is in SI units (keys name them); the table, surfaces.csv and "
      "the pictures use --units");
  return info;
}

// Pictures of the temperature and the net radiative flux from the default view, each as PNG
// and as SVG; the net flux, a signed quantity, on the diverging colour map. Returns the files.
std::vector<std::string> write_solve_pictures(const SolveArgs& args, const SolvedScene& solved,
                                              const std::vector<PatchField>& fields,
                                              UnitSystem units, OutputFolder& out) {
  const FactorRun& run = solved.run;
  // The run's own tracer when it traced (the same default options: the same pictures), so
  // that its acceleration structures are not built twice.
  std::optional<Tracer> built;
  if (!run.tracer) built.emplace(run.scene);
  const Tracer& tracer = run.tracer ? *run.tracer : *built;
  const std::string scene_name = fs::path(solved.file.path).stem().string();
  const bool converged = solved.result.status == ExchangeStatus::converged;
  std::vector<std::string> files;
  for (const auto& [field_name, picture] :
       {std::pair<std::string, std::string>{"temperature", "temperature"},
        {"net radiative flux", "net_flux"}}) {
    for (const PatchField& field : fields) {
      if (field.name != field_name) continue;
      RenderOptions options;
      options.threads = args.rays.threads;
      options.title =
          solved_picture_title(field.name, shown_in(field, units).unit, scene_name, converged);
      options.diverging = field_name == "net radiative flux";
      const Picture drawn = render(run.scene, run.patches, tracer, shown_in(field, units), options);
      for (const char* extension : {".png", ".svg"}) {
        write_picture(out.file(picture + extension), drawn);
        files.push_back(picture + extension);
      }
    }
  }
  return files;
}

// The output folder of a solve: view factors, per-patch fields, pictures, the surface table and
// the report. The view-factor file (at 100k patches a compressed matrix of hundreds of millions
// of entries) depends only on the model, so a task of its own writes it from the moment the
// model is built, during the exchange solve and while the other files are made; every file has
// one writer, so the bytes do not depend on the threads.
class SolveOutputs {
 public:
  // Right after the model is built (`solved` stays where it is until finish()).
  SolveOutputs(const SolveArgs& args, const SolvedScene& solved)
      : out_(args.output_dir),
        arena_(args.rays.threads > 0 ? args.rays.threads : tbb::task_arena::automatic) {
    const ViewFactors& used = solved.model.factors;  // as the exchange uses them
    // Dense view-factor files for a few surfaces; for many patches only the sparse one.
    factor_files_ =
        used.size() <= kDenseFactorFileLimit
            ? std::vector<std::string>{"view_factors.csv", "view_factors.json"}
            : std::vector<std::string>{args.matrix_text ? "view_factors.mtx" : "view_factors.h5"};
    std::vector<std::string> paths;
    for (const std::string& name : factor_files_) paths.push_back(out_.file(name));
    // Read here: the exchange may change the scene file's state (the solved room air).
    const FactorReportInfo info = report_info(solved.file, solved.run);
    arena_.execute([&] {
      writer_.run([paths, info, &used, &solved] {
        for (const std::string& path : paths)
          write_factors_file(path, used, info, &solved.run.scene, &solved.run.patches);
      });
    });
  }
  // An unfinished run (an error, a refusal): the writer refers to the caller's scene, so it
  // ends first; the error already on its way is the one told, and the folder is not made.
  ~SolveOutputs() { wait_quietly(); }
  SolveOutputs(const SolveOutputs&) = delete;
  SolveOutputs& operator=(const SolveOutputs&) = delete;

  // After the exchange solve: the other files, then the report, then the folder is swapped in.
  void finish(const SolveArgs& args, const SolvedScene& solved, UnitSystem units) {
    const FactorRun& run = solved.run;
    const ThermalModel& model = solved.model;
    const ExchangeResult& result = solved.result;
    SolveReportInfo info = solve_info(solved.file, run, model, solved.warnings);
    const std::vector<PatchField> fields = solve_fields(model, result);
    // The per-patch files and the surface table are written by a task while the pictures are
    // drawn (each file has one writer; the paths are taken here, in a fixed order).
    const std::string vtu = out_.file("patches.vtu"), patches = out_.file("patches.csv"),
                      surfaces = out_.file("surfaces.csv"), target = out_.target();
    arena_.execute([&] {
      writer_.run([&] {
        write_vtu(vtu, run.scene, run.patches, fields,
                  {{"converged", result.status == ExchangeStatus::converged ? 1 : 0}});
        write_patches_csv_file(patches, run.scene, run.patches);
        std::ofstream csv = open_output(surfaces);
        write_surfaces_csv(csv, model, result, units);
        csv.close();
        if (!csv) throw InputError("cannot write '" + target + "/surfaces.csv'");
      });
    });
    info.files = {"surfaces.csv", "patches.vtu", "patches.csv"};
    std::vector<std::string> pictures;
    try {
      pictures = write_solve_pictures(args, solved, fields, units, out_);
    } catch (...) {
      wait_quietly();  // the task reads this function's locals
      throw;
    }
    info.files.insert(info.files.end(), pictures.begin(), pictures.end());
    info.files.insert(info.files.end(), factor_files_.begin(), factor_files_.end());
    waited_ = true;
    arena_.execute([&] { writer_.wait(); });  // rethrows a writer's error
    commit_with_report(
        out_, [&](std::ostream& report) { write_solve_json(report, info, model, result); },
        info.files, args.rays.quiet);
  }

 private:
  // Lets the writing tasks end, their errors dropped (one already on its way is the one told).
  void wait_quietly() {
    if (waited_) return;
    waited_ = true;
    arena_.execute([&] {
      try {
        writer_.wait();
      } catch (...) {
      }
    });
  }

  OutputFolder out_;
  tbb::task_arena arena_;
  tbb::task_group writer_;
  std::vector<std::string> factor_files_;
  bool waited_ = false;
};

// The solved room air ([room_air]): its temperature and what flows through it (SI).
void print_room_air(std::ostream& out, const RoomAirResult& a) {
  out << "\nroom air: " << rounded("%.2f C", a.air_K - kZeroCelsius) << " (solved"
      << (a.converged ? "" : ", NOT CONVERGED") << ", " << a.iterations
      << " exchange solves): convection from the surfaces " << rounded("%.1f W", a.convection_W)
      << " + gains " << rounded("%.1f W", a.gains_W) << " = ventilation "
      << rounded("%.1f W", a.ventilation_W) << " (" << rounded("%.3g m3/h", a.flow_m3_s * 3600)
      << (a.volume_m3 > 0 ? " of a " + rounded("%.3g m3", a.volume_m3) + " room" : "")
      << "), residual " << rounded("%.2g W", a.residual_W) << "\n";
}

}  // namespace

int run_solve_command(const SolveArgs& args) {
  if (!args.output_dir.empty()) check_output_folder(args.output_dir);  // before the work
  // A scene with a radiating gas goes through the zone method instead (cmd_solve_gas.cpp).
  // Its tracing is not split over processes: under mpirun, process 0 runs it alone.
  if (const SceneFile file = open_scene(args.input); file.gas) {
    set_command_splits(false);
    return is_helper_process() ? 0 : run_gas_solve(args, file);
  }
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  const UnitSystem units = parse_unit_system(args.units);  // before the work: a typo stops it
  SolvedScene solved;
  std::optional<SolveOutputs> outputs;  // started once the model is built
  const auto start_outputs = [&](const SolvedScene& s) {
    if (!args.output_dir.empty()) outputs.emplace(args, s);
  };
  if (const int status =
          solve_scene_printing(args.input, args.rays, cache, false, &solved, true, start_outputs))
    return status;
  const SceneFile& file = solved.file;
  const FactorRun& run = solved.run;
  const ThermalModel& model = solved.model;
  const ExchangeResult& result = solved.result;

  if (!args.rays.quiet) {
    std::cout << "hearthray solve " << file.path << "\n";
    std::cout << cache_log_line(run) << "\n";
    if (run.target.used) std::cout << target_line(run) << "\n";
    std::cout << smoothing_line(run) << "\n\n";
  }
  if (!args.rays.quiet || args.output_dir.empty()) {
    print_solve_table(std::cout, surface_heat(model, result), heat_balance(model, result), result,
                      outer_cases(model, result, model_height(run.scene)), units);
    if (solved.room_air) print_room_air(std::cout, *solved.room_air);
  }

  if (outputs) outputs->finish(args, solved, units);

  const int target = target_status(run);  // the warning, also when the solve failed
  if (result.status != ExchangeStatus::converged) {
    std::cerr << "error: the exchange solve did not converge (" << to_string(result.status)
              << " after " << result.iterations << " iterations): " << result.message << "\n";
    return kExitNotConverged;
  }
  return target;
}

}  // namespace hearthray::cli
