// One chunk of the matrix file as HDF5's shuffle and deflate filters would store it: the values'
// bytes shuffled (byte b of value v at b * values + v), then one zlib stream (RFC 1950 around
// RFC 1951 deflate), which is what HDF5's deflate filter inflates. The stream is made plane by
// plane (a plane: byte b of every value), each plane coded as suits it (PlaneCoding). The choice
// depends on the plane's bytes alone, so the same values give the same stream on any thread.
#pragma once

#include <zlib.h>

#include <cstddef>
#include <vector>

namespace hearthray::hdf5 {

// The shuffle of HDF5's shuffle filter: byte b of value v goes to position b * values + v.
void shuffle_bytes(const unsigned char* in, std::size_t values, std::size_t bytes,
                   unsigned char* out);

enum class PlaneCoding {
  stored,    // random-looking bytes (low mantissa bytes): copied, as deflating saves nothing
  literals,  // mixed bytes without runs (high bytes of numbers): one block of literals under
             // a Huffman code of their own (deflate_blocks.hpp), a fraction of zlib's time
  runs,      // runs of equal bytes or one byte mostly (column indices of a row, exponents):
             // zlib at level 1 with run-length matches
  constant,  // one byte throughout (high bytes of small numbers): a block that repeats it
};

// How to code a plane of `size` bytes, judged in integers on up to 4096 samples spread over it
// (each with its neighbour); planes under 4096 bytes go to zlib (runs). Stored: repeated
// neighbours no more often than 1 in 64 and a collision entropy -log2(sum p^2) of at least
// log2(239), about 7.9 bits per byte (a Huffman code could save at most about 1 %). Runs: one
// byte value more likely than not to meet itself (sum p^2 > 1/2), or repeated neighbours more
// often than 3 sum p^2 + 1/8 (chance alone gives sum p^2); constant when every byte of the
// plane (all checked) is the one sampled. Literals: the rest.
PlaneCoding plane_coding(const unsigned char* plane, std::size_t size);

// Compresses chunks one after another; one per thread (it holds zlib's state and a buffer).
class BitWriter;

class ChunkDeflater {
 public:
  ChunkDeflater();  // throws std::bad_alloc when zlib cannot allocate its state
  ~ChunkDeflater();
  ChunkDeflater(const ChunkDeflater&) = delete;
  ChunkDeflater& operator=(const ChunkDeflater&) = delete;

  // Shuffles `values` values of `bytes` bytes each and writes the zlib stream at the start of
  // `out`, which only grows (buffers are reused without clearing); returns the stream's length,
  // 0 when zlib fails.
  std::size_t compress(const unsigned char* in, std::size_t values, std::size_t bytes,
                       std::vector<unsigned char>* out);

 private:
  // A plane of runs through zlib, written at the writer's position; `end`: the buffer's end.
  bool deflate_runs(const unsigned char* plane, std::size_t size, bool last, unsigned char* end,
                    BitWriter& writer);

  z_stream stream_{};
  std::vector<unsigned char> shuffled_;
  std::vector<PlaneCoding> codings_;
};

}  // namespace hearthray::hdf5
