// Private to the gas stage: how the raw Monte Carlo scores of the exchange areas
// become a GasExchange (zones kept or dropped, scores scaled to areas, dense or sparse).
#pragma once

#include <cstdint>
#include <vector>

#include "hearthray/gas_zones.hpp"

namespace hearthray {
namespace gas_detail {

// Zones are the cells with points in the gas; rows of dropped cells go, their columns move to
// the nearest zone. Scores become exchange areas (scale A_i or 4 k V_cell) with standard
// errors, stored as `storage` says (dense or sparse; the values are the same either way).
void assemble_zones(GasExchange& x, const GasScores& raw, const PatchSet& patches,
                    GasStorage storage);

}  // namespace gas_detail
}  // namespace hearthray
