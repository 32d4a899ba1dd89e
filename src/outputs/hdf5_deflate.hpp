// One chunk of the matrix file as HDF5's shuffle and deflate filters would store it: the values'
// bytes shuffled (byte b of value v at b * values + v), then one zlib stream (RFC 1950 around
// RFC 1951 deflate), which is what HDF5's deflate filter inflates. The stream is made plane by
// plane (a plane: byte b of every value): a plane whose bytes look random (the low mantissa
// bytes of factors and errors) is copied into stored blocks, since deflating it would cost most
// of the time and save nothing; every other plane is deflated by zlib. The choice depends on
// the plane's bytes alone, so the same values give the same stream on any thread.
#pragma once

#include <zlib.h>

#include <cstddef>
#include <vector>

namespace hearthray::hdf5 {

// The shuffle of HDF5's shuffle filter: byte b of value v goes to position b * values + v.
void shuffle_bytes(const unsigned char* in, std::size_t values, std::size_t bytes,
                   unsigned char* out);

// True when a plane of `size` bytes looks random enough to be stored rather than deflated: no
// more repeated neighbours than 1 in 64 and a collision entropy of at least log2(239), about
// 7.9 bits per byte (deflate could save at most about 1 %), both judged on up to 8192 samples
// spread over the plane, in integers. Planes under 8192 bytes are always deflated.
bool plane_looks_random(const unsigned char* plane, std::size_t size);

// Compresses chunks one after another; one per thread (it holds zlib's state and a buffer).
class ChunkDeflater {
 public:
  ChunkDeflater();  // throws std::bad_alloc when zlib cannot allocate its state
  ~ChunkDeflater();
  ChunkDeflater(const ChunkDeflater&) = delete;
  ChunkDeflater& operator=(const ChunkDeflater&) = delete;

  // Shuffles `values` values of `bytes` bytes each and writes the zlib stream to `out`
  // (resized to fit); false when zlib fails.
  bool compress(const unsigned char* in, std::size_t values, std::size_t bytes,
                std::vector<unsigned char>* out);

 private:
  z_stream stream_{};
  std::vector<unsigned char> shuffled_;
  std::vector<char> stored_;  // per plane: stored (1) or deflated (0)
};

}  // namespace hearthray::hdf5
