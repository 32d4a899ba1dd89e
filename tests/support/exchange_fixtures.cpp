#include "support/exchange_fixtures.hpp"

#include <Eigen/SparseCore>
#include <string>

namespace hearthray::testing {

ViewFactors exact_factors(const std::vector<std::vector<double>>& F,
                          const std::vector<double>& areas,
                          const std::vector<double>& to_surroundings) {
  ViewFactors vf;
  const std::size_t n = areas.size();
  std::vector<Eigen::Triplet<double>> entries;
  for (std::size_t i = 0; i < n; ++i) {
    vf.names.push_back("p" + std::to_string(i));
    for (std::size_t j = 0; j < n; ++j) {
      if (F[i][j] != 0) entries.emplace_back(int(i), int(j), F[i][j]);
    }
  }
  vf.areas = areas;
  vf.rays.assign(n, 0);
  vf.F.resize(int(n), int(n));
  vf.F.setFromTriplets(entries.begin(), entries.end());
  vf.to_surroundings = to_surroundings.empty() ? std::vector<double>(n, 0.0) : to_surroundings;
  vf.to_back_faces.assign(n, 0.0);
  return vf;
}

NodeCondition fixed(double kelvin) {
  return {ConditionKind::temperature, kelvin, {}, {}};
}
NodeCondition power(double watts) {
  return {ConditionKind::power, watts, {}, {}};
}
NodeCondition adiabatic() {
  return {ConditionKind::adiabatic, 0, {}, {}};
}

ExchangeProblem one_node_per_face(const ViewFactors& vf, const std::vector<double>& eps,
                                  const std::vector<NodeCondition>& conditions) {
  ExchangeProblem p;
  for (std::size_t i = 0; i < eps.size(); ++i) {
    p.nodes.push_back({"s" + std::to_string(i), conditions[i]});
    p.faces.push_back({std::uint32_t(i), eps[i]});
  }
  p.view_factors = &vf;
  return p;
}

}  // namespace hearthray::testing
