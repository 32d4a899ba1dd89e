#include "transient/firing_system.hpp"

#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

namespace hearthray::transient {
namespace {

const SurfaceMass* mass_of(const FiringInput& input, const std::string& surface) {
  for (const auto& [name, mass] : input.surfaces)
    if (name == surface) return &mass;
  return nullptr;
}

std::size_t surface_index(const ThermalModel& model, const std::string& name,
                          const std::string& what) {
  const auto& names = model.surface_names;
  const auto it = std::find(names.begin(), names.end(), name);
  if (it == names.end())
    throw InputError(what + " names surface '" + name +
                     "', which the scene does not have; it has " + join_at_most(names, 12));
  return std::size_t(it - names.begin());
}

// Cells of `layers` behind unknown `face` (a node, or the previous layer's last cell), each
// layer cut into `cells` finite volumes; returns the last cell.
std::size_t add_layers(FiringSystem& s, std::size_t face, double area,
                       const std::vector<WallLayer>& layers, int cells, Store store) {
  std::size_t previous = face;
  for (const WallLayer& layer : layers) {
    const double dx = layer.thickness / cells;
    for (int c = 0; c < cells; ++c) {
      Unknown u;
      u.capacity = layer.density * layer.specific_heat * area * dx;
      u.layer = &layer;
      u.dx = dx;
      u.store = store;
      s.unknowns.push_back(u);
      s.links.push_back({previous, s.unknowns.size() - 1, area});
      previous = s.unknowns.size() - 1;
    }
  }
  return previous;
}

// Per node: held temperature, heater power given by the scene, convection and steady loss.
double add_node_conditions(FiringSystem& s, const ThermalModel& model, std::size_t n,
                           bool layered) {
  const NodeCondition& c = model.nodes[n].condition;
  const double area = s.node_area[n];
  s.held_K.push_back(c.kind == ConditionKind::temperature ? std::optional<double>(c.value)
                                                          : std::nullopt);
  double given = 0;
  if (c.kind == ConditionKind::power) given = c.value;
  if (c.kind == ConditionKind::heat_flux) given = c.value * area;
  s.convection_hA.push_back(c.convection ? c.convection->h * area : 0.0);
  s.fluid_K.push_back(c.convection ? c.convection->fluid_K : 0.0);
  const bool steady_loss = c.wall_loss && !layered;
  s.loss_UA.push_back(steady_loss ? c.wall_loss->U * area : 0.0);
  s.outside_K.push_back(steady_loss ? c.wall_loss->outside_K : 0.0);
  return given;
}

}  // namespace

FiringSystem build_firing_system(const ThermalModel& model, const FiringInput& input) {
  std::string why;
  if (!input.IsValid(&why)) throw InputError("[firing]: " + why);
  for (const auto& [name, mass] : input.surfaces) surface_index(model, name, "[firing.surface]");
  FiringSystem s;
  s.radiation = radiation_operator(model);
  s.nodes = model.nodes.size();
  s.surroundings_K = model.surroundings_K.value_or(0.0);
  s.node_surface.assign(model.node_surface.begin(), model.node_surface.end());
  s.node_area.assign(s.radiation.node_area.data(),
                     s.radiation.node_area.data() + s.radiation.node_area.size());
  std::vector<double> surface_area(model.surface_names.size(), 0.0);
  for (std::size_t n = 0; n < s.nodes; ++n) surface_area[s.node_surface[n]] += s.node_area[n];
  s.unknowns.resize(s.nodes);
  std::vector<double> given(s.nodes, 0.0);
  std::vector<bool> noted(model.surface_names.size(), false);
  for (std::size_t n = 0; n < s.nodes; ++n) {
    const std::size_t surface = s.node_surface[n];
    const std::string& name = model.surface_names[surface];
    const SurfaceMass* mass = mass_of(input, name);
    const bool layered = mass && mass->kind != SurfaceMass::Kind::lumped;
    given[n] = add_node_conditions(s, model, n, layered);
    if (layered && model.nodes[n].condition.wall_loss && !noted[surface]) {
      s.notes.push_back("surface '" + name + "': its layers replace the steady wall loss");
      noted[surface] = true;
    }
    s.deepest.push_back(n);
    if (!mass) continue;
    const double area = s.node_area[n];
    if (mass->kind == SurfaceMass::Kind::lumped) {
      s.unknowns[n].capacity = mass->mass * mass->specific_heat * area / surface_area[surface];
      s.unknowns[n].store = Store::load;
      continue;
    }
    const bool wall = mass->kind == SurfaceMass::Kind::wall;
    const std::size_t last = add_layers(s, n, area, mass->layers, input.cells_per_layer,
                                        wall ? Store::wall : Store::load);
    s.deepest[n] = last;
    if (!wall) continue;
    s.unknowns.push_back(Unknown{});  // the outer face, of no thickness
    s.links.push_back({last, s.unknowns.size() - 1, area});
    s.outer.push_back({s.unknowns.size() - 1, area, mass->outside, surface});
  }
  double total = 0;
  for (double g : given) total += g;
  if (!(total > 0))
    throw InputError(
        "[firing]: no surface is heated: give the heating elements' surface a power in the "
        "scene (e.g. power = \"4.3 kW\"); the controller shares its power among the heated "
        "surfaces in that proportion");
  for (double g : given) s.heater_share.push_back(g / total);
  s.installed_W = input.power_W.value_or(total);
  s.control_surface = surface_index(model, input.control, "[firing] control");
  for (std::size_t n = 0; n < s.nodes; ++n)
    if (s.node_surface[n] == s.control_surface && s.held_K[n])
      throw InputError("[firing] control: surface '" + input.control +
                       "' is held at a given temperature; the control point must be free to "
                       "follow the heating");
  return s;
}

HeatFlows heat_flows(const FiringSystem& s, const Eigen::VectorXd& T, const Eigen::VectorXd& lagged,
                     double power_W, Eigen::MatrixXd* jacobian) {
  const std::size_t U = s.unknowns.size(), N = s.nodes;
  HeatFlows h;
  h.into = Eigen::VectorXd::Zero(Eigen::Index(U));
  if (jacobian) *jacobian = Eigen::MatrixXd::Zero(Eigen::Index(U), Eigen::Index(U));
  Eigen::VectorXd E(N), dE(N);
  for (std::size_t n = 0; n < N; ++n) {
    const double t = T(Eigen::Index(n));
    E(Eigen::Index(n)) = kStefanBoltzmann * t * t * t * t;
    dE(Eigen::Index(n)) = 4 * kStefanBoltzmann * t * t * t;
  }
  const double Ts = s.surroundings_K;
  const Eigen::VectorXd Q =
      s.radiation.K * E + s.radiation.surroundings * (kStefanBoltzmann * Ts * Ts * Ts * Ts);
  h.to_surroundings = Q.sum();
  for (std::size_t n = 0; n < N; ++n) {
    const auto i = Eigen::Index(n);
    const double convection = s.convection_hA[n] * (T(i) - s.fluid_K[n]);
    const double loss = s.loss_UA[n] * (T(i) - s.outside_K[n]);
    h.other_loss += convection + loss;
    h.into(i) = s.heater_share[n] * power_W - convection - loss - Q(i);
    if (!jacobian) continue;
    jacobian->block(i, 0, 1, Eigen::Index(N)) =
        -(s.radiation.K.row(i).array() * dE.transpose().array()).matrix();
    (*jacobian)(i, i) -= s.convection_hA[n] + s.loss_UA[n];
  }
  for (const Link& l : s.links) {
    auto resistance = [&](std::size_t u) {
      const Unknown& k = s.unknowns[u];
      return k.layer ? k.dx / (2 * k.layer->conductivity_at(lagged(Eigen::Index(u)))) : 0.0;
    };
    const double G = l.area / (resistance(l.a) + resistance(l.b));
    const auto a = Eigen::Index(l.a), b = Eigen::Index(l.b);
    const double q = G * (T(a) - T(b));
    h.into(a) -= q;
    h.into(b) += q;
    if (!jacobian) continue;
    (*jacobian)(a, a) -= G;
    (*jacobian)(a, b) += G;
    (*jacobian)(b, b) -= G;
    (*jacobian)(b, a) += G;
  }
  for (const OuterFace& o : s.outer) {
    const auto i = Eigen::Index(o.unknown);
    const double t = T(i), room = o.film.room_K;
    const double radiation =
        o.film.emissivity * kStefanBoltzmann * (t * t * t * t - room * room * room * room);
    const double loss = o.area * (o.film.h * (t - room) + radiation);
    h.into(i) -= loss;
    h.case_loss += loss;
    if (jacobian)
      (*jacobian)(i, i) -=
          o.area * (o.film.h + 4 * o.film.emissivity * kStefanBoltzmann * t * t * t);
  }
  return h;
}

}  // namespace hearthray::transient
