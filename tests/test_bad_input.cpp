// The bad-input table (issue 11): one row per class of bad input a user can give -- OBJ
// meshes, scene files and the command line -- each run through the built tool, asserting the
// exit code (2: bad input, never 0, 3 or a signal) and the key words of the message. The
// expectations are the tool's own contract (README "Exit status"), common practice; no
// outside source.
#include <sys/stat.h>

#include <catch2/catch.hpp>
#include <string>
#include <vector>

#include "support/cli_run.hpp"
#include "support/meshes.hpp"

using namespace hearthray::testing;

namespace {

struct BadInput {
  const char* what;
  std::string file_name;  // written into the scratch folder when `content` is not empty
  std::string content;
  std::string args;  // the command line after "hearthray"; {} stands for the scratch folder
  std::vector<std::string> expect;
};

const char* const kTri = "v 0 0 0\nv 1 0 0\nv 0 1 0\n";

std::string scene(const std::string& body) {
  return "[mesh]\nfile = \"cube.obj\"\n" + body;
}

std::string replace_dir(std::string args, const std::string& dir) {
  for (std::size_t at; (at = args.find("{}")) != std::string::npos;) args.replace(at, 2, dir);
  return args;
}

std::vector<BadInput> obj_cases() {
  const std::string tet = "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\ng a\nf 1 2 3\ng b\nf 1 4 2\n";
  return {
      {"vertex with two coordinates",
       "a.obj",
       "v 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n",
       "factors {}/a.obj",
       {"a.obj:1", "coordinate"}},
      {"vertex nan",
       "b.obj",
       "v nan 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n",
       "factors {}/b.obj",
       {"b.obj:1", "finite"}},
      {"vertex 1e999",
       "c.obj",
       "v 1e999 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n",
       "factors {}/c.obj",
       {"c.obj:1", "finite"}},
      {"face with two corners",
       "d.obj",
       std::string(kTri) + "f 1 2\n",
       "factors {}/d.obj",
       {"d.obj:4", "at least 3"}},
      {"face index 0",
       "e.obj",
       std::string(kTri) + "f 0 1 2\n",
       "factors {}/e.obj",
       {"e.obj:4", "index 0"}},
      {"face index past the end",
       "f.obj",
       std::string(kTri) + "f 1 2 9\n",
       "factors {}/f.obj",
       {"f.obj:4", "vertex 9", "only 3"}},
      {"negative index before the first vertex",
       "g.obj",
       std::string(kTri) + "f 1 2 -4\n",
       "factors {}/g.obj",
       {"g.obj:4", "counted back"}},
      {"index below LONG_MIN",
       "h.obj",
       std::string(kTri) + "f 1 2 -99999999999999999999\n",
       "factors {}/h.obj",
       {"h.obj:4", "in range"}},
      {"index not an integer",
       "i.obj",
       std::string(kTri) + "f 1 2 x\n",
       "factors {}/i.obj",
       {"i.obj:4", "vertex index"}},
      {"no faces", "j.obj", kTri, "factors {}/j.obj", {"no faces"}},
      {"empty mesh file", "k.obj", "# nothing\n", "factors {}/k.obj", {"no faces"}},
      {"only degenerate triangles",
       "l.obj",
       "v 0 0 0\nv 1 0 0\nv 2 0 0\nf 1 2 3\n",
       "factors {}/l.obj",
       {"no usable triangle"}},
      {"group name not UTF-8",
       "m.obj",
       std::string(kTri) + "g hot\xff\nf 1 2 3\n",
       "factors {}/m.obj",
       {"m.obj:4", "UTF-8", "0xFF"}},
      {"model 1e15 m across",
       "n.obj",
       "v 0 0 0\nv 1e15 0 0\nv 0 1e15 0\nf 1 2 3\n",
       "factors {}/n.obj",
       {"across", "unit"}},
      {"model 1e-15 m across",
       "o.obj",
       "v 0 0 0\nv 1e-15 0 0\nv 0 1e-15 0\nf 1 2 3\n",
       "factors {}/o.obj",
       {"across", "unit"}},
      {"mesh file missing", "", "", "factors {}/nowhere.obj", {"nowhere.obj", "does not exist"}},
      {"mesh is a folder", "", "", "factors {}", {"is a folder"}},
      {"mesh is /dev/zero", "", "", "factors /dev/zero", {"/dev/zero", "not a regular file"}},
      {"mesh is a FIFO", "", "", "factors {}/pipe.obj", {"pipe.obj", "not a regular file"}},
      {"materials without a .mtl file",
       "p.toml",
       "[mesh]\nfile = \"q.obj\"\nsurfaces_from = \"materials\"\n",
       "factors {}/p.toml",
       {"'hot'", "usemtl"}},
      {"mtllib /dev/zero with surfaces from materials",
       "r.toml",
       "[mesh]\nfile = \"s.obj\"\nsurfaces_from = \"materials\"\n",
       "factors {}/r.toml",
       {"material library", "not a regular file"}},
  };
}

std::vector<BadInput> scene_cases() {
  const std::string hot = "[defaults]\ntemperature = \"300 K\"\n";
  return {
      {"TOML syntax error",
       "t1.toml",
       scene("[defaults\nemissivity = 0.5"),
       "factors {}/t1.toml",
       {"t1.toml:"}},
      {"toml++ 3.3.0 assertion input '[.9'", "t2.toml", "[.9", "factors {}/t2.toml", {"t2.toml"}},
      {"toml++ 3.3.0 unreachable input 'a° = 1'",
       "t3.toml",
       "a\xc2\xb0 = 1",
       "factors {}/t3.toml",
       {"t3.toml"}},
      {"no [mesh] table",
       "t4.toml",
       "[rays]\nper_patch = 10\n",
       "factors {}/t4.toml",
       {"no mesh given"}},
      {"unknown top-level key", "t5.toml", scene("[raysx]\n"), "factors {}/t5.toml", {"raysx"}},
      {"mesh file of the scene missing",
       "t6.toml",
       "[mesh]\nfile = \"gone.obj\"\n",
       "factors {}/t6.toml",
       {"gone.obj", "not found"}},
      {"unknown length unit",
       "t7.toml",
       scene("unit = \"furlong\"\n"),
       "factors {}/t7.toml",
       {"furlong"}},
      {"surfaces_from misspelt",
       "t8.toml",
       scene("surfaces_from = \"group\"\n"),
       "factors {}/t8.toml",
       {"surfaces_from"}},
      {"per_patch 0",
       "t9.toml",
       scene("[rays]\nper_patch = 0\n"),
       "factors {}/t9.toml",
       {"per_patch", "positive"}},
      {"seed -1 in the scene",
       "t10.toml",
       scene("[rays]\nseed = -1\n"),
       "factors {}/t10.toml",
       {"seed", "non-negative"}},
      {"per_patch and total",
       "t11.toml",
       scene("[rays]\nper_patch = 10\ntotal = 100\n"),
       "factors {}/t11.toml",
       {"both per_patch and total"}},
      {"per_patch 1e18",
       "t12.toml",
       scene("[rays]\nper_patch = 1_000_000_000_000_000_000\n"),
       "factors {}/t12.toml",
       {"rays", "--force"}},
      {"patches 1e-6 m",
       "t13.toml",
       scene("[defaults]\npatches = \"1e-6 m\"\n"),
       "factors {}/t13.toml",
       {"patches", "GB", "--force"}},
      {"temperature 1e7 K",
       "t14.toml",
       scene("[defaults]\ntemperature = \"1e7 K\"\n"),
       "solve {}/t14.toml",
       {"t14.toml:4", "10000 K"}},
      {"temperature below absolute zero",
       "t15.toml",
       scene("[defaults]\ntemperature = \"-300 C\"\n"),
       "solve {}/t15.toml",
       {"below absolute zero"}},
      {"temperature without a unit",
       "t16.toml",
       scene("[defaults]\ntemperature = \"500\"\n"),
       "solve {}/t16.toml",
       {"temperature", "500"}},
      {"emissivity above 1",
       "t17.toml",
       scene(hot + "emissivity = 1.5\n"),
       "solve {}/t17.toml",
       {"emissivity"}},
      {"surface not in the mesh",
       "t18.toml",
       scene(hot + "[surface.attic]\nemissivity = 0.5\n"),
       "solve {}/t18.toml",
       {"attic", "not in the mesh"}},
      {"scene file is a FIFO", "", "", "factors {}/fifo.toml", {"not a regular file"}},
      {"scene file over 16 MiB", "", "", "factors {}/huge.toml", {"huge.toml", "MB"}},
      {"scene file missing", "", "", "solve {}/nowhere.toml", {"nowhere.toml", "does not exist"}},
  };
}

std::vector<BadInput> command_line_cases() {
  return {
      {"unknown command", "", "", "factor {}/cube.obj", {"unknown command 'factor'"}},
      {"--seed -1", "", "", "factors {}/cube.obj --seed -1", {"--seed"}},
      {"--rays 0", "", "", "factors {}/cube.obj --rays 0", {"--rays"}},
      {"--rays past 2^40", "", "", "factors {}/cube.obj --rays 2199023255552", {"--rays"}},
      {"--rays 2^39: too long a run",
       "",
       "",
       "factors {}/cube.obj --rays 549755813888",
       {"rays", "--force"}},
      {"--threads -1", "", "", "factors {}/cube.obj --threads -1", {"--threads"}},
      {"no scene given", "", "", "factors", {"scene"}},
      {"unknown option", "", "", "factors {}/cube.obj --bogus", {"--bogus"}},
      {"solve on a bare mesh", "", "", "solve {}/cube.obj", {"is a mesh"}},
      {"render without -o", "", "", "render {}/cube.obj", {"--output"}},
  };
}

}  // namespace

TEST_CASE("bad input table: OBJ, scene file and command line end in exit 2 and a clear message",
          "[bad-input]") {
  const ScratchDir dir("bad-input");
  write_text(dir / "cube.obj", unit_cube_obj());
  write_text(dir / "q.obj", std::string(kTri) + "usemtl hot\nf 1 2 3\n");
  write_text(dir / "s.obj", std::string(kTri) + "mtllib /dev/zero\nusemtl hot\nf 1 2 3\n");
  REQUIRE(::mkfifo((dir / "pipe.obj").c_str(), 0600) == 0);
  REQUIRE(::mkfifo((dir / "fifo.toml").c_str(), 0600) == 0);
  write_text(dir / "huge.toml", scene("") + std::string(17 << 20, '#'));

  std::vector<BadInput> cases = obj_cases();
  for (auto more : {scene_cases(), command_line_cases()})
    cases.insert(cases.end(), more.begin(), more.end());
  CHECK(cases.size() >= 40);
  for (const BadInput& c : cases) {
    INFO("case: " << c.what);
    if (!c.content.empty()) write_text(dir / c.file_name, c.content);
    const CliResult r = run_cli(replace_dir(c.args, dir.path().string()) + " --quiet", dir);
    INFO("stderr: " << r.err);
    CHECK(r.status == 2);
    CHECK(r.err.rfind("error:", 0) == 0);
    for (const std::string& e : c.expect) CHECK(r.err.find(e) != std::string::npos);
  }
}
