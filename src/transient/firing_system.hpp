// Private to the firing stage: the unknown temperatures of a firing (surface nodes, wall and
// slab cells, outer faces of walls), their heat capacities and links, and the heat flowing
// into each at given temperatures with its exact Jacobian.
#pragma once

#include <Eigen/Dense>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/firing.hpp"
#include "transient/radiation_operator.hpp"

namespace hearthray::transient {

enum class Store { none, load, wall };  // what an unknown's heat capacity counts as

struct Unknown {
  double capacity = 0;               // J/K (0: its balance is algebraic)
  const WallLayer* layer = nullptr;  // a cell of this layer (null: a face of no thickness)
  double dx = 0;                     // m, cell thickness
  Store store = Store::none;
};

struct Link {
  std::size_t a = 0, b = 0;
  double area = 0;  // m^2
};

struct OuterFace {
  std::size_t unknown = 0;
  double area = 0;  // m^2
  OuterFilm film;
  std::size_t surface = 0;  // of the scene
};

struct FiringSystem {
  RadiationOperator radiation;
  std::size_t nodes = 0;  // the first `nodes` unknowns are the surface nodes
  std::vector<Unknown> unknowns;
  std::vector<Link> links;
  std::vector<OuterFace> outer;
  double surroundings_K = 0;
  // Per node.
  std::vector<std::optional<double>> held_K;   // a given temperature
  std::vector<double> heater_share;            // of the heating power
  std::vector<double> convection_hA, fluid_K;  // W/K, K
  std::vector<double> loss_UA, outside_K;      // steady wall loss, W/K, K
  std::vector<std::size_t> node_surface;
  std::vector<std::size_t> deepest;  // per node: its last cell (the node itself without cells)
  std::vector<double> node_area;     // m^2
  double installed_W = 0;
  std::size_t control_surface = 0;
  std::vector<std::string> notes;
};

// Throws InputError for names the scene does not have, a firing with no heated surface, or
// a control point held at a given temperature.
FiringSystem build_firing_system(const ThermalModel& model, const FiringInput& input);

// Heat into every unknown, W, at temperatures T with the links' conductances taken at `lagged`
// and `power_W` of heating; `jacobian` (d heat / d T), when given, is filled densely.
struct HeatFlows {
  Eigen::VectorXd into;        // per unknown
  double to_surroundings = 0;  // net radiation of all nodes (it leaves the scene)
  double case_loss = 0;        // outer faces to the room
  double other_loss = 0;       // convection, steady wall losses of the nodes
};
HeatFlows heat_flows(const FiringSystem& s, const Eigen::VectorXd& T, const Eigen::VectorXd& lagged,
                     double power_W, Eigen::MatrixXd* jacobian);

}  // namespace hearthray::transient
