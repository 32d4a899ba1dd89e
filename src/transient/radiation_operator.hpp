// Private to the firing stage: net radiation of every node as a linear map of the nodes'
// black-body emissive powers, from one dense solve of the radiosity equations.
#pragma once

#include <Eigen/Dense>

#include "hearthray/thermal_model.hpp"

namespace hearthray::transient {

// Net radiation leaving node n, W: Q_n = sum_m K(n, m) E_m + surroundings(n) E_s, with
// E = sigma T^4 of the nodes and of the surroundings.
//
// Faces f (one per patch): J_f = eps_f E_node(f) + (1 - eps_f) G_f, G = F J + l E_s (l: the
// share lost to the surroundings or on back faces), and Q_f = A_f eps_f (E_node(f) - G_f)
// (for a gray diffuse face, eps (E - G) = eps/(1 - eps) (E - J); Modest, Radiative Heat
// Transfer, ch. 5). With M = I - diag(1 - eps) F, X = M^-1 diag(eps) P and
// y = M^-1 diag(1 - eps) l, P the face-to-node incidence:
//   K = P^T diag(A eps) (P - F X),   surroundings = -P^T diag(A eps) (F y + l).
// A uniform temperature everywhere gives no net radiation: K 1 + surroundings = 0.
struct RadiationOperator {
  Eigen::MatrixXd K;
  Eigen::VectorXd surroundings;
  Eigen::VectorXd node_area;  // m^2, all faces of the node
};

// Throws InputError above `max_faces` faces (the dense solve would be too large).
RadiationOperator radiation_operator(const ThermalModel& model, std::size_t max_faces = 4000);

}  // namespace hearthray::transient
