// Firing curves: a kiln or batch furnace heated, held and cooled over time, with the heat the
// walls and the loads store.
//
// The scene's surfaces exchange radiation as in the steady solve, on the same view factors
// (traced once, cached). Per surface piece (node) the net radiation leaving is linear in the
// nodes' black-body emissive powers: Q = K sigma T^4 + k_s sigma T_s^4, with K and k_s from one
// dense factorisation of the radiosity equations (radiation_operator in src/transient).
//
// Thermal mass:
//  - a wall is a stack of layers (fibre, insulating brick, steel case...) conducted in 1-D
//    through its thickness by finite volumes (Patankar, Numerical Heat Transfer and Fluid
//    Flow, 1980, ch. 4: cells with the harmonic mean of the conductances at each face), the
//    inside face radiating into the chamber, the outside face losing heat by a film to the
//    room: h (T - T_room) + eps sigma (T^4 - T_room^4). Conductivity may follow a table in
//    temperature (taken at the start of each step: lagged);
//  - a load is lumped (mass and specific heat) or a slab conducted in 1-D with its back
//    insulated; the Biot number Bi = h_r L / k with the radiative coefficient h_r = 4 eps sigma
//    T^3 and L the thickness (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
//    sec. 5.2: lumping is accurate for Bi < 0.1) says which applies;
//  - surfaces given no mass (posts, shelves, heating elements by default) follow at once:
//    their balance is algebraic.
//
// Time: backward Euler (implicit, L-stable; Hairer & Wanner, Solving Ordinary Differential
// Equations II, 1996, sec. IV.3 and VI.1 for the algebraic equations), Newton's method with
// the exact Jacobian of the T^4 and film terms at each step. Step size: the local error of
// backward Euler is about dt/2 |dT/dt(n+1) - dT/dt(n)| (the second-derivative term of its
// Taylor expansion); a step is repeated with a smaller dt when this exceeds the tolerance in
// kelvin, and dt grows by at most 2 (factor 0.9 sqrt(tol / err)) after a good one. Steps end on
// the schedule's corners.
//
// Control: the schedule gives a set point in time; a PI controller (proportional band and
// integral time, integration held while the output is saturated: anti-windup) sets the
// heating power from the control point's temperature at the start of each step, between 0 and
// the installed power. Heated surfaces (those with a power or heat flux in the scene) share
// the power in proportion to what the scene gives them.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/firing_input.hpp"
#include "hearthray/thermal_model.hpp"

namespace hearthray {

// One row of the time series.
struct FiringSample {
  double time_s = 0;
  double set_point_K = 0;
  double control_K = 0;
  double power_W = 0;
  int segment = 0;
  std::vector<double> surface_K;  // per surface of the scene: area-weighted mean
  std::vector<double> case_K;     // per wall surface (FiringResult::wall_names): outer face
  // Per load (FiringResult::load_names): a slab's insulated back (the centre of a piece heated
  // from both sides when its half thickness is given), a lumped load's one temperature.
  std::vector<double> load_inner_K;
};

struct SegmentReport {
  int segment = 0;
  double start_s = 0, end_s = 0;
  double max_lag_K = 0;      // largest set point - control temperature while heating
  bool followed = true;      // the lag stayed within lag_limit_K
  double control_end_K = 0;  // control temperature at the end
};

struct FiringResult {
  std::vector<std::string> surface_names;  // of the scene
  std::vector<std::string> wall_names;     // surfaces with layers
  std::vector<std::string> load_names;     // lumped and slab surfaces
  std::vector<FiringSample> samples;
  std::vector<SegmentReport> segments;
  bool completed = false;  // the schedule ran to its end
  std::string message;     // why not, when it did not
  // Energy over the firing, J: what the heaters put in, what the loads, the walls (lining)
  // and other masses store at the end over the start, what the wall cases lost to the room,
  // what left by radiation to the surroundings, by steady wall losses and convection of
  // massless surfaces, and into surfaces held at a temperature; the residual closes the
  // balance (round-off and Newton's tolerance).
  double energy_in_J = 0, stored_loads_J = 0, stored_walls_J = 0, case_loss_J = 0;
  double other_loss_J = 0, residual_J = 0;
  // Per load: time its temperature first reached each ramp's target (s; < 0: never).
  std::vector<std::vector<double>> load_reached_s;  // [load][segment]
  std::vector<double> control_reached_s;            // [segment]
  std::vector<double> load_peak_K;                  // [load]: highest temperature (surface)
  std::vector<std::string> warnings;
  std::vector<std::string> notes;  // Biot numbers and the choice they imply
  int steps = 0, rejected_steps = 0;
  double installed_W = 0;
};

struct FiringOptions {
  int threads = 0;
};

// Runs the schedule on a thermal model (its nodes, faces and view factors). Throws InputError
// for bad input (unknown surfaces, no heated surface, a held surface as control point...).
FiringResult run_firing(const ThermalModel& model, const FiringInput& input,
                        const FiringOptions& options = {});

}  // namespace hearthray
