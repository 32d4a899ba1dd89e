// Owen-scrambled Sobol' points in four dimensions, for randomised quasi-Monte Carlo emission
// (the `sobol` sampler of the view factors; tested in tests/test_sobol.cpp).
//
// Sequence: Sobol' (1967) with the primitive polynomials and initial direction numbers of
// Joe & Kuo ("Constructing Sobol sequences with better two-dimensional projections", SIAM J.
// Sci. Comput. 30, 2008; their file new-joe-kuo-6.21201, dimensions 2 to 4, recalled):
// dimension 0 is the van der Corput sequence in base 2, then x + 1 (m = 1),
// x^2 + x + 1 (m = 1, 3), x^3 + x + 1 (m = 1, 3, 1). Points are in the Gray-code order of
// Antonov & Saleev, computed from the index directly (no state), so any ray can be drawn on
// its own. The first 2^m points form a (t, m, 4)-net in base 2 with t = 3 (the sum of the
// degrees minus one, Sobol' 1967); dimensions 0-1 alone are a (0, m, 2)-net.
//
// Randomisation: Owen's nested uniform scrambling (Owen 1995), by the hash-based permutation
// of Burley ("Practical Hash-based Owen Scrambling", JCGT 9(4), 2020, the Laine-Karras style
// hash with his constants, recalled): reversing the bits turns "each digit is flipped by a
// function of the digits above it" into "each bit is changed by a function of the bits below
// it", which additions and multiplications by even constants do. Every scrambled point is
// uniform on [0,1)^4 and the net property is kept.
#pragma once

#include <array>
#include <cstdint>

namespace hearthray {

inline constexpr int kSobolDimensions = 4;

// Direction numbers v[d][b] (32-bit fractions) of dimension d, bit b of the Gray-coded index.
struct SobolTable {
  std::uint32_t v[kSobolDimensions][32];
  std::uint32_t reversed[kSobolDimensions][32];  // the same with their bits reversed
};
const SobolTable& sobol_table();

// Unscrambled point `index` (Gray-code order) as 32-bit fractions: x = value / 2^32.
inline std::array<std::uint32_t, kSobolDimensions> sobol_point(std::uint32_t index) {
  const SobolTable& t = sobol_table();
  std::uint32_t g = index ^ (index >> 1);
  std::array<std::uint32_t, kSobolDimensions> x{};
  for (int b = 0; g != 0; ++b, g >>= 1) {
    const std::uint32_t mask = 0u - (g & 1u);
    for (int d = 0; d < kSobolDimensions; ++d) x[d] ^= t.v[d][b] & mask;
  }
  return x;
}

inline std::uint32_t reverse_bits32(std::uint32_t x) {
  x = ((x >> 1) & 0x55555555u) | ((x & 0x55555555u) << 1);
  x = ((x >> 2) & 0x33333333u) | ((x & 0x33333333u) << 2);
  x = ((x >> 4) & 0x0f0f0f0fu) | ((x & 0x0f0f0f0fu) << 4);
  x = ((x >> 8) & 0x00ff00ffu) | ((x & 0x00ff00ffu) << 8);
  return (x >> 16) | (x << 16);
}

// owen_scramble of the fraction whose bits reversed are `r`: a point kept bit-reversed (built
// from SobolTable::reversed; reversal commutes with the exclusive-or that builds points)
// spares one of the scramble's two reversals.
inline std::uint32_t owen_scramble_reversed(std::uint32_t r, std::uint32_t seed) {
  r += seed;
  r ^= r * 0x6c50b47cu;
  r ^= r * 0xb82f1e52u;
  r ^= r * 0xc7afe638u;
  r ^= r * 0x8d22f6e6u;
  return reverse_bits32(r);
}

// Burley's nested uniform scramble of a 32-bit fraction under a 32-bit seed.
inline std::uint32_t owen_scramble(std::uint32_t x, std::uint32_t seed) {
  return owen_scramble_reversed(reverse_bits32(x), seed);
}

// One independent randomisation of the sequence: a seed per dimension.
struct OwenSeeds {
  std::uint32_t s[kSobolDimensions];
};
OwenSeeds owen_seeds(std::uint64_t key);

// Scrambled point `index` in [0,1)^4 under `seeds`.
inline std::array<double, kSobolDimensions> scrambled_sobol(std::uint32_t index,
                                                            const OwenSeeds& seeds) {
  const auto x = sobol_point(index);
  constexpr double k32 = 1.0 / 4294967296.0;
  std::array<double, kSobolDimensions> u{};
  for (int d = 0; d < kSobolDimensions; ++d) u[d] = double(owen_scramble(x[d], seeds.s[d])) * k32;
  return u;
}

}  // namespace hearthray
