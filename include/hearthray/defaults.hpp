// Defaults of the run parameters that several stages and the tool share, each written once
// here: the stages' options structs and the tool's help texts take them from this header.
#pragma once

#include <cstdint>

namespace hearthray {

// Seed of the random streams (sampling.hpp keys them by seed, patch and ray index).
inline constexpr std::uint64_t kDefaultSeed = 1;
// Rays each patch emits when neither the caller nor the scene file says.
inline constexpr std::uint64_t kDefaultRaysPerPatch = 100000;
// Floor per patch when a total ray budget is spread by area ([rays] total).
inline constexpr std::uint64_t kDefaultMinRaysPerPatch = 1000;
// Rays per patch of the quick raw estimates (`hearthray check`, `render --field
// view-factor-to=...`): enough to see flipped normals and leaks in a second.
inline constexpr std::uint64_t kQuickRaysPerPatch = 20000;
// Rays per comfort point, for the body and for each of the six plane elements.
inline constexpr std::uint64_t kDefaultComfortRays = 50000;

}  // namespace hearthray
