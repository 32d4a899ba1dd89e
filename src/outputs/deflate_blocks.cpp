#include "outputs/deflate_blocks.hpp"

#include <algorithm>
#include <vector>

namespace hearthray::hdf5 {

namespace {

constexpr int kLiterals = 256;
constexpr int kEndOfBlock = 256;
constexpr int kLiteralLengthCodes = 257;     // HLIT = 257: the literals and the end of block
constexpr int kDistanceCodes = 2;            // HDIST = 2, both one bit long (never used)
constexpr int kMaxLiteralLengthCodes = 286;  // 0-255, end of block, lengths 257-285
constexpr int kMaxCodeLength = 15;           // RFC 1951 3.2.7
// Copy lengths: the base length of symbols 257-285 and their extra bits (RFC 1951 3.2.5).
constexpr int kLengthBase[29] = {3,  4,  5,  6,  7,  8,  9,  10, 11,  13,  15,  17,  19,  23, 27,
                                 31, 35, 43, 51, 59, 67, 83, 99, 115, 131, 163, 195, 227, 258};
constexpr int kLengthExtraBits[29] = {0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2,
                                      2, 3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0};
constexpr int kCodeLengthSymbols = 19;
constexpr int kMaxCodeLengthCodeLength = 7;
// The order in which the code length code's lengths are sent (RFC 1951 3.2.7).
constexpr int kCodeLengthOrder[kCodeLengthSymbols] = {16, 17, 18, 0, 8,  7, 9,  6, 10, 5,
                                                      11, 4,  12, 3, 13, 2, 14, 1, 15};

// Canonical Huffman codes from their lengths (RFC 1951 3.2.2), bit-reversed because deflate
// sends a Huffman code from its most significant bit while the stream fills bytes from their
// least significant bit.
void canonical_codes(const std::uint8_t* lengths, int n, std::uint16_t* codes) {
  int count[kMaxCodeLength + 1] = {};
  for (int s = 0; s < n; ++s) ++count[lengths[s]];
  count[0] = 0;
  int next[kMaxCodeLength + 1] = {};
  for (int bits = 1, code = 0; bits <= kMaxCodeLength; ++bits) {
    code = (code + count[bits - 1]) << 1;
    next[bits] = code;
  }
  for (int s = 0; s < n; ++s) {
    codes[s] = 0;
    for (int bit = 0, code = lengths[s] ? next[lengths[s]]++ : 0; bit < lengths[s]; ++bit)
      codes[s] = std::uint16_t(codes[s] | (((code >> bit) & 1) << (lengths[s] - 1 - bit)));
  }
}

// One symbol of the code length alphabet with its extra bits: 0-15 a length, 16 the previous
// length 3-6 times (2 extra bits), 17 a zero 3-10 times (3 bits), 18 a zero 11-138 times (7).
struct LengthSymbol {
  std::uint8_t symbol, extra;
};
constexpr int kExtraBits[kCodeLengthSymbols] = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
                                                0, 0, 0, 0, 0, 0, 2, 3, 7};

// The code lengths run-length coded as RFC 1951 3.2.7 allows.
std::vector<LengthSymbol> run_length_code(const std::uint8_t* lengths, int n) {
  std::vector<LengthSymbol> out;
  for (int k = 0; k < n;) {
    const std::uint8_t length = lengths[k];
    int run = 1;
    while (k + run < n && lengths[k + run] == length) ++run;
    k += run;
    if (length == 0) {
      for (; run >= 11; run -= std::min(run, 138))
        out.push_back({18, std::uint8_t(std::min(run, 138) - 11)});
      if (run >= 3) out.push_back({17, std::uint8_t(run - 3)});
      if (run >= 3) run = 0;
    } else {
      out.push_back({length, 0});
      for (--run; run >= 3; run -= std::min(run, 6))
        out.push_back({16, std::uint8_t(std::min(run, 6) - 3)});
    }
    for (; run > 0; --run) out.push_back({length, 0});
  }
  return out;
}

// A Huffman code as deflate sends it: bit-reversed.
std::uint32_t reversed(std::uint32_t code, int length) {
  std::uint32_t out = 0;
  for (int bit = 0; bit < length; ++bit) out |= ((code >> bit) & 1) << (length - 1 - bit);
  return out;
}

// Appends literal/length symbol `symbol` under the fixed Huffman code (RFC 1951 3.2.6).
void put_fixed_symbol(int symbol, BitWriter& out) {
  if (symbol < 144)
    out.put(reversed(0x30 + std::uint32_t(symbol), 8), 8);
  else if (symbol < 256)
    out.put(reversed(0x190 + std::uint32_t(symbol - 144), 9), 9);
  else if (symbol < 280)
    out.put(reversed(std::uint32_t(symbol - 256), 7), 7);
  else
    out.put(reversed(0xc0 + std::uint32_t(symbol - 280), 8), 8);
}

// Appends a copy of `length` bytes (3 to 258) at distance 1 under the fixed codes: its length
// symbol and extra bits (RFC 1951 3.2.5), then distance code 0 (5 bits, no extra bits).
void put_copy_of_previous(int length, BitWriter& out) {
  int code = 28;  // 258 has a symbol of its own (285)
  while (kLengthBase[code] > length || (code == 28 && length != 258)) --code;
  put_fixed_symbol(257 + code, out);
  if (kLengthExtraBits[code] > 0)
    out.put(std::uint64_t(length - kLengthBase[code]), kLengthExtraBits[code]);
  out.put(0, 5);
}

}  // namespace

void code_lengths(const std::uint32_t* counts, int n, int limit, std::uint8_t* lengths) {
  std::vector<std::uint64_t> weight(counts, counts + n);
  int used = 0;
  for (std::uint64_t w : weight) used += w > 0 ? 1 : 0;
  for (int s = 0; s < n && used < 2; ++s)
    if (weight[s] == 0) {
      weight[s] = 1;
      ++used;
    }
  std::vector<int> order;
  std::vector<std::uint64_t> node_weight;
  std::vector<int> parent, depth;
  for (;;) {
    order.clear();
    for (int s = 0; s < n; ++s)
      if (weight[s] > 0) order.push_back(s);
    std::sort(order.begin(), order.end(),
              [&](int a, int b) { return weight[a] != weight[b] ? weight[a] < weight[b] : a < b; });
    // Huffman's construction with two queues: the leaves in order of weight, and the inner
    // nodes, made in order of weight; ties take the leaf.
    const int m = int(order.size());
    node_weight.assign(2 * m - 1, 0);
    parent.assign(2 * m - 1, 0);
    for (int k = 0; k < m; ++k) node_weight[k] = weight[order[k]];
    int leaf = 0, inner = m;
    for (int next = m; next < 2 * m - 1; ++next) {
      int pair[2];
      for (int& pick : pair)
        pick = leaf < m && (inner == next || node_weight[leaf] <= node_weight[inner]) ? leaf++
                                                                                      : inner++;
      node_weight[next] = node_weight[pair[0]] + node_weight[pair[1]];
      parent[pair[0]] = parent[pair[1]] = next;
    }
    depth.assign(2 * m - 1, 0);  // the root, 2m - 2, at depth 0
    int deepest = 0;
    for (int k = 2 * m - 3; k >= 0; --k) {
      depth[k] = depth[parent[k]] + 1;
      if (k < m) deepest = std::max(deepest, depth[k]);
    }
    if (deepest <= limit) {
      std::fill(lengths, lengths + n, std::uint8_t(0));
      for (int k = 0; k < m; ++k) lengths[order[k]] = std::uint8_t(depth[k]);
      return;
    }
    // Too deep: flatten the counts (halved, none to zero) and build again; at worst every
    // count becomes 1 and the depth log2(n), within any limit used here.
    for (std::uint64_t& w : weight)
      if (w > 0) w = (w + 1) / 2;
  }
}

template <int kPerFlush, class Symbol>
void BitWriter::put_symbols(const Symbol* in, std::size_t size, const std::uint64_t* table) {
  std::uint64_t buffer = buffer_;
  int bits = bits_;  // at most 7 after each flush
  unsigned char* out = out_;
  auto add = [&](std::uint64_t code) {
    buffer |= (code & 0xffffffff) << bits;
    bits += int(code >> 32);
  };
  auto flush = [&] {
    std::memcpy(out, &buffer, 8);
    const int bytes = bits >> 3;
    out += bytes;
    bits &= 7;
    buffer >>= 8 * bytes;  // bytes <= 7
  };
  std::size_t k = 0;
  for (; k + kPerFlush <= size; k += kPerFlush) {
    for (int j = 0; j < kPerFlush; ++j) add(table[in[k + std::size_t(j)]]);
    flush();
  }
  for (; k < size; ++k) {
    add(table[in[k]]);
    flush();
  }
  buffer_ = buffer;
  bits_ = bits;
  out_ = out;
}

void put_stored_block(const unsigned char* in, std::size_t size, bool last, BitWriter& out) {
  out.put(last ? 1 : 0, 3);  // BFINAL, BTYPE 00
  out.align();
  out.put(size, 16);  // LEN, NLEN (little-endian, now on a byte boundary)
  out.put(~size & 0xffff, 16);
  unsigned char* at = out.out();
  std::memcpy(at, in, size);
  out.skip_to(at + size);
}

void put_constant_block(unsigned char byte, std::size_t size, bool last, BitWriter& out) {
  out.put(last ? 1 : 0, 1);  // BFINAL
  out.put(1, 2);             // BTYPE 01: fixed Huffman codes
  put_fixed_symbol(byte, out);
  std::size_t left = size - 1;
  for (; left >= 258; left -= 258) put_copy_of_previous(258, out);
  if (left >= 3)
    put_copy_of_previous(int(left), out);
  else
    for (; left > 0; --left) put_fixed_symbol(byte, out);
  put_fixed_symbol(kEndOfBlock, out);
}

namespace {

// The header of a dynamic block (RFC 1951 3.2.7) whose literal/length code has the lengths
// `lengths[0..hlit)` (hlit from 257 to 286) and whose distance code is two one-bit codes (only
// distance code 0, distance 1, is ever used); `codes` gets the literal/length codes.
void put_dynamic_header(const std::uint32_t* counts, int hlit, bool last, std::uint8_t* lengths,
                        std::uint16_t* codes, BitWriter& out) {
  code_lengths(counts, hlit, kMaxCodeLength, lengths);
  std::fill(lengths + hlit, lengths + hlit + kDistanceCodes, 1);
  canonical_codes(lengths, hlit, codes);

  const std::vector<LengthSymbol> header = run_length_code(lengths, hlit + kDistanceCodes);
  std::uint32_t header_counts[kCodeLengthSymbols] = {};
  for (const LengthSymbol& s : header) ++header_counts[s.symbol];
  std::uint8_t header_lengths[kCodeLengthSymbols];
  code_lengths(header_counts, kCodeLengthSymbols, kMaxCodeLengthCodeLength, header_lengths);
  std::uint16_t header_codes[kCodeLengthSymbols];
  canonical_codes(header_lengths, kCodeLengthSymbols, header_codes);
  int sent_lengths = kCodeLengthSymbols;  // HCLEN + 4: trailing zeros in the order are implied
  while (sent_lengths > 4 && header_lengths[kCodeLengthOrder[sent_lengths - 1]] == 0)
    --sent_lengths;

  out.put(last ? 1 : 0, 1);  // BFINAL
  out.put(2, 2);             // BTYPE 10: dynamic Huffman codes
  out.put(std::uint64_t(hlit - 257), 5);
  out.put(kDistanceCodes - 1, 5);
  out.put(std::uint64_t(sent_lengths - 4), 4);
  for (int i = 0; i < sent_lengths; ++i) out.put(header_lengths[kCodeLengthOrder[i]], 3);
  for (const LengthSymbol& s : header) {
    out.put(header_codes[s.symbol], header_lengths[s.symbol]);
    if (kExtraBits[s.symbol] > 0) out.put(s.extra, kExtraBits[s.symbol]);
  }
}

// Length symbols (257-285) and extra bits of copies of 3 to 258 bytes (RFC 1951 3.2.5).
struct LengthCode {
  std::uint16_t symbol = 0;
  std::uint8_t extra_bits = 0, extra = 0;
};
struct LengthCodes {
  LengthCode of[259];
  LengthCodes() {
    for (int length = 3; length <= 258; ++length) {
      int code = 28;  // 258 has a symbol of its own (285)
      while (kLengthBase[code] > length || (code == 28 && length != 258)) --code;
      of[length] = {std::uint16_t(257 + code), std::uint8_t(kLengthExtraBits[code]),
                    std::uint8_t(length - kLengthBase[code])};
    }
  }
};
const LengthCodes kLengthCodes;

// The end of the run of bytes equal to in[k] that starts at k.
std::size_t run_end(const unsigned char* in, std::size_t k, std::size_t size) {
  std::uint64_t pattern = 0x0101010101010101ull * in[k];
  std::size_t e = k + 1;
  for (; e + 8 <= size; e += 8) {
    std::uint64_t word;
    std::memcpy(&word, in + e, 8);
    if (word != pattern) return e + std::size_t(__builtin_ctzll(word ^ pattern) >> 3);
  }
  while (e < size && in[e] == in[k]) ++e;
  return e;
}

}  // namespace

void put_literal_block(const unsigned char* in, std::size_t size, bool last, BitWriter& out) {
  std::uint32_t counts[4][kLiterals] = {};  // four tables: fewer stalls on repeated bytes
  std::size_t k = 0;
  for (; k + 4 <= size; k += 4) {
    ++counts[0][in[k]];
    ++counts[1][in[k + 1]];
    ++counts[2][in[k + 2]];
    ++counts[3][in[k + 3]];
  }
  for (; k < size; ++k) ++counts[0][in[k]];
  std::uint32_t literal_counts[kLiteralLengthCodes];
  for (int b = 0; b < kLiterals; ++b)
    literal_counts[b] = counts[0][b] + counts[1][b] + counts[2][b] + counts[3][b];
  literal_counts[kEndOfBlock] = 1;
  std::uint8_t lengths[kLiteralLengthCodes + kDistanceCodes];
  std::uint16_t codes[kLiteralLengthCodes];
  put_dynamic_header(literal_counts, kLiteralLengthCodes, last, lengths, codes, out);
  std::uint64_t table[kLiterals];
  for (int b = 0; b < kLiterals; ++b) table[b] = codes[b] | (std::uint64_t(lengths[b]) << 32);
  out.put_symbols<3>(in, size, table);  // 3 codes of at most 15 bits
  out.put(codes[kEndOfBlock], lengths[kEndOfBlock]);
}

void put_run_block(const unsigned char* in, std::size_t size, bool last, BitWriter& out,
                   std::vector<std::uint16_t>* tokens) {
  // Tokens: a literal (0-255), or a copy at distance 1 (its length + 256, 259 to 514), at
  // most one per byte: written through a pointer into room for all, and counted as they are
  // made (a plane of short runs makes nearly a token a byte).
  tokens->resize(size);
  std::uint16_t* token = tokens->data();
  std::uint32_t counts[kMaxLiteralLengthCodes] = {};
  for (std::size_t k = 0; k < size;) {
    const std::size_t end = run_end(in, k, size);
    const std::uint16_t byte = in[k];
    *token++ = byte;
    ++counts[byte];
    std::size_t copies = end - k - 1;
    for (; copies >= 3; copies -= std::min<std::size_t>(copies, 258)) {
      const std::size_t length = std::min<std::size_t>(copies, 258);
      *token++ = std::uint16_t(256 + length);
      ++counts[kLengthCodes.of[length].symbol];
    }
    counts[byte] += std::uint32_t(copies);  // the rest, fewer than 3, as literals
    for (; copies > 0; --copies) *token++ = byte;
    k = end;
  }
  tokens->resize(std::size_t(token - tokens->data()));
  counts[kEndOfBlock] = 1;
  int hlit = kMaxLiteralLengthCodes;
  while (hlit > kLiteralLengthCodes && counts[hlit - 1] == 0) --hlit;
  std::uint8_t lengths[kMaxLiteralLengthCodes + kDistanceCodes] = {};
  std::uint16_t codes[kMaxLiteralLengthCodes] = {};
  put_dynamic_header(counts, hlit, last, lengths, codes, out);
  // Each token's bits at once: a literal's code, or a copy's length code, its extra bits and
  // distance code 0 (the code "0" of the two one-bit distance codes), at most 21 bits.
  std::uint64_t table[256 + 259] = {};
  for (int t = 0; t < 256; ++t) table[t] = codes[t] | (std::uint64_t(lengths[t]) << 32);
  for (int length = 3; length <= 258; ++length) {
    const LengthCode& copy = kLengthCodes.of[length];
    if (copy.symbol >= hlit) continue;  // not in this block's code: never used
    const int code_bits = lengths[copy.symbol];
    table[256 + length] = (codes[copy.symbol] | (std::uint64_t(copy.extra) << code_bits)) |
                          (std::uint64_t(code_bits + copy.extra_bits + 1) << 32);
  }
  out.put_symbols<2>(tokens->data(), tokens->size(), table);  // 2 tokens of at most 21 bits
  out.put(codes[kEndOfBlock], lengths[kEndOfBlock]);
}

}  // namespace hearthray::hdf5
