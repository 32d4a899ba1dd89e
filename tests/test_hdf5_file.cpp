// The HDF5 writer's compressed datasets (src/outputs/hdf5_file.*): chunks shuffled and deflated
// by hearthray and written directly must read back bit for bit through HDF5's own filter
// pipeline (the reader h5py, MATLAB and Julia use), declare only the standard shuffle and
// deflate filters (H5Z_FILTER_SHUFFLE = 2, H5Z_FILTER_DEFLATE = 1 in the HDF5 reference
// manual, so no plugin is needed), and give the same bytes for 1 and 2 threads.
#include <tbb/task_arena.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

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
  std::uint64_t wrong = 0;
  for (std::uint64_t k = 0; k < kLongRows; ++k) {
    wrong += doubles[k] != value(k);
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
  CHECK(fs::file_size(one) < kLongRows * (8 + 4 + 4) + kTableRows * 25);
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
