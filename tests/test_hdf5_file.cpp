// The HDF5 writer's compressed datasets (src/outputs/hdf5_file.*): chunks shuffled and deflated
// by hearthray and written directly must read back bit for bit through HDF5's own filter
// pipeline (the reader h5py, MATLAB and Julia use), declare only the standard shuffle and
// deflate filters (H5Z_FILTER_SHUFFLE = 2, H5Z_FILTER_DEFLATE = 1 in the HDF5 reference
// manual, so no plugin is needed), and give the same bytes for 1 and 2 threads. The chunk
// compressor's streams must inflate in zlib (RFC 1950/1951), the inflater HDF5 uses, to exactly
// the shuffled bytes.
#include <tbb/task_arena.h>
#include <unistd.h>
#include <zlib.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "outputs/hdf5_deflate.hpp"
#include "outputs/hdf5_file.hpp"

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

// Rows chosen to cross chunk (65,536 rows) and batch (16 chunks) boundaries and to end in a
// partial chunk; the values have long binary expansions, as factors do.
constexpr std::uint64_t kLongRows = 1'100'003;
constexpr std::uint64_t kTableRows = 70'001;

double value(std::uint64_t k) {
  return std::sin(0.001 * double(k)) * 1e-3 + 1.0 / double(k + 3);
}

// Writes the test file, appending in uneven pieces, on `threads` threads.
void write_file(const std::string& path, int threads) {
  tbb::task_arena arena(threads);
  arena.execute([&] {
    hdf5::File file(path, path);
    std::vector<double> long_values(kLongRows);
    for (std::uint64_t k = 0; k < kLongRows; ++k) long_values[k] = value(k);
    hdf5::Dataset doubles(file, "/doubles", H5T_IEEE_F64LE, kLongRows);
    hdf5::Dataset floats(file, "/floats", H5T_IEEE_F32LE, kLongRows);
    hdf5::Dataset counts(file, "/counts", H5T_STD_I32LE, kLongRows);
    std::vector<std::int32_t> count_values(kLongRows);
    for (std::uint64_t k = 0; k < kLongRows; ++k) count_values[k] = std::int32_t(k % 977) - 400;
    for (std::uint64_t first = 0, piece = 1; first < kLongRows; first += piece, piece *= 7) {
      const std::uint64_t n = std::min(piece, kLongRows - first);
      doubles.append(long_values.data() + first, n, H5T_NATIVE_DOUBLE);
      floats.append(long_values.data() + first, n, H5T_NATIVE_DOUBLE);  // converted to float32
      counts.append(count_values.data() + first, n, H5T_NATIVE_INT32);
    }
    doubles.finish();
    floats.finish();
    counts.finish();
    // The same values made chunk by chunk in parallel (write_rows), as the matrix is written.
    hdf5::Dataset made(file, "/made", H5T_IEEE_F64LE, kLongRows);
    made.write_rows([&](std::uint64_t first, std::uint64_t rows, unsigned char* out) {
      for (std::uint64_t k = 0; k < rows; ++k) {
        const double v = value(first + k);
        std::memcpy(out + 8 * k, &v, 8);
      }
    });
    made.finish();
    std::vector<double> table(3 * kTableRows);
    for (std::size_t k = 0; k < table.size(); ++k) table[k] = -value(k);
    file.doubles("/table", table, 3);
    std::vector<std::int8_t> sides(kTableRows);
    for (std::size_t k = 0; k < sides.size(); ++k) sides[k] = std::int8_t(k % 3 == 0);
    file.int8s("/sides", sides);
    file.close();
  });
}

template <class T>
std::vector<T> read_all(hid_t file, const std::string& path, hid_t memory_type, std::size_t count) {
  const hid_t dataset = H5Dopen2(file, path.c_str(), H5P_DEFAULT);
  REQUIRE(dataset >= 0);
  std::vector<T> out(count);
  CHECK(H5Dread(dataset, memory_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, out.data()) >= 0);
  // The filters a reader applies: shuffle, then deflate, and nothing else.
  const hid_t create = H5Dget_create_plist(dataset);
  REQUIRE(H5Pget_nfilters(create) == 2);
  unsigned flags = 0, level = 0;
  std::size_t values = 1;
  char name[64];
  unsigned filter_config = 0;
  CHECK(H5Pget_filter2(create, 0, &flags, nullptr, nullptr, sizeof name, name, &filter_config) ==
        H5Z_FILTER_SHUFFLE);
  CHECK(H5Pget_filter2(create, 1, &flags, &values, &level, sizeof name, name, &filter_config) ==
        H5Z_FILTER_DEFLATE);
  H5Pclose(create);
  H5Dclose(dataset);
  return out;
}

std::string slurp(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

}  // namespace

TEST_CASE("HDF5 compressed datasets read back exactly through HDF5's filters", "[io][hdf5]") {
  const fs::path dir =
      fs::temp_directory_path() / ("hearthray-hdf5-test-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const std::string one = (dir / "one.h5").string(), two = (dir / "two.h5").string();
  write_file(one, 1);
  write_file(two, 2);
  CHECK(slurp(one) == slurp(two));

  const hid_t file = H5Fopen(one.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT);
  REQUIRE(file >= 0);
  const auto doubles = read_all<double>(file, "/doubles", H5T_NATIVE_DOUBLE, kLongRows);
  const auto floats = read_all<float>(file, "/floats", H5T_NATIVE_FLOAT, kLongRows);
  const auto counts = read_all<std::int32_t>(file, "/counts", H5T_NATIVE_INT32, kLongRows);
  const auto made = read_all<double>(file, "/made", H5T_NATIVE_DOUBLE, kLongRows);
  std::uint64_t wrong = 0;
  for (std::uint64_t k = 0; k < kLongRows; ++k) {
    wrong += doubles[k] != value(k);
    wrong += made[k] != value(k);
    wrong += floats[k] != static_cast<float>(value(k));  // IEEE round to nearest
    wrong += counts[k] != std::int32_t(k % 977) - 400;
  }
  CHECK(wrong == 0);
  const auto table = read_all<double>(file, "/table", H5T_NATIVE_DOUBLE, 3 * kTableRows);
  const auto sides = read_all<std::int8_t>(file, "/sides", H5T_NATIVE_INT8, kTableRows);
  for (std::size_t k = 0; k < table.size(); ++k) wrong += table[k] != -value(k);
  for (std::size_t k = 0; k < sides.size(); ++k) wrong += sides[k] != std::int8_t(k % 3 == 0);
  CHECK(wrong == 0);
  // Compressed: the file is smaller than the values it holds.
  CHECK(fs::file_size(one) < kLongRows * (8 + 8 + 4 + 4) + kTableRows * 25);
  H5Fclose(file);
  fs::remove_all(dir);
}

TEST_CASE("HDF5 dataset refuses fewer rows than declared", "[io][hdf5]") {
  const fs::path path =
      fs::temp_directory_path() / ("hearthray-hdf5-short-" + std::to_string(::getpid()) + ".h5");
  {
    hdf5::File file(path.string(), path.string());
    hdf5::Dataset d(file, "/short", H5T_IEEE_F64LE, 10);
    const std::vector<double> values(9, 1.5);
    d.append(values.data(), values.size(), H5T_NATIVE_DOUBLE);
    CHECK_THROWS_AS(d.finish(), std::logic_error);
    CHECK_THROWS_AS(d.append(values.data(), 2, H5T_NATIVE_DOUBLE), std::logic_error);
  }
  fs::remove(path);
}

namespace {

// Inflates a zlib stream (zlib's own inflate, as HDF5's deflate filter calls it) and undoes
// the shuffle; empty when zlib refuses the stream or its length is wrong.
std::vector<unsigned char> inflate_unshuffle(const std::vector<unsigned char>& packed,
                                             std::size_t values, std::size_t bytes) {
  std::vector<unsigned char> shuffled(values * bytes), out(values * bytes);
  uLongf size = uLongf(shuffled.size());
  if (uncompress(shuffled.data(), &size, packed.data(), uLong(packed.size())) != Z_OK ||
      size != shuffled.size())
    return {};
  for (std::size_t b = 0; b < bytes; ++b)
    for (std::size_t v = 0; v < values; ++v) out[v * bytes + b] = shuffled[b * values + v];
  return out;
}

// A plane's bytes of one kind: 0 random (stored), 1 few distinct values (literals), 2 long
// runs (runs), 3 one value (constant), 4 counts shaped like the Fibonacci numbers, which make a
// Huffman code deeper than deflate's 15 bits unless limited (literals).
unsigned char plane_byte(int kind, std::size_t v, std::mt19937_64& random) {
  static const std::uint64_t fibonacci[] = {1,    1,    2,    3,    5,     8,     13,   21,
                                            34,   55,   89,   144,  233,   377,   610,  987,
                                            1597, 2584, 4181, 6765, 10946, 17711, 28657};
  switch (kind) {
    case 0:
      return static_cast<unsigned char>(random());
    case 1:
      return static_cast<unsigned char>(random() % 5);
    case 2:
      return static_cast<unsigned char>(v / 1000);
    case 3:
      return 0x3f;
    default: {
      std::uint64_t draw = random() % 75024, sum = 0;  // 75024: the sum of the 23 numbers
      unsigned char symbol = 0;
      while (symbol < 22 && sum + fibonacci[symbol] <= draw) sum += fibonacci[symbol++];
      return symbol;
    }
  }
}

}  // namespace

TEST_CASE("Chunks deflate plane by plane into zlib streams that inflate exactly", "[io][hdf5]") {
  std::mt19937_64 random(20261202);
  hdf5::ChunkDeflater deflater;
  // Planes of every kind in random order, so every coding follows every other (a stored block
  // or another Huffman block after bits left over by a Huffman block); sizes around the
  // stored-block limit (65,535 bytes) and the sampling threshold (4096 bytes), down to one value.
  for (const std::size_t bytes : {1, 2, 4, 8, 24}) {
    for (const std::size_t values : {1, 3, 4095, 4096, 65535, 65536, 65537, 196608}) {
      std::vector<int> kinds(bytes);
      for (int& kind : kinds) kind = int(random() % 5);
      std::vector<unsigned char> in(values * bytes);
      for (std::size_t v = 0; v < values; ++v)
        for (std::size_t b = 0; b < bytes; ++b) in[v * bytes + b] = plane_byte(kinds[b], v, random);
      std::vector<unsigned char> packed(3, 0xa5);  // reused buffers keep old bytes
      const std::size_t size = deflater.compress(in.data(), values, bytes, &packed);
      REQUIRE(size > 0);
      packed.resize(size);
      INFO(bytes << " bytes, " << values << " values");
      CHECK(inflate_unshuffle(packed, values, bytes) == in);
      // No plane of a full-size chunk grows by more than its block headers (a plane of a few
      // bytes takes a few bytes more: the code lengths of its block).
      if (values >= 4096) CHECK(packed.size() <= in.size() + 5 * bytes * (values / 65535 + 1) + 6);
    }
  }
}

TEST_CASE("Each plane gets the coding that suits it", "[io][hdf5]") {
  std::mt19937_64 random(7);
  std::vector<unsigned char> plane(65536);
  auto coding = [&](int kind) {
    for (std::size_t v = 0; v < plane.size(); ++v) plane[v] = plane_byte(kind, v, random);
    return hdf5::plane_coding(plane.data(), plane.size());
  };
  CHECK(coding(0) == hdf5::PlaneCoding::stored);
  CHECK(hdf5::plane_coding(plane.data(), 4095) == hdf5::PlaneCoding::runs);  // too small to judge
  CHECK(coding(1) == hdf5::PlaneCoding::literals);
  CHECK(coding(2) == hdf5::PlaneCoding::runs);
  CHECK(coding(3) == hdf5::PlaneCoding::constant);
  plane[plane.size() / 2 + 3] = 0;  // one other byte, where no sample looks
  CHECK(hdf5::plane_coding(plane.data(), plane.size()) == hdf5::PlaneCoding::runs);
  CHECK(coding(4) == hdf5::PlaneCoding::literals);
  // Seven random bits: 7 bits of entropy per byte, under the 7.9 of the stored rule.
  for (unsigned char& byte : plane) byte = static_cast<unsigned char>(random() & 0x7f);
  CHECK(hdf5::plane_coding(plane.data(), plane.size()) == hdf5::PlaneCoding::literals);
  // Random bytes each repeated twice: a flat histogram, but runs.
  for (std::size_t k = 0; k < plane.size(); k += 2)
    plane[k] = plane[k + 1] = static_cast<unsigned char>(random());
  CHECK(hdf5::plane_coding(plane.data(), plane.size()) == hdf5::PlaneCoding::runs);
}
