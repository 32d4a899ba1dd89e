// Private to the gas stage: the raw Monte Carlo scores of the exchange areas, and how they
// become a GasExchange (zones kept or dropped, scores scaled to areas, dense or sparse).
#pragma once

#include <cstdint>
#include <vector>

#include "hearthray/gas_zones.hpp"

namespace hearthray {
namespace gas_detail {

// Sums of the scores and of their squares, per row (patches 0..P-1, then every grid cell) in
// sparse columns (ascending), `gases` values per entry; chunks merged in a fixed order, so the
// sums do not depend on the thread count.
struct RawScores {
  std::size_t gases = 0;
  std::vector<std::size_t> offset;    // per row, and one past the last: into column
  std::vector<std::uint32_t> column;  // patches, then grid cells
  std::vector<double> sum, sq;        // column.size() x gases
  std::vector<double> lost;           // rows x gases: escaped or back-side score
  std::vector<std::uint64_t> inside;  // per cell: its points that lay in the gas
};

// Zones are the cells with points in the gas; rows of dropped cells go, their columns move to
// the nearest zone. Scores become exchange areas (scale A_i or 4 k V_cell) with standard
// errors, stored as `storage` says (dense or sparse; the values are the same either way).
// `rays` holds the rays of every raw row.
void assemble_zones(GasExchange& x, const RawScores& raw, const PatchSet& patches,
                    const std::vector<std::uint64_t>& rays, GasStorage storage);

}  // namespace gas_detail
}  // namespace hearthray
