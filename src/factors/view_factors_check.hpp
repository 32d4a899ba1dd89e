// Private to the library: the consistency checks on tallies (view_factors_raw.cpp) that every
// consumer of tallies relies on before indexing with them.
#pragma once

#include "hearthray/view_factors.hpp"

namespace hearthray {
namespace tallies_detail {

// Throws InputError, naming the patch, when the tallies do not fit the patches or contradict
// themselves (sizes, ascending receivers in range, no more counted rays than emitted).
void check_tallies(const PatchSet& patches, const Tallies& tallies);

}  // namespace tallies_detail
}  // namespace hearthray
