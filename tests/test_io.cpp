// Output writers: each file is written to memory and read back by an independent parser of its
// published format (RFC 4180 CSV, NIST Matrix Market coordinate format, NumPy .npy 1.0 as
// documented in numpy/lib/format.py, JSON via nlohmann), and the numbers must come back
// bit for bit.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/io.hpp"

using namespace hearthray;

namespace {

// Three patches with awkward names and a self-view, surroundings and back-face losses. The
// numbers are arbitrary test data (not physical factors), chosen with long binary expansions.
ViewFactors sample() {
  ViewFactors vf;
  vf.names = {"hearth", "wall, north", "door \"A\""};
  vf.areas = {2.5, 1.0, 0.75};
  vf.rays = {1000, 2000, 4000};
  vf.F.resize(3, 3);
  vf.F.insert(0, 1) = 0.25;
  vf.F.insert(0, 2) = 0.125;
  vf.F.insert(1, 0) = 0.1;
  vf.F.insert(1, 1) = 0.3;
  vf.F.insert(1, 2) = 1.0 / 3;
  vf.F.insert(2, 0) = 0.2;
  vf.F.makeCompressed();
  vf.to_surroundings = {0.625, 1 - 0.1 - 0.3 - 1.0 / 3, 0.0};
  vf.to_back_faces = {0, 0, 0.8};
  vf.smoothed = true;
  vf.max_correction_sigma = 1.75;
  return vf;
}

std::vector<std::vector<double>> dense(const ViewFactors& vf) {
  std::vector<std::vector<double>> d(vf.size(), std::vector<double>(vf.size() + 1, 0.0));
  for (std::size_t i = 0; i < vf.size(); ++i) {
    for (std::size_t j = 0; j < vf.size(); ++j) {
      d[i][j] = vf.F.coeff(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j));
    }
    d[i].back() = vf.to_surroundings[i];
  }
  return d;
}

// RFC 4180 record splitter (fields may be quoted, quotes doubled inside).
std::vector<std::string> csv_record(const std::string& line) {
  std::vector<std::string> fields(1);
  bool quoted = false;
  for (std::size_t k = 0; k < line.size(); ++k) {
    const char c = line[k];
    if (quoted) {
      if (c == '"' && k + 1 < line.size() && line[k + 1] == '"') {
        fields.back() += '"';
        ++k;
      } else if (c == '"') {
        quoted = false;
      } else {
        fields.back() += c;
      }
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      fields.emplace_back();
    } else {
      fields.back() += c;
    }
  }
  return fields;
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) lines.push_back(line);
  return lines;
}

}  // namespace

TEST_CASE("CSV: header, quoting and values round-trip", "[io]") {
  const ViewFactors vf = sample();
  std::ostringstream out;
  write_factors_csv(out, vf);
  const std::vector<std::string> lines = lines_of(out.str());
  REQUIRE(lines.size() == 4);
  CHECK(lines[0] == "surface,hearth,\"wall, north\",\"door \"\"A\"\"\",surroundings");
  const std::vector<std::string> header = csv_record(lines[0]);
  REQUIRE(header.size() == 5);
  CHECK(header[2] == "wall, north");
  CHECK(header[3] == "door \"A\"");
  const auto expected = dense(vf);
  for (std::size_t i = 0; i < 3; ++i) {
    const std::vector<std::string> row = csv_record(lines[i + 1]);
    REQUIRE(row.size() == 5);
    CHECK(row[0] == vf.names[i]);
    for (std::size_t j = 0; j < 4; ++j) CHECK(std::stod(row[j + 1]) == expected[i][j]);
  }
}

TEST_CASE("Matrix Market: header, names and 1-based entries", "[io]") {
  const ViewFactors vf = sample();
  std::ostringstream out;
  write_factors_mtx(out, vf);
  const std::vector<std::string> lines = lines_of(out.str());
  REQUIRE(!lines.empty());
  CHECK(lines[0] == "%%MatrixMarket matrix coordinate real general");
  std::size_t k = 1;
  std::string comments;
  while (k < lines.size() && !lines[k].empty() && lines[k][0] == '%') comments += lines[k++] + "\n";
  CHECK_THAT(comments, Catch::Contains("hearthray"));
  CHECK_THAT(comments, Catch::Contains("% 1: hearth\n"));
  CHECK_THAT(comments, Catch::Contains("% 2: wall, north\n"));
  CHECK_THAT(comments, Catch::Contains("% 3: door \"A\"\n"));
  REQUIRE(k < lines.size());
  std::istringstream size_line(lines[k++]);
  std::size_t rows = 0, cols = 0, entries = 0;
  size_line >> rows >> cols >> entries;
  CHECK(rows == 3);
  CHECK(cols == 4);
  CHECK(entries == 8);  // six matrix entries and two non-zero surroundings factors
  REQUIRE(lines.size() - k == entries);
  std::vector<std::vector<double>> read(3, std::vector<double>(4, 0.0));
  for (; k < lines.size(); ++k) {
    std::istringstream entry(lines[k]);
    std::size_t i = 0, j = 0;
    double v = 0;
    entry >> i >> j >> v;
    REQUIRE(i >= 1);
    REQUIRE(i <= 3);
    REQUIRE(j >= 1);
    REQUIRE(j <= 4);
    read[i - 1][j - 1] = v;
  }
  CHECK(read == dense(vf));
}

TEST_CASE("NPY 1.0: magic, padded header and little-endian float64 payload", "[io]") {
  const ViewFactors vf = sample();
  std::ostringstream out;
  write_factors_npy(out, vf);
  const std::string bytes = out.str();
  REQUIRE(bytes.size() > 10);
  CHECK(bytes.compare(0, 6, "\x93NUMPY") == 0);
  CHECK(bytes[6] == '\x01');
  CHECK(bytes[7] == '\x00');
  const std::size_t header_len =
      static_cast<unsigned char>(bytes[8]) |
      (static_cast<std::size_t>(static_cast<unsigned char>(bytes[9])) << 8);
  CHECK((10 + header_len) % 64 == 0);
  REQUIRE(bytes.size() == 10 + header_len + 3 * 4 * 8);
  const std::string header = bytes.substr(10, header_len);
  CHECK(header.back() == '\n');
  CHECK(header.rfind("{'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }", 0) == 0);
  CHECK(header.find_first_not_of(' ', header.find('}') + 1) == header_len - 1);
  const auto expected = dense(vf);
  for (std::size_t i = 0; i < 3; ++i) {
    for (std::size_t j = 0; j < 4; ++j) {
      std::uint64_t bits = 0;
      for (int b = 0; b < 8; ++b) {
        bits |= static_cast<std::uint64_t>(
                    static_cast<unsigned char>(bytes[10 + header_len + (i * 4 + j) * 8 + b]))
                << (8 * b);
      }
      double v;
      std::memcpy(&v, &bits, sizeof v);
      CHECK(v == expected[i][j]);
    }
  }
}

TEST_CASE("JSON: fields, dense rows and standard errors", "[io]") {
  const ViewFactors vf = sample();
  FactorReportInfo info;
  info.scene = "kiln.toml";
  info.seed = 7;
  info.rays_per_patch = 1000;
  info.trace_seconds = 1.5;
  info.rays_per_second = 2.5e6;
  info.threads = 2;
  info.smoothing = "maximum likelihood";
  info.smoothing_iterations = 4;
  info.max_row_error = 1e-15;
  info.max_reciprocity_error = 2e-16;
  info.warnings = {"door: many back-face hits"};
  std::ostringstream out;
  write_factors_json(out, vf, info);
  const nlohmann::json doc = nlohmann::json::parse(out.str());
  CHECK(doc.at("names") == nlohmann::json(vf.names));
  CHECK(doc.at("areas_m2").at(0).get<double>() == 2.5);
  CHECK(doc.at("rays").at(2).get<std::uint64_t>() == 4000);
  CHECK(doc.at("smoothed").get<bool>());
  CHECK(doc.at("max_correction_sigma").get<double>() == 1.75);
  CHECK(doc.at("to_back_faces").at(2).get<double>() == 0.8);
  const auto expected = dense(vf);
  REQUIRE(doc.at("F").size() == 3);
  REQUIRE(doc.at("standard_error").size() == 3);
  for (std::size_t i = 0; i < 3; ++i) {
    REQUIRE(doc.at("F").at(i).size() == 4);
    REQUIRE(doc.at("standard_error").at(i).size() == 4);
    for (std::size_t j = 0; j < 4; ++j) {
      const double f = expected[i][j];
      CHECK(doc.at("F").at(i).at(j).get<double>() == f);
      // Binomial standard error sqrt(F(1-F)/N_i) (common practice for a Monte Carlo fraction).
      CHECK(doc.at("standard_error").at(i).at(j).get<double>() ==
            Approx(std::sqrt(f * (1 - f) / static_cast<double>(vf.rays[i]))).epsilon(1e-14));
    }
  }
  const nlohmann::json& i = doc.at("info");
  CHECK(i.at("scene") == "kiln.toml");
  CHECK(i.at("seed") == 7);
  CHECK(i.at("rays_per_patch") == 1000);
  CHECK(i.at("trace_seconds") == 1.5);
  CHECK(i.at("rays_per_second") == 2.5e6);
  CHECK(i.at("threads") == 2);
  CHECK(i.at("smoothing") == "maximum likelihood");
  CHECK(i.at("smoothing_iterations") == 4);
  CHECK(i.at("max_row_error") == 1e-15);
  CHECK(i.at("max_reciprocity_error") == 2e-16);
  CHECK(i.at("warnings").at(0) == "door: many back-face hits");
  CHECK(doc.at("caution").get<std::string>().rfind("Engineering estimate only.", 0) == 0);
}

TEST_CASE("write_factors_file chooses the format by extension and reports bad paths", "[io]") {
  const ViewFactors vf = sample();
  const FactorReportInfo info;
  CHECK_THROWS_WITH(write_factors_file("factors.txt", vf, info),
                    Catch::Contains(".csv, .mtx, .npy, .json"));
  CHECK_THROWS_AS(write_factors_file("factors", vf, info), InputError);
  const std::string missing = "/nonexistent-hearthray-dir/factors.csv";
  CHECK_THROWS_WITH(write_factors_file(missing, vf, info), Catch::Contains(missing));

  const std::filesystem::path dir =
      std::filesystem::temp_directory_path() / ("hearthray_test_io_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const std::string npy = (dir / "F.NPY").string();  // extension matched case-insensitively
  write_factors_file(npy, vf, info);
  std::ifstream in(npy, std::ios::binary);
  std::string magic(6, '\0');
  in.read(&magic[0], 6);
  CHECK(magic == "\x93NUMPY");
  const std::string csv = (dir / "F.csv").string();
  write_factors_file(csv, vf, info);
  std::ifstream csv_in(csv);
  std::string first;
  std::getline(csv_in, first);
  CHECK(first.rfind("surface,hearth,", 0) == 0);
  std::filesystem::remove_all(dir);

  ViewFactors shard = vf;  // two rows only: writers need the full square matrix
  shard.F = SparseMatrix(vf.F.topRows(2));
  shard.rays.pop_back();
  shard.to_surroundings.pop_back();
  shard.to_back_faces.pop_back();
  std::ostringstream out;
  CHECK_THROWS_AS(write_factors_csv(out, shard), InputError);
}

TEST_CASE("terminal table: matrix for few patches, list for many", "[io]") {
  ViewFactors vf = sample();
  vf.names[0] = "a very long hearth surface name indeed";
  std::ostringstream out;
  print_factors_table(out, vf);
  const std::string text = out.str();
  CHECK_THAT(text, Catch::Contains("smoothed"));
  CHECK_THAT(text, Catch::Contains("row sum"));
  CHECK_THAT(text, Catch::Contains("back face"));
  CHECK_THAT(text, Catch::Contains("0.33333"));
  CHECK_THAT(text, Catch::Contains("\u00b10.01369"));  // sqrt(0.25 * 0.75 / 1000)
  CHECK_THAT(text, Catch::Contains("1.00000"));        // every sample row sums to one
  CHECK(text.find(vf.names[0]) == std::string::npos);  // cut to fit
  CHECK_THAT(text, Catch::Contains("a very long hearth"));
  CHECK_THAT(text, Catch::Contains("~"));

  // 15 patches in a ring, each seeing its two neighbours: the list form.
  ViewFactors many;
  const int n = 15;
  many.F.resize(n, n);
  for (int i = 0; i < n; ++i) {
    many.names.push_back("panel " + std::to_string(i));
    many.areas.push_back(1);
    many.rays.push_back(10000);
    const int a = std::min((i + 1) % n, (i + n - 1) % n),
              b = std::max((i + 1) % n, (i + n - 1) % n);
    many.F.insert(i, a) = 0.4;
    many.F.insert(i, b) = 0.4;
    many.to_surroundings.push_back(0.2);
    many.to_back_faces.push_back(0);
  }
  many.F.makeCompressed();
  std::ostringstream list;
  print_factors_table(list, many);
  const std::vector<std::string> lines = lines_of(list.str());
  std::size_t entries = 0, sums = 0;
  for (const std::string& line : lines) {
    entries += line.find("0.400000") != std::string::npos ? 1 : 0;
    sums += line.find("(row sum)") != std::string::npos ? 1 : 0;
  }
  CHECK(entries == 2 * n);
  CHECK(sums == n);
  CHECK_THAT(list.str(), Catch::Contains("(surroundings)"));
  CHECK_THAT(list.str(), Catch::Contains("raw Monte Carlo"));
}
