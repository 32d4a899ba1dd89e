#include "hearthray/sobol.hpp"

#include "hearthray/hash.hpp"

namespace hearthray {
namespace {

// Primitive polynomial of degree s with inner coefficients a, and initial direction numbers
// m_1..m_s (odd, m_k < 2^k): Joe & Kuo, new-joe-kuo-6.21201, dimensions 2-4 (recalled).
struct Polynomial {
  int s;
  unsigned a;
  unsigned m[3];
};
constexpr Polynomial kPolynomials[kSobolDimensions - 1] = {
    {1, 0, {1, 0, 0}}, {2, 1, {1, 3, 0}}, {3, 1, {1, 3, 1}}};

SobolTable make_table() {
  SobolTable t{};
  for (int b = 0; b < 32; ++b) t.v[0][b] = 1u << (31 - b);  // van der Corput
  for (int d = 1; d < kSobolDimensions; ++d) {
    const Polynomial& p = kPolynomials[d - 1];
    std::uint32_t* v = t.v[d];
    for (int i = 0; i < p.s; ++i) v[i] = p.m[i] << (31 - i);
    // Recurrence of Sobol' (Bratley & Fox 1988, eq. 2 of Joe & Kuo 2008).
    for (int i = p.s; i < 32; ++i) {
      v[i] = v[i - p.s] ^ (v[i - p.s] >> p.s);
      for (int k = 1; k < p.s; ++k) v[i] ^= ((p.a >> (p.s - 1 - k)) & 1u) * v[i - k];
    }
  }
  for (int d = 0; d < kSobolDimensions; ++d)
    for (int b = 0; b < 32; ++b) t.reversed[d][b] = reverse_bits32(t.v[d][b]);
  return t;
}

}  // namespace

const SobolTable& sobol_table() {
  static const SobolTable table = make_table();
  return table;
}

OwenSeeds owen_seeds(std::uint64_t key) {
  OwenSeeds seeds{};
  for (int d = 0; d < kSobolDimensions; ++d)
    seeds.s[d] = static_cast<std::uint32_t>(mix64(key + (d + 1) * 0xbb67ae8584caa73bull) >> 32);
  return seeds;
}

}  // namespace hearthray
