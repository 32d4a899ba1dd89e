#include "outputs/hdf5_deflate.hpp"

#include <libdeflate.h>

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <new>

#include "outputs/deflate_blocks.hpp"

namespace hearthray::hdf5 {

namespace {

// zlib's settings for planes of runs. Level 1 with the run-length strategy (matches only of
// the previous byte) finds what those planes hold: on the 0.06 m benchmark furnace's matrix it
// deflated the plane of the second bytes of F/indices to 8.3 % at about 490 MB/s, against 9.6 %
// at 400 MB/s for libdeflate's level 1 and 11.7 % at 320 MB/s for zlib's default strategy (one
// core, load average about 2.5). Raw deflate (negative window bits): the zlib wrapper is
// written here around all the planes.
constexpr int kDeflateLevel = 1;
constexpr int kDeflateStrategy = Z_RLE;
constexpr int kRawWindowBits = -15;
constexpr int kZlibMemoryLevel = 8;  // zlib's default
// The zlib header: deflate with a 32 KiB window (CMF 0x78), "fastest" level, no dictionary,
// check bits making 0x7801 a multiple of 31 (RFC 1950).
constexpr unsigned char kZlibHeader[2] = {0x78, 0x01};
constexpr std::size_t kMaxStoredBlock = 65535;  // RFC 1951 3.2.4
constexpr std::size_t kStoredHeader = 5;        // BFINAL/BTYPE byte, LEN, NLEN

// Plane sampling (plane_coding).
constexpr std::uint64_t kMaxSamples = 4096;
constexpr std::size_t kMinSampledPlane = 4096;

template <std::size_t kBytes>
void shuffle_fixed(const unsigned char* in, std::size_t values, unsigned char* out) {
  for (std::size_t b = 0; b < kBytes; ++b) {
    unsigned char* plane = out + b * values;
    const unsigned char* from = in + b;
    for (std::size_t v = 0; v < values; ++v) plane[v] = from[v * kBytes];
  }
}

// Bytes a plane of `size` bytes may take in the stream coded as `coding` (`deflate_bound`:
// zlib's bound for it), counting a byte of bits pending before it.
std::size_t plane_bound(PlaneCoding coding, std::size_t size, std::size_t deflate_bound) {
  switch (coding) {
    case PlaneCoding::stored:
      return size + kStoredHeader * (size / kMaxStoredBlock + 1) + 1;
    case PlaneCoding::literals:
      return 2 * size + 480 + 1;
    case PlaneCoding::constant:
      return size / 128 + 8 + 1;
    default:
      return deflate_bound + 16;  // and a sync flush's empty stored block
  }
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

PlaneCoding plane_coding(const unsigned char* plane, std::size_t size) {
  if (size < kMinSampledPlane) return PlaneCoding::runs;
  const std::uint64_t samples = std::min<std::uint64_t>(kMaxSamples, size / 2);
  const std::size_t stride = size / samples;  // at least 2: each sample and its neighbour
  std::uint32_t histogram[256] = {};
  std::uint64_t repeats = 0;
  for (std::size_t k = 0; k < samples; ++k) {
    const unsigned char* at = plane + k * stride;
    ++histogram[at[0]];
    repeats += at[0] == at[1] ? 1 : 0;
  }
  // sum p^2 = collisions / pairs: the chance that two samples are the same byte. Random bytes
  // give 1/256, and at 2048 samples or more their spread is under 1.2 % of it.
  std::uint64_t collisions = 0;
  for (std::uint32_t h : histogram) collisions += std::uint64_t(h) * (h > 0 ? h - 1 : 0);
  const std::uint64_t pairs = samples * (samples - 1);
  if (repeats * 64 <= samples && collisions * 239 <= pairs) return PlaneCoding::stored;
  // repeats / samples > 3 collisions / pairs + 1/8, both sides times 8 pairs / samples
  if (collisions == pairs &&
      std::all_of(plane, plane + size, [&](unsigned char byte) { return byte == plane[0]; }))
    return PlaneCoding::constant;
  if (2 * collisions > pairs || 8 * repeats * (samples - 1) > 24 * collisions + pairs)
    return PlaneCoding::runs;
  return PlaneCoding::literals;
}

ChunkDeflater::ChunkDeflater() {
  if (deflateInit2(&stream_, kDeflateLevel, Z_DEFLATED, kRawWindowBits, kZlibMemoryLevel,
                   kDeflateStrategy) != Z_OK)
    throw std::bad_alloc();
}

ChunkDeflater::~ChunkDeflater() {
  deflateEnd(&stream_);
}

std::size_t ChunkDeflater::compress(const unsigned char* in, std::size_t values, std::size_t bytes,
                                    std::vector<unsigned char>* out) {
  const std::size_t total = values * bytes;
  shuffled_.resize(total);
  shuffle_bytes(in, values, bytes, shuffled_.data());
  codings_.resize(bytes);
  const std::size_t deflate_bound = deflateBound(&stream_, uLong(values));
  std::size_t bound = sizeof kZlibHeader + 1 + 4 + 8;  // header, padding, Adler-32, spare
  for (std::size_t b = 0; b < bytes; ++b) {
    codings_[b] = plane_coding(shuffled_.data() + b * values, values);
    bound += plane_bound(codings_[b], values, deflate_bound);
  }
  if (out->size() < bound) out->resize(bound);
  std::memcpy(out->data(), kZlibHeader, sizeof kZlibHeader);
  BitWriter writer(out->data() + sizeof kZlibHeader);
  for (std::size_t b = 0; b < bytes; ++b) {
    const unsigned char* plane = shuffled_.data() + b * values;
    const bool last = b + 1 == bytes;
    switch (codings_[b]) {
      case PlaneCoding::stored:
        for (std::size_t done = 0; done < values; done += kMaxStoredBlock) {
          const std::size_t n = std::min(kMaxStoredBlock, values - done);
          put_stored_block(plane + done, n, last && done + n == values, writer);
        }
        break;
      case PlaneCoding::literals:
        put_literal_block(plane, values, last, writer);
        break;
      case PlaneCoding::constant:
        put_constant_block(plane[0], values, last, writer);
        break;
      case PlaneCoding::runs:
        if (!deflate_runs(plane, values, last, out->data() + bound, writer)) return 0;
    }
  }
  writer.align();
  unsigned char* at = writer.out();
  const std::uint32_t adler = libdeflate_adler32(1, shuffled_.data(), total);
  for (int shift = 24; shift >= 0; shift -= 8) *at++ = static_cast<unsigned char>(adler >> shift);
  return std::size_t(at - out->data());
}

// A raw deflate stream of its own, started with the bits pending (deflatePrime); a sync flush
// ends it on a byte boundary without a final block, so the next plane follows in the same
// stream.
bool ChunkDeflater::deflate_runs(const unsigned char* plane, std::size_t size, bool last,
                                 unsigned char* end, BitWriter& writer) {
  if (deflateReset(&stream_) != Z_OK) return false;
  if (writer.pending_bits() > 0 &&
      deflatePrime(&stream_, writer.pending_bits(), int(writer.pending())) != Z_OK)
    return false;
  stream_.next_in = const_cast<unsigned char*>(plane);
  stream_.avail_in = uInt(size);
  stream_.next_out = writer.out();
  stream_.avail_out = uInt(end - writer.out());
  const int status = deflate(&stream_, last ? Z_FINISH : Z_SYNC_FLUSH);
  if (status != (last ? Z_STREAM_END : Z_OK) || stream_.avail_in != 0 || stream_.avail_out < 8)
    return false;
  writer.skip_to(stream_.next_out);
  return true;
}

}  // namespace hearthray::hdf5
