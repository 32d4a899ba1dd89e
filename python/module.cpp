// The Python module `hearthray` (pybind11): the library's pipeline for a scene file, with the
// view factors as a scipy sparse matrix beside the patch geometry, and a solve's tables as
// numpy arrays. Every result is a plain dict; README "Python" lists the keys.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <cstdint>
#include <cstdio>
#include <optional>
#include <string>
#include <variant>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/patch_geometry.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/version.hpp"
#include "hearthray/vtu.hpp"

namespace py = pybind11;
using namespace hearthray;

namespace {

template <class T>
py::array_t<T> array(const std::vector<T>& values, std::size_t columns = 1) {
  if (columns == 1) return py::array_t<T>(py::ssize_t(values.size()), values.data());
  return py::array_t<T>({py::ssize_t(values.size() / columns), py::ssize_t(columns)},
                        values.data());
}

// The ray budget's options: `rays` the rays per patch (the first round's with a target);
// `target_error` a float (absolute on the view factors) or a string as on the command line
// ("0.001", "0.5 %": relative on the heat flows); `max_rays` and `time_limit` ("10 min") cap the
// rounds.
struct RayChoice {
  std::optional<std::uint64_t> rays, seed;
  std::optional<std::variant<double, std::string>> target_error;
  std::optional<std::uint64_t> max_rays;
  std::optional<std::string> time_limit;
};

PipelineOptions options_from(const RayChoice& rays, int threads, bool raw, bool cache,
                             const std::string& cache_dir) {
  PipelineOptions options;
  options.rays_per_patch = rays.rays;
  options.seed = rays.seed;
  if (rays.target_error) {
    // A float goes through the same parser as the text, so both are checked alike.
    const auto* text = std::get_if<std::string>(&*rays.target_error);
    char number[32];
    if (!text) std::snprintf(number, sizeof number, "%.17g", std::get<double>(*rays.target_error));
    const TargetError target = parse_target_error(text ? *text : number, "target_error");
    options.target_error = target.value;
    options.target_on_heat_flows = target.heat_flows;
  }
  options.max_rays_per_patch = rays.max_rays;
  if (rays.time_limit) options.time_limit_s = parse_time_limit(*rays.time_limit, "time_limit");
  options.threads = threads;
  options.smooth = !raw;
  options.use_cache = cache;
  options.cache_dir = cache_dir;
  return options;
}

// How the rounds of a ray target ended; None without a target.
py::object target_dict(const RayTarget& target) {
  if (!target.used) return py::none();
  py::dict out;
  out["reached"] = target.reached();
  out["stop"] = to_string(target.stop);
  out["on_heat_flows"] = target.heat_flows;
  out["error"] = target.error;
  out["achieved"] = target.achieved;
  out["round_rays"] = target.round_rays;
  out["round_errors"] = target.round_errors;
  out["rays_all_rounds"] = target.rays_all_rounds;
  return std::move(out);
}

// F (N x N+1, the surroundings last) and its standard errors as scipy CSR matrices.
py::dict matrices(const ViewFactors& vf) {
  const std::size_t n = vf.size();
  std::vector<double> data, errors;
  std::vector<std::int64_t> indices, indptr{0};
  data.reserve(std::size_t(vf.F.nonZeros()) + n);
  for (std::size_t i = 0; i < n; ++i) {
    auto add = [&](std::int64_t column, double f) {
      data.push_back(f);
      errors.push_back(vf.standard_error(i, f));
      indices.push_back(column);
    };
    for (SparseMatrix::InnerIterator it(vf.F, Eigen::Index(i)); it; ++it) add(it.col(), it.value());
    if (vf.to_surroundings[i] != 0) add(std::int64_t(n), vf.to_surroundings[i]);
    indptr.push_back(std::int64_t(data.size()));
  }
  const py::object csr = py::module_::import("scipy.sparse").attr("csr_matrix");
  const py::tuple shape = py::make_tuple(n, n + 1);
  py::dict out;
  out["F"] =
      csr(py::make_tuple(array(data), array(indices), array(indptr)), py::arg("shape") = shape);
  out["standard_error"] =
      csr(py::make_tuple(array(errors), array(indices), array(indptr)), py::arg("shape") = shape);
  return out;
}

// What row i is: the patch table's columns, and the mesh triangles of each patch.
py::dict patch_table(const ViewFactors& vf, const Scene& scene, const PatchSet& patches) {
  const PatchGeometry g = patch_geometry(scene, patches);
  std::vector<std::string> surface;
  std::vector<std::int32_t> surface_index;
  std::vector<std::string> side;
  std::vector<double> centroid, normal;
  for (std::size_t p = 0; p < patches.size(); ++p) {
    surface.push_back(scene.surfaces[patches.patches[p].surface].name);
    surface_index.push_back(std::int32_t(patches.patches[p].surface));
    side.push_back(patches.patches[p].side == Side::back ? "back" : "front");
    centroid.insert(centroid.end(), {g.centroid[p].x, g.centroid[p].y, g.centroid[p].z});
    normal.insert(normal.end(), {g.normal[p].x, g.normal[p].y, g.normal[p].z});
  }
  std::vector<std::int64_t> triangles;
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const bool back = patches.patches[p].side == Side::back;
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
      const Triangle& t = scene.triangles[patches.triangle_index[k]];
      triangles.insert(triangles.end(), {t.v[0], back ? t.v[2] : t.v[1], back ? t.v[1] : t.v[2]});
    }
  }
  std::vector<double> vertices;
  for (const Vec3& v : scene.vertices) vertices.insert(vertices.end(), {v.x, v.y, v.z});
  py::dict table;
  table["name"] = vf.names;
  table["surface"] = surface;
  table["surface_index"] = array(surface_index);
  table["side"] = side;
  table["area_m2"] = array(vf.areas);
  table["centroid_m"] = array(centroid, 3);
  table["normal"] = array(normal, 3);
  table["rays"] = array(vf.rays);
  table["triangle_offset"] = array(
      std::vector<std::int64_t>(patches.triangle_offset.begin(), patches.triangle_offset.end()));
  py::dict mesh;
  mesh["vertices_m"] = array(vertices, 3);
  mesh["triangles"] = array(triangles, 3);
  py::dict out;
  out["patches"] = table;
  out["mesh"] = mesh;
  return out;
}

py::dict factor_dict(const ViewFactors& vf, const FactorRun& run) {
  py::dict out = matrices(vf);
  out["names"] = vf.names;
  out["areas"] = array(vf.areas);
  const py::dict geometry = patch_table(vf, run.scene, run.patches);
  out["patches"] = geometry["patches"];
  out["mesh"] = geometry["mesh"];
  out["surfaces"] = run.scene.surface_names();
  out["smoothed"] = vf.smoothed;
  out["seed"] = run.seed;
  out["from_cache"] = run.from_cache();
  std::vector<std::string> warnings;
  for (const Warning& w : run.warnings) warnings.push_back(w.text);
  out["warnings"] = warnings;
  out["target"] = target_dict(run.target);
  return out;
}

py::dict view_factors(const std::string& scene, const RayChoice& rays, int threads, bool raw,
                      bool cache, const std::string& cache_dir) {
  const PipelineOptions options = options_from(rays, threads, raw, cache, cache_dir);
  FactorRun run;
  {
    py::gil_scoped_release unlocked;
    const SceneFile file = open_scene(scene);
    run = run_view_factors(file, load_scene(file), options);
  }
  return factor_dict(run.factors, run);
}

py::dict surface_table(const std::vector<SurfaceHeat>& surfaces) {
  std::vector<std::string> name;
  std::vector<double> columns[12];
  for (const SurfaceHeat& s : surfaces) {
    name.push_back(s.name);
    const double values[12] = {s.area_m2,           s.emissivity,        s.temperature_K,
                               s.temperature_min_K, s.temperature_max_K, s.radiosity_W_m2,
                               s.irradiation_W_m2,  s.net_flux_W_m2,     s.net_W,
                               s.convection_W,      s.wall_loss_W,       s.heat_input_W};
    for (int k = 0; k < 12; ++k) columns[k].push_back(values[k]);
  }
  static const char* keys[12] = {"area_m2",           "emissivity",        "temperature_K",
                                 "temperature_min_K", "temperature_max_K", "radiosity_W_m2",
                                 "irradiation_W_m2",  "net_flux_W_m2",     "net_W",
                                 "convection_W",      "wall_loss_W",       "heat_input_W"};
  py::dict table;
  table["name"] = name;
  for (int k = 0; k < 12; ++k) table[keys[k]] = array(columns[k]);
  return table;
}

py::dict solve(const std::string& scene, const RayChoice& rays, int threads, bool cache,
               const std::string& cache_dir) {
  const PipelineOptions options = options_from(rays, threads, false, cache, cache_dir);
  SolvedScene solved;
  {
    py::gil_scoped_release unlocked;
    solved = solve_scene(scene, options);
  }
  const ExchangeResult& result = solved.result;
  py::dict out;
  out["status"] = to_string(result.status);
  out["converged"] = result.status == ExchangeStatus::converged;
  out["iterations"] = result.iterations;
  out["message"] = result.message;
  out["surfaces"] = surface_table(surface_heat(solved.model, result));
  const HeatBalance balance = heat_balance(result);
  out["balance"] = py::dict(py::arg("heat_input_W") = balance.heat_input_W,
                            py::arg("convection_W") = balance.convection_W,
                            py::arg("wall_loss_W") = balance.wall_loss_W,
                            py::arg("to_surroundings_W") = balance.to_surroundings_W,
                            py::arg("residual_W") = balance.residual_W);
  py::dict patches;
  patches["name"] = solved.model.factors.names;
  for (const PatchField& field : solve_fields(solved.model, result))
    patches[py::str(vtu_array_name(field))] = array(field.values);
  out["patches"] = patches;
  out["factors"] = factor_dict(solved.model.factors, solved.run);
  std::vector<std::string> notes = solved.notes;
  out["notes"] = notes;
  return out;
}

}  // namespace

PYBIND11_MODULE(hearthray, m) {
  m.doc() =
      "hearthray: Monte Carlo view factors and gray-body radiant exchange of a scene file. "
      "Results are engineering estimates; furnace, kiln and heater design follows local codes, "
      "the maker's instructions and licensed practice.";
  m.attr("__version__") = kVersion;
  py::register_exception<InputError>(m, "InputError", PyExc_ValueError);
  // Keyword arguments of the ray budget, shared by both functions.
  auto ray_choice = [](std::optional<std::uint64_t> rays, std::optional<std::uint64_t> seed,
                       std::optional<std::variant<double, std::string>> target_error,
                       std::optional<std::uint64_t> max_rays,
                       std::optional<std::string> time_limit) {
    return RayChoice{rays, seed, std::move(target_error), max_rays, std::move(time_limit)};
  };
  m.def(
      "view_factors",
      [ray_choice](const std::string& scene, std::optional<std::uint64_t> rays,
                   std::optional<std::uint64_t> seed,
                   std::optional<std::variant<double, std::string>> target_error,
                   std::optional<std::uint64_t> max_rays, std::optional<std::string> time_limit,
                   int threads, bool raw, bool cache, const std::string& cache_dir) {
        return view_factors(scene, ray_choice(rays, seed, target_error, max_rays, time_limit),
                            threads, raw, cache, cache_dir);
      },
      py::arg("scene"), py::arg("rays") = py::none(), py::arg("seed") = py::none(),
      py::arg("target_error") = py::none(), py::arg("max_rays") = py::none(),
      py::arg("time_limit") = py::none(), py::arg("threads") = 0, py::arg("raw") = false,
      py::arg("cache") = true, py::arg("cache_dir") = "",
      "View factors of a scene file (.toml) or mesh (.obj): a dict with F (scipy CSR, "
      "N x N+1, row i = patch i, the last column the surroundings), standard_error, names, "
      "areas, patches (name, surface, side, area_m2, centroid_m, normal, rays, "
      "triangle_offset into mesh['triangles']), mesh (vertices_m, triangles) and target (how "
      "the rounds of target_error ended; None without one). target_error: a float, the "
      "largest standard error wanted on any factor; max_rays, time_limit ('10 min') cap it.");
  m.def(
      "solve",
      [ray_choice](const std::string& scene, std::optional<std::uint64_t> rays,
                   std::optional<std::uint64_t> seed,
                   std::optional<std::variant<double, std::string>> target_error,
                   std::optional<std::uint64_t> max_rays, std::optional<std::string> time_limit,
                   int threads, bool cache, const std::string& cache_dir) {
        return solve(scene, ray_choice(rays, seed, target_error, max_rays, time_limit), threads,
                     cache, cache_dir);
      },
      py::arg("scene"), py::arg("rays") = py::none(), py::arg("seed") = py::none(),
      py::arg("target_error") = py::none(), py::arg("max_rays") = py::none(),
      py::arg("time_limit") = py::none(), py::arg("threads") = 0, py::arg("cache") = true,
      py::arg("cache_dir") = "",
      "Radiant exchange of a scene file: a dict with status, converged, surfaces (one numpy "
      "array per column), patches (per-patch fields), balance, notes and factors (as "
      "view_factors returns them, with target). target_error: a float (absolute on the view "
      "factors) or a string, '0.5 %' for an error relative on the surfaces' heat flows.");
}
