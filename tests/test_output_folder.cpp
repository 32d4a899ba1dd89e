// Output folders never half-written (issue 11, item 3): `solve -o DIR` interrupted while it
// writes leaves DIR holding the previous run's complete set of files, byte for byte, or the new
// complete set, never a mix; leftovers of a killed run are hidden and removed by the next run;
// a folder holding files that are not a hearthray run's is refused, untouched. The property is
// the tool's own contract (no outside reference applies); each check fails on a tool that
// writes the files of DIR in place one by one.
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <string>
#include <thread>

#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray::testing;
namespace fs = std::filesystem;
using Files = std::map<std::string, std::string>;  // name -> bytes

namespace {

// The regular files directly in `dir` with their bytes.
Files snapshot(const fs::path& dir) {
  Files files;
  std::error_code ec;
  for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec))
    if (it->is_regular_file()) files[it->path().filename().string()] = slurp(it->path());
  return files;
}

// The names report.json gives for its run, plus report.json itself.
std::set<std::string> named_files(const Files& folder) {
  std::set<std::string> names = {"report.json"};
  const auto it = folder.find("report.json");
  if (it == folder.end()) return {};
  const nlohmann::json report = nlohmann::json::parse(it->second);
  // "files" (since the folder is swapped in whole), or "view_factors"/"files" before.
  const nlohmann::json& files =
      report.contains("files") ? report["files"] : report.at("view_factors").at("files");
  for (const auto& f : files) names.insert(f.get<std::string>());
  return names;
}

std::set<std::string> names_of(const Files& folder) {
  std::set<std::string> names;
  for (const auto& [name, bytes] : folder) names.insert(name);
  return names;
}

// Hidden entries beside `dir` that start with ".<its name>." (our staging folders).
std::vector<std::string> leftovers(const fs::path& dir) {
  std::vector<std::string> found;
  const std::string prefix = "." + dir.filename().string() + ".";
  for (const auto& entry : fs::directory_iterator(dir.parent_path()))
    if (entry.path().filename().string().rfind(prefix, 0) == 0)
      found.push_back(entry.path().filename().string());
  return found;
}

// The hot-floor cube at a small ray count; pictures make the write phase the longest part.
// The view factors of seeds 1 and 2 are traced into the cache first (by `factors`), so every
// solve takes them from there and two runs of one seed write the same bytes (a traced run's
// files give its trace time).
void write_scene(const ScratchDir& dir) {
  write_text(dir / "cube.obj", unit_cube_obj());
  write_text(dir / "scene.toml", std::string("[mesh]\nfile = \"cube.obj\"\nunit = \"m\"\n") +
                                     "[rays]\nper_patch = 2000\n" + kHotFloorColdRoof);
  for (const char* seed : {"1", "2"}) {
    REQUIRE(run_cli("factors " + (dir / "scene.toml").string() + " --quiet --seed " + seed, dir)
                .status == 0);
  }
}

// Sets an environment variable for the runs of the tool while it lives.
class EnvironmentVariable {
 public:
  EnvironmentVariable(const char* name, const std::string& value) : name_(name) {
    ::setenv(name, value.c_str(), 1);
  }
  ~EnvironmentVariable() { ::unsetenv(name_); }

 private:
  const char* name_;
};

std::string solve_args(const ScratchDir& dir, const std::string& out, int seed) {
  return "solve " + (dir / "scene.toml").string() + " -o " + (dir / out).string() + " --seed " +
         std::to_string(seed) + " --quiet";
}

// The two complete sets the tests expect: `previous` (seed 1) in DIR = dir/out, and `fresh`
// (seed 2, the interrupted run's) written to a folder of its own to compare with.
struct TwoRuns {
  Files previous, fresh;
  explicit TwoRuns(const ScratchDir& dir) {
    write_scene(dir);
    REQUIRE(run_cli(solve_args(dir, "out", 1), dir).status == 0);
    previous = snapshot(dir / "out");
    REQUIRE(run_cli(solve_args(dir, "reference", 2), dir).status == 0);
    fresh = snapshot(dir / "reference");
    REQUIRE(names_of(previous) == named_files(previous));
    REQUIRE(names_of(fresh) == named_files(fresh));
    REQUIRE(previous.size() >= 8);
    REQUIRE(fresh.at("report.json") != previous.at("report.json"));
  }
};

}  // namespace

TEST_CASE("solve -o interrupted while writing leaves the previous complete folder",
          "[output-folder]") {
  const ScratchDir dir("output-folder-exit");
  const TwoRuns runs(dir);
  const Files &previous = runs.previous, &fresh = runs.fresh;

  // Ended (as a kill would, no clean-up) after 0, 1, ... files, and after all of them but
  // before the swap: the previous set, byte for byte.
  for (std::size_t n : {std::size_t(0), std::size_t(1), previous.size() / 2, previous.size()}) {
    CAPTURE(n);
    const EnvironmentVariable exit_after("HEARTHRAY_TEST_EXIT_AFTER_FILES", std::to_string(n));
    CHECK(run_cli(solve_args(dir, "out", 2), dir).status == 9);
    CHECK(snapshot(dir / "out") == previous);
  }
  // Ended right after the swap, before the previous files are removed: the new set, whole.
  {
    const EnvironmentVariable exit_after("HEARTHRAY_TEST_EXIT_AFTER_SWAP", "1");
    CHECK(run_cli(solve_args(dir, "out", 2), dir).status == 9);
  }
  CHECK(snapshot(dir / "out") == fresh);
  CHECK_FALSE(leftovers(dir / "out").empty());  // hidden, never taken for results

  // The next normal run succeeds, removes the leftovers and leaves its complete set.
  const CliResult next = run_cli(solve_args(dir, "out", 1), dir);
  INFO(next.err);
  CHECK(next.status == 0);
  CHECK(snapshot(dir / "out") == previous);
  CHECK(leftovers(dir / "out").empty());
}

TEST_CASE("solve -o killed at a random point of its writing leaves one complete set",
          "[output-folder]") {
  const ScratchDir dir("output-folder-kill");
  const TwoRuns runs(dir);
  const Files &previous = runs.previous, &fresh = runs.fresh;
  const fs::path out = dir / "out";
  // SIGKILL once the run has written `after` files of its new set (seen in its staging folder,
  // or, for a tool writing in place, as soon as a file of DIR changes).
  for (std::size_t after : {std::size_t(2), previous.size() - 2}) {
    CAPTURE(after);
    const pid_t child = ::fork();
    REQUIRE(child >= 0);
    if (child == 0) {
      ::setenv("HEARTHRAY_CACHE", dir.cache().c_str(), 1);
      if (!std::freopen("/dev/null", "w", stdout) || !std::freopen("/dev/null", "w", stderr))
        std::_Exit(120);
      const std::string scene = (dir / "scene.toml").string(), folder = out.string();
      ::execl(HEARTHRAY_CLI, HEARTHRAY_CLI, "solve", scene.c_str(), "-o", folder.c_str(), "--seed",
              "2", "--quiet", static_cast<char*>(nullptr));
      std::_Exit(127);
    }
    const fs::path staging = dir / (".out.hearthray-partial-" + std::to_string(child));
    int status = 0;
    for (int poll = 0; poll < 30000; ++poll) {  // at most about 30 s
      std::error_code ec;
      std::size_t staged = 0;
      for (fs::directory_iterator it(staging, ec), end; !ec && it != end; it.increment(ec))
        ++staged;
      if (staged >= after || snapshot(out) != previous) break;
      if (::waitpid(child, &status, WNOHANG) == child) break;  // finished first: allowed
      std::this_thread::sleep_for(std::chrono::milliseconds(1));
    }
    ::kill(child, SIGKILL);
    ::waitpid(child, &status, 0);
    const Files now = snapshot(out);
    CHECK((now == previous || now == fresh));
    // Back to the previous set for the next round.
    REQUIRE(run_cli(solve_args(dir, "out", 1), dir).status == 0);
    REQUIRE(snapshot(out) == previous);
  }
  CHECK(leftovers(out).empty());
}

TEST_CASE("solve -o refuses a folder holding files that are not a hearthray run's",
          "[output-folder]") {
  const ScratchDir dir("output-folder-refuse");
  write_scene(dir);
  // A folder of the user's: refused before any work (seed 3: no ray tallies traced and cached),
  // left untouched.
  fs::create_directories(dir / "mine");
  write_text(dir / "mine" / "notes.txt", "my notes\n");
  const Files cached = snapshot(dir.cache());
  const CliResult r = run_cli(solve_args(dir, "mine", 3), dir);
  CHECK(r.status == 2);
  CHECK(r.err.find("no hearthray report.json (notes.txt)") != std::string::npos);
  CHECK(r.err.find("choose another folder") != std::string::npos);
  CHECK(snapshot(dir / "mine") == Files{{"notes.txt", "my notes\n"}});
  CHECK(snapshot(dir.cache()) == cached);
  CHECK(leftovers(dir / "mine").empty());

  // A previous run's folder with a file of the user's added: refused, naming the file.
  REQUIRE(run_cli(solve_args(dir, "out", 1), dir).status == 0);
  write_text(dir / "out" / "notes.txt", "my notes\n");
  const Files before = snapshot(dir / "out");
  const CliResult again = run_cli(solve_args(dir, "out", 1), dir);
  CHECK(again.status == 2);
  CHECK(again.err.find("does not name (notes.txt)") != std::string::npos);
  CHECK(snapshot(dir / "out") == before);

  // An empty folder is filled.
  fs::create_directories(dir / "empty");
  CHECK(run_cli(solve_args(dir, "empty", 1), dir).status == 0);
  const Files filled = snapshot(dir / "empty");
  CHECK(names_of(filled) == named_files(filled));
}
