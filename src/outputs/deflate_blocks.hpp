// Deflate blocks written directly (RFC 1951), for the matrix file's chunk streams
// (hdf5_deflate.cpp): stored blocks, blocks repeating one byte, and blocks of literals only
// under a dynamic Huffman code made for the bytes at hand. The latter is what a byte plane of mixed
// values needs (the high bytes of factors and errors: few distinct bytes, no runs or repeats worth
// a match), and coded here it costs a fraction of zlib's time, which searches for matches first.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstring>

namespace hearthray::hdf5 {

// Deflate's bit stream: values appended least significant bit first into bytes.
class BitWriter {
 public:
  // Writes from `out`, which must have 8 bytes to spare past the last byte written.
  explicit BitWriter(unsigned char* out) : out_(out) {}

  // Appends the low `count` bits of `value` (count at most 56).
  void put(std::uint64_t value, int count) {
    buffer_ |= value << bits_;
    bits_ += count;
    flush_bytes();
  }
  // Completes the byte under way with zero bits (deflate's padding).
  void align() {
    if (bits_ > 0) put(0, 8 - bits_);
  }
  // Bits written but not yet a whole byte (fewer than 8), and their count.
  std::uint64_t pending() const { return buffer_; }
  int pending_bits() const { return bits_; }
  // The next whole byte; after align(), or after bytes were written at `out()` directly and
  // handed back with `skip_to`.
  unsigned char* out() const { return out_; }
  void skip_to(unsigned char* out) {
    out_ = out;
    buffer_ = 0;
    bits_ = 0;
  }
  // Appends the codes of `size` bytes: table[byte] holds the code (bit-reversed, as deflate
  // sends Huffman codes) in its low 16 bits and the code's length above them.
  void put_codes(const unsigned char* in, std::size_t size, const std::uint32_t* table);

 private:
  void flush_bytes() {
    std::memcpy(out_, &buffer_, 8);
    const int bytes = bits_ >> 3;
    out_ += bytes;
    bits_ &= 7;
    buffer_ = bytes == 8 ? 0 : buffer_ >> (8 * bytes);
  }

  unsigned char* out_;
  std::uint64_t buffer_ = 0;
  int bits_ = 0;  // at most 7 between calls
};

// Appends a stored block of `size` bytes (at most 65,535), final when `last`.
void put_stored_block(const unsigned char* in, std::size_t size, bool last, BitWriter& out);

// Appends a block holding `size` (at least 1) copies of `byte` under deflate's fixed Huffman
// codes: the byte, then copies of it at distance 1, 258 bytes at a time (13 bits each). At most
// size / 128 + 8 bytes.
void put_constant_block(unsigned char byte, std::size_t size, bool last, BitWriter& out);

// Appends one block of `size` literals (at least 1) coded with a dynamic Huffman code built
// from their counts, final when `last`. At most 2 * size + 480 bytes.
void put_literal_block(const unsigned char* in, std::size_t size, bool last, BitWriter& out);

// Huffman code lengths of at most `limit` bits for `n` symbols (n at most 288) from their
// counts: every counted symbol gets a code, and so do unused symbols, in order, until two have
// one (a code of one symbol is not a complete code, which inflaters may refuse). Ties between
// counts go to the lower symbol, so the lengths depend on the counts alone.
void code_lengths(const std::uint32_t* counts, int n, int limit, std::uint8_t* lengths);

}  // namespace hearthray::hdf5
