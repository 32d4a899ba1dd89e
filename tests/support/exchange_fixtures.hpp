// Exchange problems built from given (exact) view factors, shared by the exchange unit tests
// and validation cases: no ray tracing, so the solver alone is under test.
#pragma once

#include <vector>

#include "hearthray/exchange.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray::testing {

// View factors from a dense matrix F (rows emitters), areas and, optionally, the fraction of
// each row that leaves to the surroundings. Faces are named p0, p1, ...
ViewFactors exact_factors(const std::vector<std::vector<double>>& F,
                          const std::vector<double>& areas,
                          const std::vector<double>& to_surroundings = {});

NodeCondition fixed(double kelvin);
NodeCondition power(double watts);
NodeCondition adiabatic();

// One node per face, in order, with the given emissivities and conditions.
ExchangeProblem one_node_per_face(const ViewFactors& vf, const std::vector<double>& eps,
                                  const std::vector<NodeCondition>& conditions);

}  // namespace hearthray::testing
