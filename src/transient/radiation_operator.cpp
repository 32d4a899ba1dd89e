#include "transient/radiation_operator.hpp"

#include <Eigen/LU>
#include <string>

#include "hearthray/error.hpp"

namespace hearthray::transient {

RadiationOperator radiation_operator(const ThermalModel& model, std::size_t max_faces) {
  const ViewFactors& vf = model.factors;
  const std::size_t F = model.faces.size(), N = model.nodes.size();
  if (F > max_faces)
    throw InputError("a firing needs the radiation between " + std::to_string(F) +
                     " patches in a dense matrix, more than the " + std::to_string(max_faces) +
                     " it allows: use larger patches (patches = \"whole\" or a larger size)");
  Eigen::MatrixXd Fd = Eigen::MatrixXd(vf.F);
  Eigen::VectorXd eps(F), area(F), lost(F);
  Eigen::MatrixXd P = Eigen::MatrixXd::Zero(F, N);
  for (std::size_t f = 0; f < F; ++f) {
    eps(f) = model.faces[f].emissivity;
    area(f) = vf.areas[f];
    lost(f) = (vf.to_surroundings.empty() ? 0.0 : vf.to_surroundings[f]) +
              (vf.to_back_faces.empty() ? 0.0 : vf.to_back_faces[f]);
    P(f, model.faces[f].node) = 1;
  }
  Eigen::MatrixXd M = -((1 - eps.array()).matrix().asDiagonal() * Fd);
  M.diagonal().array() += 1;
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(M);
  Eigen::MatrixXd rhs(F, N + 1);
  rhs.leftCols(N) = eps.asDiagonal() * P;
  rhs.col(N) = (1 - eps.array()).matrix().cwiseProduct(lost);
  const Eigen::MatrixXd solved = lu.solve(rhs);
  const Eigen::VectorXd weight = area.cwiseProduct(eps);
  RadiationOperator op;
  op.K = P.transpose() * weight.asDiagonal() * (P - Fd * solved.leftCols(N));
  op.surroundings = -(P.transpose() * weight.asDiagonal() * (Fd * solved.col(N) + lost));
  op.node_area = P.transpose() * area;
  return op;
}

}  // namespace hearthray::transient
