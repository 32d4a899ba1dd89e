// The exchange problem of a scene: nodes from surfaces, faces from patches, leaks folded back,
// open scenes checked for a surroundings temperature before anything is solved.
#include "hearthray/thermal_model.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <stdexcept>
#include <vector>

#include "core/shift_right.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/patch_geometry.hpp"

namespace hearthray {
namespace {

// Share of each face's radiation that leaves the enclosure: escaped, or absorbed on the back
// of a one-sided surface (the exchange sends both to the surroundings).
double lost(const ViewFactors& vf, std::size_t i) {
  return (vf.to_surroundings.empty() ? 0.0 : vf.to_surroundings[i]) +
         (vf.to_back_faces.empty() ? 0.0 : vf.to_back_faces[i]);
}

// Leaks returned to the face that emitted them: S_ii += A_i F_i,lost. Symmetric, row sums
// unchanged (see the header).
void fold_leaks(ViewFactors* vf) {
  // In place, O(non-zeros): rows that lose rays and have no diagonal entry get one, the rows
  // after them shifted right in the same arrays. The smoothing leaves capacity for these
  // entries, so at 100k patches no second copy of F (gigabytes) is made; otherwise the arrays
  // grow once.
  using Index = SparseMatrix::StorageIndex;
  const std::size_t n = vf->size();
  SparseMatrix& F = vf->F;
  F.makeCompressed();
  std::vector<char> insert(n, 0);
  std::size_t shift = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const auto row = Eigen::Index(i);
    const Index* first = F.innerIndexPtr() + F.outerIndexPtr()[row];
    const Index* last = F.innerIndexPtr() + F.outerIndexPtr()[row + 1];
    const bool diagonal = std::binary_search(first, last, Index(i));
    insert[i] = lost(*vf, i) > 0 && !diagonal ? 1 : 0;
    shift += std::size_t(insert[i]);
  }
  if (shift > 0) {
    F.data().resize(F.data().size() + Eigen::Index(shift));  // grows only past the capacity
    Index* outer = F.outerIndexPtr();
    Index* column = F.innerIndexPtr();
    double* value = F.valuePtr();
    // Last row first: a row only moves right, into places already read. Rows between two
    // that take an entry move by the same shift, so they move together (shift_right: in
    // parallel when long; at 98,592 patches nearly all of F moves, 1.9 GB).
    auto move = [&](Index from, Index to, std::size_t by) {
      shift_right(column, std::size_t(from), std::size_t(to), by);
      shift_right(value, std::size_t(from), std::size_t(to), by);
    };
    Index end = outer[n];
    Index run_end = end;  // rows [end, run_end) are still to move by `shift`
    for (std::size_t i = n; i-- > 0;) {
      const Index begin = outer[i];
      outer[i + 1] = end + Index(shift);
      if (insert[i]) {
        move(end, run_end, shift);
        const Index split =
            Index(std::lower_bound(column + begin, column + end, Index(i)) - column);
        move(split, end, shift);
        --shift;
        move(begin, split, shift);
        column[split + Index(shift)] = Index(i);
        value[split + Index(shift)] = 0;
        run_end = begin;
      }
      end = begin;
    }
    move(end, run_end, shift);  // rows before the first that took an entry: shift 0
  }
  for (std::size_t i = 0; i < n; ++i) {
    const double share = lost(*vf, i);
    if (share > 0) F.coeffRef(Eigen::Index(i), Eigen::Index(i)) += share;
  }
  vf->to_surroundings.assign(n, 0.0);
  vf->to_back_faces.assign(n, 0.0);
}

// The surfaces that send radiation out of the scene, worst first, as "'door' 35 %, ...".
std::string leaving_list(const ThermalModel& m, std::size_t* count) {
  std::vector<double> area(m.nodes.size(), 0.0), out(m.nodes.size(), 0.0);
  for (std::size_t f = 0; f < m.faces.size(); ++f) {
    area[m.faces[f].node] += m.factors.areas[f];
    out[m.faces[f].node] += m.factors.areas[f] * lost(m.factors, f);
  }
  std::vector<std::pair<double, std::size_t>> shares;
  for (std::size_t k = 0; k < m.nodes.size(); ++k) {
    if (out[k] > 0) shares.emplace_back(out[k] / area[k], k);
  }
  std::sort(shares.begin(), shares.end(), [](const auto& a, const auto& b) {
    return a.first > b.first || (a.first == b.first && a.second < b.second);
  });
  *count = shares.size();
  std::vector<std::string> items;
  for (const auto& [share, k] : shares)
    items.push_back("'" + m.nodes[k].name + "' " + percent(share));
  return join_at_most(items, 5);
}

}  // namespace

bool ThermalModelOptions::IsValid(std::string* error) const {
  if (std::isfinite(leak_limit) && leak_limit >= 0 && leak_limit < 1) return true;
  if (error != nullptr) {
    *error = "leak_limit is " + std::to_string(leak_limit) + "; it must be in [0, 1)";
  }
  return false;
}

ExchangeProblem ThermalModel::problem() const {
  ExchangeProblem p;
  p.nodes = nodes;
  p.faces = faces;
  p.view_factors = &factors;
  p.surroundings_K = surroundings_K;
  p.face_centres = face_centres;
  return p;
}

namespace {

// One node per (surface, piece), the front and back faces of a piece sharing it; a power is
// spread over its surface as a uniform flux, each piece taking its area's share.
void add_nodes_and_faces(ThermalModel& m, const std::vector<SurfaceThermal>& thermal,
                         const Scene& scene, const PatchSet& patches) {
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s) {
    m.surface_names.push_back(scene.surfaces[s].name);
    m.surface_conditions.push_back(thermal[s].condition);
    m.two_sided.push_back(scene.surfaces[s].two_sided);
    m.emissivity.push_back(thermal[s].emissivity);
  }
  std::vector<std::vector<std::uint32_t>> node_of(scene.surfaces.size());
  std::vector<std::uint32_t> pieces(scene.surfaces.size(), 0);
  for (const Patch& patch : patches.patches)
    pieces[patch.surface] = std::max(pieces[patch.surface], patch.piece + 1);
  std::vector<double> piece_area, surface_area(scene.surfaces.size(), 0.0);
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const Patch& patch = patches.patches[p];
    auto& nodes = node_of[patch.surface];
    if (nodes.size() <= patch.piece) nodes.resize(patch.piece + 1, PatchSet::kNoPatch);
    if (nodes[patch.piece] == PatchSet::kNoPatch) {
      nodes[patch.piece] = static_cast<std::uint32_t>(m.nodes.size());
      std::string name = scene.surfaces[patch.surface].name;
      if (pieces[patch.surface] > 1) name += "#" + std::to_string(patch.piece + 1);
      m.nodes.push_back({name, thermal[patch.surface].condition});
      m.node_surface.push_back(patch.surface);
      piece_area.push_back(0.0);
    }
    const std::uint32_t node = nodes[patch.piece];
    m.faces.push_back({node, thermal[patch.surface].emissivity});
    m.face_side.push_back(patch.side);
    if (patch.side == Side::front) {
      piece_area[node] += m.factors.areas[p];
      surface_area[patch.surface] += m.factors.areas[p];
    }
  }
  for (std::size_t k = 0; k < m.nodes.size(); ++k) {
    NodeCondition& c = m.nodes[k].condition;
    const double whole = surface_area[m.node_surface[k]];
    if (c.kind == ConditionKind::power && whole > 0) c.value *= piece_area[k] / whole;
  }
}

// Share of all rays lost, weighted by rays emitted (by area for factors without rays).
double lost_fraction(const ViewFactors& vf) {
  double weight = 0, lost_weight = 0;
  for (std::size_t f = 0; f < vf.size(); ++f) {
    const bool by_rays = f < vf.rays.size() && vf.rays[f] > 0;
    const double w = by_rays ? double(vf.rays[f]) : vf.areas[f];
    weight += w;
    lost_weight += w * lost(vf, f);
  }
  return weight > 0 ? lost_weight / weight : 0.0;
}

// Radiation that leaves: folded back as leaks in a closed mesh, refused without a surroundings
// temperature, noted when a surroundings temperature plays no part.
void settle_losses(ThermalModel& m, const ThermalInput& input, const Scene& scene,
                   const ThermalModelOptions& options) {
  if (m.mesh_closed && m.lost_fraction > 0 && m.lost_fraction < options.leak_limit) {
    fold_leaks(&m.factors);
    m.leaks_folded = true;
    m.notes.push_back("the mesh is closed, and " + rounded("%.2g", m.lost_fraction) +
                      " of all rays left it or were absorbed on back faces: taken for leaks "
                      "through shared edges and returned to the faces that sent them, not "
                      "sent to the surroundings");
  }

  std::size_t leaving = 0;
  const std::string list = leaving_list(m, &leaving);
  if (leaving > 0 && !m.surroundings_K) {
    const std::string fix = "add\n  [surroundings]\n  temperature = \"20 C\"\nto " + input.source +
                            " (the temperature of what the openings see)";
    if (m.mesh_closed) {
      throw InputError("the mesh '" + scene.source + "' is closed, yet " +
                       percent(m.lost_fraction) +
                       " of all rays left it or were absorbed on back faces (by surface: " + list +
                       "): too many for leaks through shared edges. Fix the mesh first: look for "
                       "surfaces whose normals point out of the enclosure, solids exported "
                       "touching (faces lying on each other) and gaps (hearthray check shows "
                       "where); only if radiation really leaves, " +
                       fix);
    }
    bool back_faces = false;
    for (double b : m.factors.to_back_faces) back_faces = back_faces || b > 0;
    throw InputError(
        "the scene is open: radiation leaves it from " + std::to_string(leaving) +
        " surface(s) (share of each one's radiation: " + list + "; " + percent(m.lost_fraction) +
        " of all rays" +
        (back_faces ? ", counting rays absorbed on the back of one-sided surfaces" : "") +
        "), but no surroundings temperature is given. " +
        (back_faces ? "First fix the normals of surfaces hit on their back, and faces of "
                      "solids exported touching (hearthray check shows where); then, if "
                      "radiation really leaves, "
                    : "If radiation really leaves, ") +
        fix + "; otherwise close the geometry");
  }
  if (leaving == 0 && m.surroundings_K) {
    m.notes.push_back(
        "no radiation leaves the scene: the [surroundings] temperature plays no "
        "part");
  }
}

}  // namespace

ThermalModel build_thermal_model(const ThermalInput& input, const Scene& scene,
                                 const PatchSet& patches, ViewFactors factors,
                                 const ThermalModelOptions& options) {
  std::string error;
  if (!options.IsValid(&error)) throw InputError("thermal model options: " + error);
  if (input.surfaces.size() != scene.surfaces.size()) {
    throw std::invalid_argument("build_thermal_model: " + std::to_string(input.surfaces.size()) +
                                " thermal surfaces for a scene of " +
                                std::to_string(scene.surfaces.size()));
  }
  if (factors.size() != patches.size() || factors.areas.size() != patches.size()) {
    throw InputError("the view factors have " + std::to_string(factors.size()) +
                     " rows but the scene has " + std::to_string(patches.size()) +
                     " patches: compute them for this scene");
  }
  ThermalModel m;
  m.factors = std::move(factors);
  m.surroundings_K = input.surroundings_K;
  add_nodes_and_faces(m, input.surfaces, scene, patches);
  m.face_centres = patch_geometry(scene, patches).centroid;
  // Only the one-sided surfaces can close an enclosure: the back of a two-sided sheet that is
  // part of the outer boundary looks out of it, and what it sends there is no leak.
  m.mesh_closed = analyse_topology(scene).one_sided_closed;
  m.lost_fraction = lost_fraction(m.factors);
  settle_losses(m, input, scene, options);
  return m;
}

std::vector<SurfaceHeat> surface_heat(const ThermalModel& model, const ExchangeResult& result) {
  const std::size_t n_surfaces = model.two_sided.size();
  std::vector<SurfaceHeat> out(n_surfaces);
  for (std::size_t s = 0; s < n_surfaces; ++s) {
    out[s].name = model.surface_names[s];
    out[s].two_sided = model.two_sided[s];
    out[s].emissivity = model.emissivity[s];
    out[s].pieces = 0;
    out[s].temperature_min_K = INFINITY;
    out[s].temperature_max_K = -INFINITY;
  }
  std::vector<double> node_area(model.nodes.size(), 0.0);
  for (std::size_t f = 0; f < model.faces.size() && f < result.faces.size(); ++f) {
    const std::uint32_t node = model.faces[f].node;
    SurfaceHeat& s = out[model.node_surface[node]];
    const double area = model.factors.areas[f];
    s.faces.push_back(f);
    s.area_m2 += area;
    node_area[node] += area;
    s.radiosity_W_m2 += area * result.faces[f].radiosity;
    s.irradiation_W_m2 += area * result.faces[f].irradiation;
  }
  for (std::size_t k = 0; k < model.nodes.size() && k < result.nodes.size(); ++k) {
    SurfaceHeat& s = out[model.node_surface[k]];
    const NodeResult& n = result.nodes[k];
    s.nodes.push_back(k);
    ++s.pieces;
    s.temperature_K += node_area[k] * n.temperature_K;
    s.temperature_min_K = std::min(s.temperature_min_K, n.temperature_K);
    s.temperature_max_K = std::max(s.temperature_max_K, n.temperature_K);
    s.net_W += n.net_radiation_W;
    s.convection_W += n.convection_W;
    s.wall_loss_W += n.wall_loss_W;
    s.heat_input_W += n.heat_input_W;
  }
  for (SurfaceHeat& s : out) {
    if (s.area_m2 > 0) {
      s.radiosity_W_m2 /= s.area_m2;
      s.irradiation_W_m2 /= s.area_m2;
      s.net_flux_W_m2 = s.net_W / s.area_m2;
      s.temperature_K /= s.area_m2;
    }
  }
  return out;
}

HeatBalance heat_balance(const ExchangeResult& result) {
  HeatBalance b;
  double net = 0;
  for (const NodeResult& n : result.nodes) {
    b.heat_input_W += n.heat_input_W;
    (n.heat_input_W > 0 ? b.gross_input_W : b.taken_out_W) += std::abs(n.heat_input_W);
    b.convection_W += n.convection_W;
    b.wall_loss_W += n.wall_loss_W;
    net += n.net_radiation_W;
    b.largest_W = std::max({b.largest_W, std::abs(n.net_radiation_W), std::abs(n.convection_W),
                            std::abs(n.wall_loss_W), std::abs(n.heat_input_W)});
  }
  b.to_surroundings_W = result.surroundings_W;
  b.largest_W = std::max(b.largest_W, std::abs(b.to_surroundings_W));
  // heat_input - convection - wall_loss is the net radiation of all surfaces; what the
  // surroundings do not take of it is the residual.
  b.residual_W = net - b.to_surroundings_W;
  return b;
}

HeatBalance heat_balance(const ThermalModel& model, const ExchangeResult& result) {
  HeatBalance b = heat_balance(result);
  std::vector<char> source(model.surface_names.size(), 0), sink(model.surface_names.size(), 0);
  for (std::size_t k = 0; k < result.nodes.size() && k < model.node_surface.size(); ++k) {
    const double q = result.nodes[k].heat_input_W;
    // Round-off of a balanced reradiating piece is neither.
    if (std::abs(q) <= 1e-9 * b.largest_W) continue;
    (q > 0 ? source : sink)[model.node_surface[k]] = 1;
  }
  for (std::size_t s = 0; s < model.surface_names.size(); ++s) {
    if (source[s]) b.sources.push_back(model.surface_names[s]);
    if (sink[s]) b.sinks.push_back(model.surface_names[s]);
  }
  return b;
}

}  // namespace hearthray
