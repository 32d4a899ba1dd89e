// The command-line tool end to end: outputs by extension, bitwise-identical files for any
// thread count, and a clear `error:` with a non-zero exit for bad input.
#include <catch2/catch.hpp>
#include <iterator>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/version.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"

using namespace hearthray::testing;

TEST_CASE("factors writes CSV, JSON, Matrix Market and NPY", "[cli]") {
  const ScratchDir dir("cli-formats");
  write_text(dir / "cube.obj", unit_cube_obj());
  const auto r = run_cli("factors " + (dir / "cube.obj").string() + " --rays 20000 --quiet -o " +
                             (dir / "F.csv").string() + " -o " + (dir / "F.json").string() +
                             " -o " + (dir / "F.mtx").string() + " -o " + (dir / "F.npy").string(),
                         dir);
  REQUIRE(r.status == 0);
  CHECK(r.err.empty());
  const std::string csv = slurp(dir / "F.csv");
  CHECK(csv.rfind("surface,floor,roof,south,north,west,east,surroundings\n", 0) == 0);
  CHECK(slurp(dir / "F.mtx").rfind("%%MatrixMarket matrix coordinate real general", 0) == 0);
  CHECK(slurp(dir / "F.npy").substr(1, 5) == "NUMPY");
  CHECK(slurp(dir / "F.json").find("\"names\"") != std::string::npos);
}

TEST_CASE("one and two threads give identical files", "[cli]") {
  const ScratchDir dir("cli-threads");
  write_text(dir / "cube.obj", unit_cube_obj());
  const std::string base = "factors " + (dir / "cube.obj").string() + " --rays 50000 --quiet ";
  REQUIRE(run_cli(base + "--threads 1 -o " + (dir / "t1.csv").string(), dir).status == 0);
  REQUIRE(run_cli(base + "--threads 2 -o " + (dir / "t2.csv").string(), dir).status == 0);
  CHECK(slurp(dir / "t1.csv") == slurp(dir / "t2.csv"));
  REQUIRE(run_cli(base + "--threads 2 --seed 2 -o " + (dir / "s2.csv").string(), dir).status == 0);
  CHECK(slurp(dir / "t1.csv") != slurp(dir / "s2.csv"));  // the seed does matter
  // Both samplers are there; the other one gives other factors; JSON names the sampler.
  for (const char* s : {"stratified", "sobol"}) {
    const std::string json = (dir / (std::string(s) + ".json")).string();
    REQUIRE(run_cli(base + "--threads 2 --sampler " + s + " -o " + json, dir).status == 0);
    CHECK(slurp(json).find(std::string("\"sampler\": \"") + s + "\"") != std::string::npos);
  }
  CHECK(slurp(dir / "stratified.json") != slurp(dir / "sobol.json"));
  CHECK(run_cli(base + "--sampler halton", dir).status != 0);
}

TEST_CASE("terminal table and check report", "[cli]") {
  const ScratchDir dir("cli-table");
  write_text(dir / "cube.obj", unit_cube_obj());
  auto r = run_cli("factors " + (dir / "cube.obj").string() + " --rays 10000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("floor") != std::string::npos);
  CHECK(r.out.find("surround") != std::string::npos);
  CHECK(r.out.find("largest correction") != std::string::npos);
  r = run_cli("check " + (dir / "cube.obj").string() + " --rays 2000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("closed") != std::string::npos);
  CHECK(r.err.find("warning") == std::string::npos);
}

TEST_CASE("flipped normals are reported by check", "[cli]") {
  const ScratchDir dir("cli-flipped");
  // The roof's triangles with their vertices in reverse order: it now faces out of the cube.
  std::istringstream in(unit_cube_obj());
  std::string obj, group;
  for (std::string line; std::getline(in, line); obj += line + "\n") {
    if (line.rfind("g ", 0) == 0) group = line.substr(2);
    if (group != "roof" || line.rfind("f ", 0) != 0) continue;
    std::istringstream face(line.substr(2));
    line = "f";
    std::vector<std::string> v{std::istream_iterator<std::string>(face), {}};
    for (auto it = v.rbegin(); it != v.rend(); ++it) line += " " + *it;
  }
  write_text(dir / "cube.obj", obj);
  const auto r = run_cli("check " + (dir / "cube.obj").string() + " --rays 2000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.err.find("surface 'roof'") != std::string::npos);
  CHECK(r.err.find("normals") != std::string::npos);
}

TEST_CASE("bad input gives error: and a non-zero exit", "[cli]") {
  const ScratchDir dir("cli-bad");
  write_text(dir / "cube.obj", unit_cube_obj());
  const std::string cube = (dir / "cube.obj").string();
  struct Case {
    std::string args, expect;
  };
  const std::vector<Case> cases = {
      {"factors " + (dir / "missing.obj").string(), "missing.obj"},
      {"factors " + cube + " -o " + (dir / "F.txt").string(), ".csv"},
      {"factors " + cube + " --rays 0", "rays"},
      {"factors " + cube + " --threads -1", "threads"},
      {"factors", "scene"},
      {"nonsense " + cube, "nonsense"},
  };
  for (const Case& c : cases) {
    INFO(c.args);
    const auto r = run_cli(c.args, dir);
    CHECK(r.status != 0);
    CHECK(r.err.find(c.expect) != std::string::npos);
  }
}

TEST_CASE("the version flag prints the version CMake configured", "[cli]") {
  // One home for the version: project(VERSION) -> hearthray/version.hpp -> the tool.
  const ScratchDir dir("cli-version");
  const auto r = run_cli("--version", dir);
  CHECK(r.status == 0);
  CHECK(r.out == std::string("hearthray ") + hearthray::kVersion + "\n");
}

TEST_CASE("factors writes the patch table and VTU beside the matrix, row i = patch i", "[cli]") {
  const ScratchDir dir("cli-patches");
  write_text(dir / "cube.obj", unit_cube_obj());
  const auto r = run_cli("factors " + (dir / "cube.obj").string() + " --rays 5000 --quiet -o " +
                             (dir / "F.csv").string() + " -o " + (dir / "F.mtx").string(),
                         dir);
  REQUIRE(r.status == 0);
  // F.csv and F.mtx share the stem: one patch table and one VTU.
  const std::string table = slurp(dir / "F.patches.csv");
  const std::string vtu = slurp(dir / "F.patches.vtu");
  REQUIRE(!table.empty());
  CHECK(vtu.find("<DataArray type=\"String\" Name=\"surface_names\"") != std::string::npos);
  CHECK(vtu.find("Name=\"patch\"") != std::string::npos);
  // The matrix's rows (first field of each CSV line after the header) are the patches of the
  // table in the same order; the cube's faces are 1 x 1 m (area 1) with inward normals.
  std::istringstream matrix(slurp(dir / "F.csv")), patches(table);
  std::string matrix_line, patch_line;
  std::getline(matrix, matrix_line);
  std::getline(patches, patch_line);
  int row = 0;
  while (std::getline(matrix, matrix_line)) {
    REQUIRE(std::getline(patches, patch_line));
    const std::string name = matrix_line.substr(0, matrix_line.find(','));
    CHECK(patch_line.rfind(std::to_string(row) + "," + name + "," + name + ",", 0) == 0);
    CHECK(patch_line.find(",front,1,") != std::string::npos);
    ++row;
  }
  CHECK(row == 6);
  CHECK(table.find("\n0,floor,floor,0,front,1,0.5,0.5,0,0,0,1,2\n") != std::string::npos);
  CHECK(table.find("\n5,east,east,5,front,1,1,0.5,0.5,-1,0,0,2\n") != std::string::npos);
}

TEST_CASE("factors takes its tallies from the cache like solve", "[cli]") {
  const ScratchDir dir("cli-factors-cache");
  write_text(dir / "cube.obj", unit_cube_obj());
  const std::string base = "factors " + (dir / "cube.obj").string() + " --rays 20000 -o ";
  const auto first = run_cli(base + (dir / "a.csv").string(), dir);
  REQUIRE(first.status == 0);
  CHECK(first.out.find("stored in cache") != std::string::npos);
  const auto second = run_cli(base + (dir / "b.csv").string(), dir);
  REQUIRE(second.status == 0);
  CHECK(second.out.find("view factors: from cache") != std::string::npos);
  CHECK(slurp(dir / "a.csv") == slurp(dir / "b.csv"));
  // Another seed is another key: traced again, different factors.
  const auto other = run_cli(base + (dir / "c.csv").string() + " --seed 7", dir);
  CHECK(other.out.find("stored in cache") != std::string::npos);
  CHECK(slurp(dir / "a.csv") != slurp(dir / "c.csv"));
  const auto uncached = run_cli(base + (dir / "d.csv").string() + " --no-cache", dir);
  REQUIRE(uncached.status == 0);
  CHECK(uncached.out.find("cache not used") != std::string::npos);
  CHECK(slurp(dir / "a.csv") == slurp(dir / "d.csv"));
}
