// A long overlapping move to the right (std::memmove) in parallel, for arrays of gigabytes
// that grow in place (fold_leaks in src/exchange/thermal_model.cpp).
#pragma once

#include <tbb/parallel_for.h>

#include <algorithm>
#include <cstddef>
#include <cstring>
#include <vector>

namespace hearthray {

// data[from, to) moved `by` places right, as one std::memmove would (the ranges overlap),
// in parallel for long ranges: cut into pieces whose first `by` elements (which the piece
// before writes over) are saved first; each piece then moves the rest of itself and puts its
// saved head after it. The same bytes for any thread count.
template <class T>
void shift_right(T* data, std::size_t from, std::size_t to, std::size_t by) {
  constexpr std::size_t kPiece = std::size_t(1) << 21;  // elements
  const std::size_t length = to - from;
  if (by == 0 || length == 0) return;
  if (length < 2 * kPiece || by > kPiece / 8) {
    std::memmove(data + from + by, data + from, length * sizeof(T));
    return;
  }
  const std::size_t pieces = length / kPiece;  // the last one takes the remainder
  std::vector<T> heads(pieces * by);
  for (std::size_t k = 1; k < pieces; ++k)
    std::memcpy(heads.data() + k * by, data + from + k * kPiece, by * sizeof(T));
  tbb::parallel_for(std::size_t(0), pieces, [&](std::size_t k) {
    const std::size_t a = from + k * kPiece, b = k + 1 == pieces ? to : a + kPiece;
    if (k == 0) {
      std::memmove(data + a + by, data + a, (b - a) * sizeof(T));
    } else {
      std::memmove(data + a + 2 * by, data + a + by, (b - a - by) * sizeof(T));
      std::memcpy(data + a + by, heads.data() + k * by, by * sizeof(T));
    }
  });
}

}  // namespace hearthray
