// Exchange: gray, diffuse, opaque surfaces exchanging heat by radiation (net-radiation /
// radiosity method: Modest, Radiative Heat Transfer, 3rd ed., ch. 5; Siegel & Howell, Thermal
// Radiation Heat Transfer; Incropera et al., Fundamentals of Heat and Mass Transfer, sec.
// 13.3), with convection to a fluid and conduction through the wall to an outside temperature.
//
// Faces radiate (one per view-factor patch); nodes carry a temperature and a boundary
// condition. A one-sided surface is one face on one node; a two-sided surface is a thin sheet:
// two faces (front, back) on one node. For a face i with radiosity J_i and irradiation
// G_i = sum_j F_ij J_j + F_is sigma T_s^4:  J_i = eps_i sigma T_i^4 + (1 - eps_i) G_i, and the
// net radiative flux leaving it is q_i = J_i - G_i.
// Energy balance of a node: heat input = sum over its faces of A_f q_f + convection + wall loss.
// The area of a node is the sum of its faces' areas (both sides of a two-sided sheet): heat
// flux, convection and wall loss all act on that area. Radiation a face sends to back faces of
// one-sided surfaces (ViewFactors::to_back_faces) is treated like radiation to the
// surroundings: it is lost to a black surroundings at surroundings_K and counted there.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "hearthray/conditions.hpp"
#include "hearthray/geometry.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

struct ExchangeNode {
  std::string name;
  NodeCondition condition;
};

struct ExchangeFace {
  std::uint32_t node = 0;  // index into nodes
  double emissivity = 1;   // (0, 1]
};

struct ExchangeProblem {
  std::vector<ExchangeNode> nodes;
  std::vector<ExchangeFace> faces;  // one per row of view_factors, same order
  // Areas, F, to_surroundings and to_back_faces per face (the last two may be empty: none).
  const ViewFactors* view_factors = nullptr;
  std::optional<double> surroundings_K;  // needed when any face sees the surroundings
  // Optional, one per face (m): a point on it, such as its patch's centroid. The large path's
  // preconditioner then groups faces that lie close together (better than faces in their
  // order); empty: faces taken in their order. Changes the iterations, not the answer.
  std::vector<Vec3> face_centres;
};

struct ExchangeOptions {
  // Newton stops when max |node balance residual| <= tolerance * scale, where scale is the
  // largest heat flow in the problem, counting each node's black-body emission A sigma T^4.
  // On the large path every face's radiosity equation must also hold to tolerance times the
  // largest black-body emissive power (W/m^2) in the problem, and the net power of those
  // residuals over all faces (what they add to the energy balance) to tolerance * scale.
  double tolerance = 1e-10;
  int max_iterations = 50;
  // Up to this many faces the radiosity matrix is factored densely (Eigen PartialPivLU) and
  // Newton works on the unknown node temperatures alone. Above it, the large path: Newton's
  // method on radiosities and temperatures together, each step one GMRES solve with the sparse
  // F (memory grows with the non-zeros of F, never with faces^2). The default is the measured
  // crossover (bench/exchange, 2 cores): the paths take the same time at 50-100 faces, both
  // under a millisecond; at 500 faces the large path is 3-15 times faster, at 5000 faces
  // 150-500 times (one node per face or 20 surfaces; random or box-furnace factors).
  int dense_face_limit = 100;
  // Large path only. The linear solve of each Newton step stops at a relative residual eta,
  // linear_tolerance <= eta <= 1e-3: with radiation only (a linear problem) eta = 0.1 / ratio,
  // ratio being how far the residuals are above the tolerance; with convection or wall losses
  // eta starts at 1e-3 and follows Eisenstat & Walker's forcing term, never below 0.1 / ratio.
  double linear_tolerance = 1e-12;
  int max_linear_iterations = 2000;  // GMRES iterations per Newton step
  int gmres_restart = 100;           // Krylov vectors kept (memory: that many doubles per face)
  // Large path only: GMRES is preconditioned by a coarse correction on about this many
  // aggregates of faces (at most an eighth of the faces, and fewer where F has so few
  // non-zeros that the coarse matrix's LU would outweigh a product with F;
  // src/exchange/exchange_coarse.hpp). 0: no preconditioner. Changes the iterations, not the
  // answer (within the tolerance). The cost rule decides on large problems (about 1370
  // aggregates at 98,592 faces and 161 M non-zeros, 750 at 20,050 faces and 27 M).
  int coarse_aggregates = 2048;

  bool IsValid(std::string* error) const;
};

enum class ExchangeStatus { converged, not_converged, singular };

struct FaceResult {
  double radiosity = 0;    // W/m^2
  double irradiation = 0;  // W/m^2
  double net_flux = 0;     // W/m^2, radiation leaving minus arriving
  double net_power = 0;    // W
};

struct NodeResult {
  std::string name;
  double area = 0;  // m^2, all faces
  double temperature_K = 0;
  double net_radiation_W = 0;  // net radiation leaving, all faces
  double convection_W = 0;     // to the fluid (positive out of the surface)
  double wall_loss_W = 0;      // through the wall (positive out of the surface)
  double heat_input_W = 0;     // = net_radiation + convection + wall_loss
  double residual_W = 0;       // balance residual for nodes with a prescribed input
};

struct ExchangeResult {
  ExchangeStatus status = ExchangeStatus::singular;
  std::string message;
  int iterations = 0;
  double final_residual_W = 0;    // max over nodes of |balance residual|
  double radiosity_residual = 0;  // W/m^2, max over faces of |radiosity equation residual|
  bool iterative = false;         // the large path (sparse Newton-Krylov) was used
  int linear_iterations = 0;      // large path: GMRES iterations over all Newton steps
  double linear_residual = 0;     // large path: relative residual of the last linear solve
  double surroundings_W = 0;      // net radiation received by the surroundings
  double balance_W = 0;           // sum of radiation out of all faces minus surroundings
  std::vector<FaceResult> faces;
  std::vector<NodeResult> nodes;

  std::string BriefReport() const;
};

// Throws InputError for a malformed problem (bad emissivity, negative kelvin, missing
// surroundings temperature, or a problem with no temperature level: nothing fixes it).
ExchangeResult solve_exchange(const ExchangeProblem& problem, const ExchangeOptions& options);

}  // namespace hearthray
