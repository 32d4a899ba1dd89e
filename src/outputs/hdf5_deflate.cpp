#include "outputs/hdf5_deflate.hpp"

#include <libdeflate.h>

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <new>

namespace hearthray::hdf5 {

namespace {

// Deflate settings of the deflated planes. Level 1 with the run-length strategy (matches only
// of the previous byte) suits the planes left, whose compressible part is runs of equal bytes
// (high bytes of numbers, column indices of one row): on the 0.06 m benchmark furnace's matrix
// it deflated the plane of the second bytes of F/indices to 8.3 % at about 490 MB/s, against
// 9.6 % at 400 MB/s for libdeflate's level 1 and 11.7 % at 320 MB/s for zlib's default
// strategy (one core, load average about 2.5). Raw deflate (negative window bits): the zlib
// wrapper is written here around all the planes.
constexpr int kDeflateLevel = 1;
constexpr int kDeflateStrategy = Z_RLE;
constexpr int kRawWindowBits = -15;
constexpr int kZlibMemoryLevel = 8;  // zlib's default
// The zlib header: deflate with a 32 KiB window (CMF 0x78), "fastest" level, no dictionary,
// check bits making 0x7801 a multiple of 31 (RFC 1950).
constexpr unsigned char kZlibHeader[2] = {0x78, 0x01};
constexpr std::size_t kMaxStoredBlock = 65535;  // RFC 1951 3.2.4
constexpr std::size_t kStoredHeader = 5;        // BFINAL/BTYPE byte, LEN, NLEN

// Plane sampling (plane_looks_random).
constexpr std::size_t kMaxSamples = 8192;
constexpr std::size_t kMinSampledPlane = 8192;

template <std::size_t kBytes>
void shuffle_fixed(const unsigned char* in, std::size_t values, unsigned char* out) {
  for (std::size_t b = 0; b < kBytes; ++b) {
    unsigned char* plane = out + b * values;
    const unsigned char* from = in + b;
    for (std::size_t v = 0; v < values; ++v) plane[v] = from[v * kBytes];
  }
}

std::size_t stored_size(std::size_t bytes) {
  return bytes +
         kStoredHeader * std::max<std::size_t>(1, (bytes + kMaxStoredBlock - 1) / kMaxStoredBlock);
}

// Copies `size` bytes as stored blocks, the last one final when `last`.
unsigned char* put_stored(const unsigned char* in, std::size_t size, bool last,
                          unsigned char* out) {
  std::size_t done = 0;
  do {
    const std::size_t n = std::min(kMaxStoredBlock, size - done);
    const bool final_block = last && done + n == size;
    *out++ = final_block ? 1 : 0;  // BFINAL, BTYPE 00; the rest of the byte is padding
    *out++ = static_cast<unsigned char>(n & 0xff);
    *out++ = static_cast<unsigned char>(n >> 8);
    *out++ = static_cast<unsigned char>(~n & 0xff);
    *out++ = static_cast<unsigned char>((~n >> 8) & 0xff);
    std::memcpy(out, in + done, n);
    out += n;
    done += n;
  } while (done < size);
  return out;
}

}  // namespace

void shuffle_bytes(const unsigned char* in, std::size_t values, std::size_t bytes,
                   unsigned char* out) {
  switch (bytes) {
    case 1:
      std::memcpy(out, in, values);
      return;
    case 2:
      return shuffle_fixed<2>(in, values, out);
    case 4:
      return shuffle_fixed<4>(in, values, out);
    case 8:
      return shuffle_fixed<8>(in, values, out);
    default:
      for (std::size_t b = 0; b < bytes; ++b)
        for (std::size_t v = 0; v < values; ++v) out[b * values + v] = in[v * bytes + b];
  }
}

bool plane_looks_random(const unsigned char* plane, std::size_t size) {
  if (size < kMinSampledPlane) return false;
  const std::size_t samples = std::min(kMaxSamples, size / 2);
  const std::size_t stride = size / samples;  // at least 2: each sample and its neighbour
  std::uint32_t histogram[256] = {};
  std::size_t repeats = 0;
  for (std::size_t k = 0; k < samples; ++k) {
    const unsigned char* at = plane + k * stride;
    ++histogram[at[0]];
    repeats += at[0] == at[1] ? 1 : 0;
  }
  if (repeats * 64 > samples) return false;  // runs: deflate's run-length matches pay
  // Collision entropy -log2(sum p^2) >= log2(239) as sum h(h-1) * 239 <= s(s-1): random bytes
  // give 1/256 (8 bits), and at 4096 samples or more their spread is under 1 % of it.
  std::uint64_t collisions = 0;
  for (std::uint32_t h : histogram) collisions += std::uint64_t(h) * (h > 0 ? h - 1 : 0);
  return collisions * 239 <= std::uint64_t(samples) * (samples - 1);
}

ChunkDeflater::ChunkDeflater() {
  if (deflateInit2(&stream_, kDeflateLevel, Z_DEFLATED, kRawWindowBits, kZlibMemoryLevel,
                   kDeflateStrategy) != Z_OK)
    throw std::bad_alloc();
}

ChunkDeflater::~ChunkDeflater() {
  deflateEnd(&stream_);
}

bool ChunkDeflater::compress(const unsigned char* in, std::size_t values, std::size_t bytes,
                             std::vector<unsigned char>* out) {
  const std::size_t total = values * bytes;
  shuffled_.resize(total);
  shuffle_bytes(in, values, bytes, shuffled_.data());
  stored_.assign(bytes, 0);
  std::size_t bound = sizeof kZlibHeader + 4;  // header, Adler-32
  for (std::size_t b = 0; b < bytes; ++b) {
    stored_[b] = plane_looks_random(shuffled_.data() + b * values, values) ? 1 : 0;
    // A deflated plane ends with a sync flush: at most an empty stored block more.
    bound +=
        stored_[b] ? stored_size(values) : std::size_t(deflateBound(&stream_, uLong(values))) + 16;
  }
  out->resize(bound);
  unsigned char* at = out->data();
  std::memcpy(at, kZlibHeader, sizeof kZlibHeader);
  at += sizeof kZlibHeader;
  for (std::size_t b = 0; b < bytes; ++b) {
    const unsigned char* plane = shuffled_.data() + b * values;
    const bool last = b + 1 == bytes;
    if (stored_[b]) {
      at = put_stored(plane, values, last, at);
      continue;
    }
    // A raw deflate stream of its own; a sync flush ends it on a byte boundary without a final
    // block, so the next plane's blocks follow it in the same stream.
    if (deflateReset(&stream_) != Z_OK) return false;
    stream_.next_in = const_cast<unsigned char*>(plane);
    stream_.avail_in = uInt(values);
    stream_.next_out = at;
    stream_.avail_out = uInt(out->data() + out->size() - at);
    const int status = deflate(&stream_, last ? Z_FINISH : Z_SYNC_FLUSH);
    if (status != (last ? Z_STREAM_END : Z_OK) || stream_.avail_in != 0 || stream_.avail_out == 0)
      return false;
    at = stream_.next_out;
  }
  const std::uint32_t adler = libdeflate_adler32(1, shuffled_.data(), total);
  for (int shift = 24; shift >= 0; shift -= 8) *at++ = static_cast<unsigned char>(adler >> shift);
  out->resize(std::size_t(at - out->data()));
  return true;
}

}  // namespace hearthray::hdf5
