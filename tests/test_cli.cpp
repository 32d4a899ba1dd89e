// The command-line tool end to end: outputs by extension, bitwise-identical files for any
// thread count, and a clear `error:` with a non-zero exit for bad input.
#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace fs = std::filesystem;

namespace {

struct CommandResult {
  int status = 0;
  std::string out, err;
};

std::string slurp(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

fs::path scratch_dir(const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / ("hearthray-cli-" + name);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

CommandResult run(const std::string& args, const fs::path& dir) {
  const std::string cmd = std::string(HEARTHRAY_CLI) + " " + args + " >" +
                          (dir / "stdout.txt").string() + " 2>" + (dir / "stderr.txt").string();
  CommandResult r;
  const int raw = std::system(cmd.c_str());
  r.status = WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
  r.out = slurp(dir / "stdout.txt");
  r.err = slurp(dir / "stderr.txt");
  return r;
}

// Unit cube with inward normals, one group per face (front = counter-clockwise seen from
// inside the cube).
const char* kCubeObj = R"(v 0 0 0
v 1 0 0
v 1 1 0
v 0 1 0
v 0 0 1
v 1 0 1
v 1 1 1
v 0 1 1
g floor
f 1 2 3 4
g roof
f 5 8 7 6
g south
f 1 5 6 2
g north
f 4 3 7 8
g west
f 1 4 8 5
g east
f 2 6 7 3
)";

void write(const fs::path& p, const std::string& text) {
  std::ofstream(p) << text;
}

}  // namespace

TEST_CASE("factors writes CSV, JSON, Matrix Market and NPY", "[cli]") {
  const fs::path dir = scratch_dir("formats");
  write(dir / "cube.obj", kCubeObj);
  const auto r = run("factors " + (dir / "cube.obj").string() + " --rays 20000 --quiet -o " +
                         (dir / "F.csv").string() + " -o " + (dir / "F.json").string() + " -o " +
                         (dir / "F.mtx").string() + " -o " + (dir / "F.npy").string(),
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
  const fs::path dir = scratch_dir("threads");
  write(dir / "cube.obj", kCubeObj);
  const std::string base = "factors " + (dir / "cube.obj").string() + " --rays 50000 --quiet ";
  REQUIRE(run(base + "--threads 1 -o " + (dir / "t1.csv").string(), dir).status == 0);
  REQUIRE(run(base + "--threads 2 -o " + (dir / "t2.csv").string(), dir).status == 0);
  CHECK(slurp(dir / "t1.csv") == slurp(dir / "t2.csv"));
  REQUIRE(run(base + "--threads 2 --seed 2 -o " + (dir / "s2.csv").string(), dir).status == 0);
  CHECK(slurp(dir / "t1.csv") != slurp(dir / "s2.csv"));  // the seed does matter
}

TEST_CASE("terminal table and check report", "[cli]") {
  const fs::path dir = scratch_dir("table");
  write(dir / "cube.obj", kCubeObj);
  auto r = run("factors " + (dir / "cube.obj").string() + " --rays 10000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("floor") != std::string::npos);
  CHECK(r.out.find("surround") != std::string::npos);
  CHECK(r.out.find("largest correction") != std::string::npos);
  r = run("check " + (dir / "cube.obj").string() + " --rays 2000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("closed") != std::string::npos);
  CHECK(r.err.find("warning") == std::string::npos);
}

TEST_CASE("flipped normals are reported by check", "[cli]") {
  const fs::path dir = scratch_dir("flipped");
  std::string obj = kCubeObj;
  obj.replace(obj.find("f 5 8 7 6"), 9, "f 5 6 7 8");  // roof now faces out of the cube
  write(dir / "cube.obj", obj);
  const auto r = run("check " + (dir / "cube.obj").string() + " --rays 2000", dir);
  REQUIRE(r.status == 0);
  CHECK(r.err.find("surface 'roof'") != std::string::npos);
  CHECK(r.err.find("normals") != std::string::npos);
}

TEST_CASE("bad input gives error: and a non-zero exit", "[cli]") {
  const fs::path dir = scratch_dir("bad");
  write(dir / "cube.obj", kCubeObj);
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
    const auto r = run(c.args, dir);
    CHECK(r.status != 0);
    CHECK(r.err.find(c.expect) != std::string::npos);
  }
}
