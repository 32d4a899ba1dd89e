// The one 64-bit hash finaliser of the library: random streams (sampling.hpp) and the
// view-factor cache key (cache.cpp) both mix with it.
#pragma once

#include <cstdint>

namespace hearthray {

// SplitMix64 finaliser (Steele, Lea & Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014): a bijective 64-bit mix that carries every input bit into every
// output bit (good avalanche).
constexpr std::uint64_t mix64(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
  return z ^ (z >> 31);
}

}  // namespace hearthray
