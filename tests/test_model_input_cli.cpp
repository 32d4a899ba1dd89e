// What a user meets with a model exported from a CAD program, end to end through the tool:
// a flipped wall refused even when [surroundings] would absorb its error, solids exported
// touching named with their place, `check` listing gaps and back hits with coordinates and
// writing them for a viewer, the unit of a bare mesh, and which surfaces took which
// [defaults]. The geometry is the furnace of tests/support/cad_meshes.hpp; the expected places
// and sizes come from its drawing (a support's foot is 0.1 x 0.4 m centred on (1.25, 0.5, 0);
// the door hole is a 0.5 m square, 2 m round), and every ray that reaches a roof turned
// outwards arrives from inside the box, on its back.
#include <catch2/catch.hpp>
#include <cmath>
#include <sstream>
#include <string>

#include "support/cad_meshes.hpp"
#include "support/cli_run.hpp"

using namespace hearthray::testing;

namespace {

// [rays] and thermal input shared by the scenes: the left hearth hot, the rest adiabatic.
const char* const kThermal =
    "[rays]\nper_patch = 4000\n[defaults]\nemissivity = 0.8\nadiabatic = true\n"
    "[surface.hearth_left]\ntemperature = \"1000 C\"\n";

std::string scene(const std::string& mesh, const std::string& extra = "") {
  return "[mesh]\nfile = \"" + mesh + "\"\n" + extra + kThermal;
}

}  // namespace

TEST_CASE("a flipped wall is refused even with surroundings, unless declared", "[model-input]") {
  ScratchDir dir("flipped-wall");
  write_text(dir / "flipped.obj", cad_furnace_obj({false, true}));
  write_text(dir / "furnace.obj", cad_furnace_obj());
  const std::string surroundings = "[surroundings]\ntemperature = \"20 C\"\n";
  write_text(dir / "flipped.toml", scene("flipped.obj", surroundings));
  CliResult r = run_cli("solve " + (dir / "flipped.toml").string() + " --no-cache", dir);
  INFO(r.err);
  CHECK(r.status == 2);
  CHECK(r.err.rfind("error:", 0) == 0);
  CHECK(r.err.find("most rays reaching surface(s) 'roof' (100.0 %) arrive on their back side") !=
        std::string::npos);
  // The advice puts the normals before the surroundings.
  const auto normals = r.err.find("Fix the normals first");
  REQUIRE(normals != std::string::npos);
  CHECK(normals < r.err.find("[surroundings]"));
  CHECK(r.out.find("energy balance") == std::string::npos);

  // Said to be intended: solved, the roof's radiation goes to the surroundings.
  write_text(dir / "declared.toml",
             scene("flipped.obj", surroundings) + "[surface.roof]\nexpect_back_hits = true\n");
  r = run_cli("solve " + (dir / "declared.toml").string() + " --no-cache", dir);
  CHECK(r.status == 0);
  // The furnace drawn right solves as well: the check refuses nothing that is fine.
  write_text(dir / "furnace.toml", scene("furnace.obj", surroundings));
  r = run_cli("solve " + (dir / "furnace.toml").string() + " --no-cache", dir);
  CHECK(r.status == 0);
  CHECK(r.err.find("back side") == std::string::npos);
}

TEST_CASE("solids exported touching are named with their place", "[model-input]") {
  ScratchDir dir("touching");
  write_text(dir / "blocks.obj", cad_furnace_obj({true}));
  CliResult r = run_cli("check " + (dir / "blocks.obj").string(), dir);
  INFO(r.out << r.err);
  CHECK(r.status == 0);
  CHECK(r.out.find("surfaces 'hearth_right' and 'support_a' touch face to face over 0.04 m2 "
                   "around (1.25, 0.5, 0) m") != std::string::npos);
  CHECK(r.out.find("surfaces 'support_a' and 'block' touch face to face over 0.04 m2 around "
                   "(1.25, 0.5, 0.1) m") != std::string::npos);
  CHECK(r.out.find("boolean union") != std::string::npos);
  // Not blamed on the normals of the touching solids.
  CHECK(r.err.find("normals probably point the wrong way") == std::string::npos);

  write_text(dir / "blocks.toml", scene("blocks.obj"));
  r = run_cli("solve " + (dir / "blocks.toml").string() + " --no-cache", dir);
  CHECK(r.status == 2);
  CHECK(r.err.find("solids exported touching") != std::string::npos);
  CHECK(r.err.find("warning: surfaces 'hearth_right' and 'support_b' touch face to face") !=
        std::string::npos);
}

TEST_CASE("check lists gaps and back hits with coordinates and writes them", "[model-input]") {
  ScratchDir dir("where");
  CadFurnace open;
  open.door = false;
  write_text(dir / "open.obj", cad_furnace_obj(open));
  CliResult r = run_cli(
      "check " + (dir / "open.obj").string() + " --where " + (dir / "gaps.obj").string(), dir);
  INFO(r.out << r.err);
  CHECK(r.status == 0);
  CHECK(r.out.find("gap 1: 4 edge(s), 2 m long, from (0, 0, 0) m to (0, 0.5, 0.5) m, edges of "
                   "'hearth_left', 'wall_front', 'end_left'") != std::string::npos);
  const std::string obj = slurp(dir / "gaps.obj");
  std::istringstream lines(obj);
  int edges = 0;
  for (std::string line; std::getline(lines, line);) {
    if (line.rfind("l ", 0) == 0) ++edges;
    if (line.rfind("v ", 0) == 0) {  // every end lies in the door's plane x = 0
      std::istringstream v(line.substr(2));
      double x = 1;
      v >> x;
      CHECK(x == 0);
    }
  }
  CHECK(edges == 4);
  r = run_cli("check " + (dir / "open.obj").string() + " --where " + (dir / "gaps.vtu").string(),
              dir);
  CHECK(slurp(dir / "gaps.vtu").find("NumberOfCells=\"4\"") != std::string::npos);

  write_text(dir / "flipped.obj", cad_furnace_obj({false, true}));
  r = run_cli("check " + (dir / "flipped.obj").string() + " --where " + (dir / "back.obj").string(),
              dir);
  CHECK(r.out.find("1: 'roof': 100.0 % of the rays reaching it, most near") != std::string::npos);
  const std::string back = slurp(dir / "back.obj");
  REQUIRE(back.find("g back_hits_roof") != std::string::npos);
  std::istringstream points(back.substr(back.find("g back_hits_roof")));
  int n = 0;
  for (std::string line; std::getline(points, line);) {
    if (line.rfind("v ", 0) != 0) continue;
    std::istringstream v(line.substr(2));
    double x, y, z;
    v >> x >> y >> z;
    CHECK(std::fabs(z - 1) < 1e-5);  // on the roof (float rays)
    ++n;
  }
  CHECK(n == 200);
  CHECK(run_cli("check " + (dir / "open.obj").string() + " --where x.png", dir).status == 2);
}

TEST_CASE("a bare mesh in millimetres is caught and read with --unit", "[model-input]") {
  ScratchDir dir("unit");
  CadFurnace mm;
  mm.scale = 1000;
  write_text(dir / "furnace_mm.obj", cad_furnace_obj(mm));
  CliResult r = run_cli("check " + (dir / "furnace_mm.obj").string() + " --rays 1000", dir);
  INFO(r.out << r.err);
  // The 2 x 1 x 1 m chamber drawn in mm is sqrt(6) km across when read in metres.
  CHECK(r.err.find("the model is 2449 m across") != std::string::npos);
  CHECK(r.err.find("If the coordinates are in mm (2.449 m across), give the unit: --unit mm") !=
        std::string::npos);
  r = run_cli("check " + (dir / "furnace_mm.obj").string() + " --rays 1000 --unit mm", dir);
  CHECK(r.status == 0);
  CHECK(r.err.find("across") == std::string::npos);
  CHECK(r.out.find("end_left                         4         0.75") != std::string::npos);
  r = run_cli("factors " + (dir / "furnace_mm.obj").string() + " --unit furlong", dir);
  CHECK(r.status == 2);
  CHECK(r.err.find("--unit: unknown length unit 'furlong'") != std::string::npos);
  write_text(dir / "s.toml", scene("furnace_mm.obj"));
  r = run_cli("check " + (dir / "s.toml").string() + " --unit mm", dir);
  CHECK(r.status == 2);
  CHECK(r.err.find("--unit is for a bare mesh") != std::string::npos);
}

TEST_CASE("check and solve say which surfaces took which defaults", "[model-input]") {
  ScratchDir dir("defaults");
  write_text(dir / "furnace.obj", cad_furnace_obj());
  write_text(dir / "s.toml",
             "[mesh]\nfile = \"furnace.obj\"\n[rays]\nper_patch = 4000\n[defaults]\n"
             "emissivity = 0.8\nadiabatic = true\nwall = { U = \"1 W/m2K\", outside = \"20 C\" }\n"
             "[surface.hearth_left]\ntemperature = \"1000 C\"\nwall = false\n");
  const std::string line =
      "[defaults] wall (U = 1 W/m2K, outside 20 C; two-sided sheets take none): taken by "
      "hearth_right, roof, wall_front, wall_back, end_right, end_left, door (7 of 8 surfaces); "
      "switched off by wall = false in hearth_left";
  CliResult r = run_cli("check " + (dir / "s.toml").string() + " --rays 1000", dir);
  INFO(r.out << r.err);
  CHECK(r.out.find(line) != std::string::npos);
  r = run_cli("solve " + (dir / "s.toml").string() + " --no-cache", dir);
  CHECK(r.status == 0);
  CHECK(r.err.find("note: " + line) != std::string::npos);
  CHECK(r.err.find("note: [defaults] adiabatic = true: taken by hearth_right, roof") !=
        std::string::npos);
}
