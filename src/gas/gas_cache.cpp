// The gas cache (see gas_cache.hpp): scores on disk under a 128-bit key. Integers
// little-endian byte by byte, doubles as their IEEE bits (cache_io.hpp).
#include "hearthray/gas_cache.hpp"

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "factors/cache_io.hpp"

namespace hearthray {
namespace {

using namespace cache_io;

constexpr char kMagic[8] = {'h', 'r', 'g', 'a', 's', 's', 'c', '\0'};
constexpr std::uint32_t kLayoutVersion = 1;
// magic, layout version + flags, key (2), rows, cells, gases, entries, payload hash (2).
constexpr std::size_t kHeaderBytes = 8 + 8 + 16 + 4 * 8 + 16;

void put_reals(std::string* out, const std::vector<double>& values) {
  for (double x : values) {
    std::uint64_t bits;
    std::memcpy(&bits, &x, sizeof bits);
    put_u64(out, bits);
  }
}

// Rows well formed (ascending columns in range), every score finite and >= 0, no cell with
// more points inside than it sent.
std::string check_scores(const GasScores& s, std::size_t cells) {
  const std::size_t N = s.rows(), P = N - cells;
  if (s.offset.front() != 0 || s.offset.back() != s.column.size())
    return "its rows do not cover its entries";
  for (std::size_t r = 0; r < N; ++r) {
    if (s.offset[r + 1] < s.offset[r]) return "row " + std::to_string(r) + " has an invalid extent";
    for (std::size_t e = s.offset[r]; e < s.offset[r + 1]; ++e) {
      if (s.column[e] >= N) return "row " + std::to_string(r) + " names a column out of range";
      if (e > s.offset[r] && s.column[e] <= s.column[e - 1])
        return "row " + std::to_string(r) + " is not in ascending order";
    }
  }
  for (const std::vector<double>* v : {&s.sum, &s.sq, &s.lost})
    for (double x : *v)
      if (!std::isfinite(x) || x < 0) return "it holds a score that is negative or not finite";
  for (std::size_t c = 0; c < cells; ++c)
    if (s.inside[c] > s.rays[P + c]) return "a cell counts more points than it sent";
  return "";
}

}  // namespace

TallyCacheKey gas_cache_key(const std::string& mesh_bytes, const MeshOptions& mesh,
                            const Scene& scene, const GasCacheSettings& settings) {
  Hasher h;
  h.text(kGasCacheFormat);
  hash_mesh(h, mesh_bytes, mesh, scene, settings.patch_specs, settings.panels);
  h.u64(settings.rays.size());
  for (std::uint64_t n : settings.rays) h.u64(n);
  h.u64(settings.rays_per_cell);
  for (int c : settings.cells) h.u64(std::uint64_t(std::int64_t(c)));
  h.u64(settings.k.size());
  for (double k : settings.k) h.real(k);
  h.u64(settings.seed);
  h.text(sampler_name(settings.sampler));
  return h.finish();
}

std::string gas_cache_path(const std::string& dir, const TallyCacheKey& key) {
  return (std::filesystem::path(dir) / (key.hex() + ".gas")).string();
}

CachedGasScores load_cached_gas_scores(const std::string& dir, const TallyCacheKey& key,
                                       const std::vector<std::uint64_t>& rays, std::size_t cells,
                                       std::size_t gases) {
  CachedGasScores out;
  out.path = gas_cache_path(dir, key);
  std::error_code ec;
  if (!std::filesystem::is_regular_file(out.path, ec)) return out;  // missing
  auto reject = [&](const std::string& why) {
    out.status = CacheStatus::rejected;
    out.reason = why;
    out.scores = GasScores{};
    return out;
  };
  std::string data;
  std::uint32_t flags = 0;
  const std::string head = read_cache_file(out.path, kMagic, kLayoutVersion, key, kHeaderBytes,
                                           "hearthray gas cache file", &data, &flags);
  if (!head.empty()) return reject(head);
  Cursor c{data, kHeadBytes};
  const std::uint64_t rows = c.u64(), n_cells = c.u64(), n_gases = c.u64(), entries = c.u64();
  TallyCacheKey checksum;
  checksum.fnv = c.u64();
  checksum.mix = c.u64();
  if (rows != rays.size() || n_cells != cells || n_gases != gases || cells > rows)
    return reject("it holds " + std::to_string(rows) + " rows, " + std::to_string(n_cells) +
                  " cells and " + std::to_string(n_gases) + " gray gases; the run has " +
                  std::to_string(rays.size()) + ", " + std::to_string(cells) + " and " +
                  std::to_string(gases));
  // Sizes are bounded by the run except `entries`: check it against the length first.
  const std::uint64_t fixed = kHeaderBytes + 8 * (rows + n_cells + rows + 1 + rows * gases);
  const std::uint64_t per_entry = 4 + 16 * gases;
  const std::string body =
      check_cache_body(data, fixed, per_entry, entries, kHeaderBytes, checksum);
  if (!body.empty()) return reject(body);
  GasScores& s = out.scores;
  s.gases = gases;
  s.rays = c.all<std::uint64_t>(rows);
  s.inside = c.all<std::uint64_t>(n_cells);
  s.offset = c.all<std::size_t>(rows + 1);
  s.column = c.all<std::uint32_t>(entries);
  s.sum = c.reals(entries * gases);
  s.sq = c.reals(entries * gases);
  s.lost = c.reals(rows * gases);
  if (s.rays != rays) return reject("its rays per row differ from the run's");
  const std::string problem = check_scores(s, cells);
  if (!problem.empty()) return reject(problem);
  out.status = CacheStatus::hit;
  return out;
}

CacheWrite store_cached_gas_scores(const std::string& dir, const TallyCacheKey& key,
                                   const GasScores& s) {
  std::string payload;
  put_all(&payload, s.rays);
  put_all(&payload, s.inside);
  for (std::size_t o : s.offset) put_u64(&payload, o);
  put_all(&payload, s.column);
  put_reals(&payload, s.sum);
  put_reals(&payload, s.sq);
  put_reals(&payload, s.lost);
  Hasher h;
  h.bytes(payload.data(), payload.size());
  const TallyCacheKey checksum = h.finish();
  std::string data(kMagic, sizeof kMagic);
  put_u32(&data, kLayoutVersion);
  put_u32(&data, 0);
  put_u64(&data, key.fnv);
  put_u64(&data, key.mix);
  put_u64(&data, s.rows());
  put_u64(&data, s.inside.size());
  put_u64(&data, s.gases);
  put_u64(&data, s.column.size());
  put_u64(&data, checksum.fnv);
  put_u64(&data, checksum.mix);
  data += payload;
  return write_cache_file(dir, gas_cache_path(dir, key), data);
}

}  // namespace hearthray
