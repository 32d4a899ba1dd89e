// The Python module `hearthray` (pybind11): the library's pipeline for a scene file, with the
// view factors as a scipy sparse matrix beside the patch geometry, and a solve's tables as
// numpy arrays. Every result is a plain dict; README "Python" lists the keys.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/patch_geometry.hpp"
#include "hearthray/pipeline.hpp"
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

PipelineOptions options_from(std::optional<std::uint64_t> rays, std::optional<std::uint64_t> seed,
                             int threads, bool raw, bool cache, const std::string& cache_dir) {
  PipelineOptions options;
  options.rays_per_patch = rays;
  options.seed = seed;
  options.threads = threads;
  options.smooth = !raw;
  options.use_cache = cache;
  options.cache_dir = cache_dir;
  return options;
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
  return out;
}

py::dict view_factors(const std::string& scene, std::optional<std::uint64_t> rays,
                      std::optional<std::uint64_t> seed, int threads, bool raw, bool cache,
                      const std::string& cache_dir) {
  const PipelineOptions options = options_from(rays, seed, threads, raw, cache, cache_dir);
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

py::dict solve(const std::string& scene, std::optional<std::uint64_t> rays,
               std::optional<std::uint64_t> seed, int threads, bool cache,
               const std::string& cache_dir) {
  const PipelineOptions options = options_from(rays, seed, threads, false, cache, cache_dir);
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
  m.def("view_factors", &view_factors, py::arg("scene"), py::arg("rays") = py::none(),
        py::arg("seed") = py::none(), py::arg("threads") = 0, py::arg("raw") = false,
        py::arg("cache") = true, py::arg("cache_dir") = "",
        "View factors of a scene file (.toml) or mesh (.obj): a dict with F (scipy CSR, "
        "N x N+1, row i = patch i, the last column the surroundings), standard_error, names, "
        "areas, patches (name, surface, side, area_m2, centroid_m, normal, rays, "
        "triangle_offset into mesh['triangles']) and mesh (vertices_m, triangles).");
  m.def("solve", &solve, py::arg("scene"), py::arg("rays") = py::none(),
        py::arg("seed") = py::none(), py::arg("threads") = 0, py::arg("cache") = true,
        py::arg("cache_dir") = "",
        "Radiant exchange of a scene file: a dict with status, converged, surfaces (one numpy "
        "array per column), patches (per-patch fields), balance, notes and factors (as "
        "view_factors returns them).");
}
