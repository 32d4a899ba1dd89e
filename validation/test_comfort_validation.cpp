// Comfort figures against closed forms and a room worked by hand.
//
// Sources: J. R. Howell, "A Catalog of Radiation Heat Transfer Configuration Factors" (sphere
// to a rectangle at one corner; plane element to a parallel and to a perpendicular rectangle at
// one corner: tests/support/closed_forms.hpp, formulas recalled from memory and checked there
// against quadrature); ISO 7726:1998 (mean radiant temperature T_mr^4 = sum F_p-j T_j^4; plane
// radiant temperature; radiant asymmetry as the difference of the plane radiant temperatures
// of the two sides of a small plane element) -- definitions recalled from memory.
// Tolerances: 4 standard errors, each computed here from the exact factors and the ray count,
// not taken from the tool: an angle factor p estimated from N rays is a binomial proportion,
// sd sqrt(p (1 - p) / N); a radiant temperature T_r = (mean over rays of X)^(1/4), where X is
// T_j^4 of the surface ray j hits (each surface j hit with probability F_j), has
// sd(T_r^4) = sqrt((sum_j F_j T_j^8 - T_r^8) / N) and, linearised, sd(T_r) = sd(T_r^4) /
// (4 T_r^3). The body and each plane element are traced with rays of their own (independent
// streams), so the sd of a difference of two plane temperatures is the root sum of squares.
// The standard errors the tool reports are checked against these (within 5 %) rather than
// used as the tolerance, so an inflated error bar cannot hide a biased answer.
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/comfort.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// One a x b rectangle in the plane z = d over [0, a] x [0, b], facing -z (towards the origin).
std::string rectangle_obj(double a, double b, double d) {
  std::ostringstream o;
  o.precision(17);
  o << "v 0 0 " << d << "\nv 0 " << b << " " << d << "\nv " << a << " " << b << " " << d << "\nv "
    << a << " 0 " << d << "\ng rect\nf 1 2 3 4\n";
  return o.str();
}

// Row `name` of comfort.csv as column -> text.
std::map<std::string, std::string> csv_row(const std::string& csv, const std::string& name) {
  std::istringstream in(csv);
  std::string header, line;
  std::getline(in, header);
  auto split = [](const std::string& s) {
    std::vector<std::string> out;
    std::string cell;
    std::istringstream ss(s);
    while (std::getline(ss, cell, ',')) out.push_back(cell);
    return out;
  };
  const std::vector<std::string> keys = split(header);
  while (std::getline(in, line)) {
    const std::vector<std::string> cells = split(line);
    if (cells.empty() || cells[0] != name) continue;
    std::map<std::string, std::string> row;
    for (std::size_t k = 0; k < keys.size() && k < cells.size(); ++k) row[keys[k]] = cells[k];
    return row;
  }
  FAIL("no row " << name << " in comfort.csv");
  return {};
}

double number(const std::map<std::string, std::string>& row, const std::string& key) {
  REQUIRE(row.count(key));
  return std::stod(row.at(key));
}

// One surface seen from a point: its exact angle factor and its (black) temperature.
struct Seen {
  double factor, kelvin;
};

// Exact radiant temperature (sum F_j T_j^4)^(1/4) of a direction set whose factors sum to one.
double radiant_kelvin(const std::vector<Seen>& seen) {
  double m = 0;
  for (const Seen& s : seen) m += s.factor * std::pow(s.kelvin, 4);
  return std::pow(m, 0.25);
}

// Standard deviation of that radiant temperature estimated from n rays (see the top).
double radiant_sd(const std::vector<Seen>& seen, double n) {
  double m = 0, m2 = 0;
  for (const Seen& s : seen) {
    m += s.factor * std::pow(s.kelvin, 4);
    m2 += s.factor * std::pow(s.kelvin, 8);
  }
  const double t = std::pow(m, 0.25);
  return std::sqrt((m2 - m * m) / n) / (4 * t * t * t);
}

// The tool's reported standard error agrees with the one computed here.
void check_reported_se(const std::map<std::string, std::string>& row, const std::string& key,
                       double expected) {
  INFO(key << " reported " << number(row, key) << ", computed " << expected);
  CHECK(number(row, key) == Approx(expected).epsilon(0.05));
}

}  // namespace

TEST_CASE("uniform enclosure: every body and plane sees the enclosure's temperature",
          "[validation]") {
  // ISO 7726: T_mr^4 = sum_j F_j T_j^4 with sum_j F_j = 1, so T_mr = T in a uniform
  // enclosure: exact up to round-off, whatever the ray counts.
  const Scene scene = load_obj_text(box_obj(4, 3, 2.5, 2), "room");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const std::vector<ComfortPoint> points = {{"centre", {2, 1.5, 1.25}, ComfortBody::sphere},
                                            {"corner", {0.3, 2.6, 0.4}, ComfortBody::sphere},
                                            {"seated", {1, 1, 0.6}, ComfortBody::seated},
                                            {"standing", {3, 2, 1.1}, ComfortBody::standing}};
  AngleFactorOptions options;
  options.rays = 5000;
  const std::vector<PointFactors> f = trace_angle_factors(scene, patches, tracer, points, options);
  RadiantField field;
  const double T = 296.4;
  field.radiosity.assign(patches.size(), kStefanBoltzmann * std::pow(T, 4));
  for (std::size_t k = 0; k < points.size(); ++k) {
    INFO(points[k].name);
    const PointComfort c = evaluate_comfort(points[k], f[k], field, {T, 0.1});
    CHECK(std::abs(c.mean_radiant.kelvin - T) < 1e-12 * T);
    CHECK(c.mean_radiant.se_K < 1e-9);
    for (const RadiantTemperature& t : c.plane) CHECK(std::abs(t.kelvin - T) < 1e-12 * T);
    CHECK(c.vertical.delta_K < 1e-9);
    CHECK(c.horizontal.delta_K < 1e-9);
    CHECK(std::abs(c.operative_K - T) < 1e-12 * T);
  }
}

TEST_CASE("sphere and plane element to a rectangle at one corner match the closed forms",
          "[validation]") {
  struct Case {
    double a, b, d;
  };
  for (const Case& k : {Case{1, 2, 0.7}, Case{0.5, 0.5, 1.5}, Case{3, 1, 0.4}}) {
    INFO("a " << k.a << " b " << k.b << " d " << k.d);
    const Scene scene = load_obj_text(rectangle_obj(k.a, k.b, k.d), "rect");
    const PatchSet patches = make_surface_patches(scene);
    const Tracer tracer(scene);
    AngleFactorOptions options;
    options.rays = 200000;
    options.seed = 7;
    const std::vector<ComfortPoint> at = {{"origin", {0, 0, 0}, ComfortBody::sphere}};
    const PointFactors f = trace_angle_factors(scene, patches, tracer, at, options).at(0);

    const double n = double(options.rays);
    const double sphere = sphere_to_rectangle_corner(k.a, k.b, k.d);
    const double got_sphere = factor_to_surface(f.body, patches, 0);
    INFO("sphere " << got_sphere << ", closed form " << sphere << ", "
                   << (got_sphere - sphere) / binomial_sd(sphere, n) << " sd");
    CHECK(std::abs(got_sphere - sphere) < 4 * binomial_sd(sphere, n));

    const double plane = element_to_parallel_rectangle_corner(k.a, k.b, k.d);
    const double got_plane = factor_to_surface(f.plane[plus_z], patches, 0);
    INFO("plane " << got_plane << ", closed form " << plane << ", "
                  << (got_plane - plane) / binomial_sd(plane, n) << " sd");
    CHECK(std::abs(got_plane - plane) < 4 * binomial_sd(plane, n));
    // The down-facing element sees nothing of it.
    CHECK(factor_to_surface(f.plane[minus_z], patches, 0) == 0);
  }
}

TEST_CASE("worked room: mean radiant temperature and asymmetry computed by hand", "[validation]") {
  // A 4 x 3 x 2.5 m room (x, y, z), all surfaces black so that each sends sigma T^4: floor
  // 22 C, ceiling (roof) 35 C, south wall (y = 0) 12 C, the other walls 20 C. A small sphere
  // at the centre (2, 1.5, 1.25). Hand calculation with the catalog factors, each face split
  // into rectangles with a corner at the foot of the perpendicular from the centre.
  const double X = 4, Y = 3, Z = 2.5, hx = X / 2, hy = Y / 2, hz = Z / 2;
  const double Tf = 295.15, Tc = 308.15, Ts = 285.15, Tw = 293.15;
  // Sphere (4 corner rectangles per face).
  const double Fs_floor = 4 * sphere_to_rectangle_corner(hx, hy, hz);
  const double Fs_south = 4 * sphere_to_rectangle_corner(hx, hz, hy);
  const double Fs_west = 4 * sphere_to_rectangle_corner(hy, hz, hx);
  REQUIRE(2 * Fs_floor + 2 * Fs_south + 2 * Fs_west == Approx(1).epsilon(1e-12));
  const double mrt =
      std::pow(Fs_floor * (std::pow(Tf, 4) + std::pow(Tc, 4)) +
                   Fs_south * (std::pow(Ts, 4) + std::pow(Tw, 4)) + 2 * Fs_west * std::pow(Tw, 4),
               0.25);
  // Up-facing element: the ceiling, and the upper halves of the walls (perpendicular).
  const double Fu_ceiling = 4 * element_to_parallel_rectangle_corner(hx, hy, hz);
  const double Fu_south = 2 * element_to_perpendicular_rectangle_corner(hz, hx, hy);
  const double Fu_west = 2 * element_to_perpendicular_rectangle_corner(hz, hy, hx);
  REQUIRE(Fu_ceiling + 2 * Fu_south + 2 * Fu_west == Approx(1).epsilon(1e-9));
  const double walls_up =
      Fu_south * (std::pow(Ts, 4) + std::pow(Tw, 4)) + 2 * Fu_west * std::pow(Tw, 4);
  const double t_up = std::pow(Fu_ceiling * std::pow(Tc, 4) + walls_up, 0.25);
  const double t_down = std::pow(Fu_ceiling * std::pow(Tf, 4) + walls_up, 0.25);
  // Element facing -y (the cold south wall) and +y: the wall ahead, half of floor, ceiling
  // and the side walls.
  const double Fy_wall = 4 * element_to_parallel_rectangle_corner(hx, hz, hy);
  const double Fy_floor = 2 * element_to_perpendicular_rectangle_corner(hy, hx, hz);
  const double Fy_west = 2 * element_to_perpendicular_rectangle_corner(hy, hz, hx);
  REQUIRE(Fy_wall + 2 * Fy_floor + 2 * Fy_west == Approx(1).epsilon(1e-9));
  const double around =
      Fy_floor * (std::pow(Tf, 4) + std::pow(Tc, 4)) + 2 * Fy_west * std::pow(Tw, 4);
  const double t_south = std::pow(Fy_wall * std::pow(Ts, 4) + around, 0.25);
  const double t_north = std::pow(Fy_wall * std::pow(Tw, 4) + around, 0.25);
  // The spread of each traced figure at the rays the scene asks for (200 000 per estimator),
  // from the same exact factors (see the top of the file).
  const double rays = 200000;
  const double sd_mrt = radiant_sd(
      {{Fs_floor, Tf}, {Fs_floor, Tc}, {Fs_south, Ts}, {Fs_south, Tw}, {2 * Fs_west, Tw}}, rays);
  const std::vector<Seen> up = {
      {Fu_ceiling, Tc}, {Fu_south, Ts}, {Fu_south, Tw}, {2 * Fu_west, Tw}};
  const std::vector<Seen> down = {
      {Fu_ceiling, Tf}, {Fu_south, Ts}, {Fu_south, Tw}, {2 * Fu_west, Tw}};
  const std::vector<Seen> north = {
      {Fy_wall, Tw}, {Fy_floor, Tf}, {Fy_floor, Tc}, {2 * Fy_west, Tw}};
  const std::vector<Seen> south = {
      {Fy_wall, Ts}, {Fy_floor, Tf}, {Fy_floor, Tc}, {2 * Fy_west, Tw}};
  REQUIRE(radiant_kelvin(up) == Approx(t_up).epsilon(1e-12));
  REQUIRE(radiant_kelvin(south) == Approx(t_south).epsilon(1e-12));
  const double sd_vertical = std::hypot(radiant_sd(up, rays), radiant_sd(down, rays));
  const double sd_horizontal = std::hypot(radiant_sd(north, rays), radiant_sd(south, rays));

  ScratchDir dir("comfort-worked-room");
  write_text(dir / "room.obj", box_obj(X, Y, Z, 2));
  write_text(dir / "room.toml", R"([mesh]
file = "room.obj"
unit = "m"
[rays]
per_patch = 10_000
[defaults]
emissivity = 1.0
temperature = "20 C"
[surface.floor]
temperature = "22 C"
[surface.roof]
temperature = "35 C"
[surface.south]
temperature = "12 C"
[comfort]
air_temperature = "19 C"
rays = 200_000
[comfort.point.centre]
position = ["2 m", "1.5 m", "1.25 m"]
)");
  const CliResult r =
      run_cli("comfort " + (dir / "room.toml").string() + " -q -o " + (dir / "out").string(), dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  const auto row = csv_row(slurp(dir / "out" / "comfort.csv"), "centre");
  const double got_mrt = number(row, "mean_radiant_C") + 273.15;
  INFO("mean radiant " << got_mrt << " K, hand " << mrt << " K, sd " << sd_mrt << " K");
  CHECK(std::abs(got_mrt - mrt) < 4 * sd_mrt);
  check_reported_se(row, "mean_radiant_se_K", sd_mrt);
  const double vertical = t_up - t_down;  // warm ceiling
  CHECK(row.at("vertical_case") == "warm ceiling");
  INFO("vertical asymmetry " << number(row, "vertical_asymmetry_K") << " K, hand " << vertical
                             << " K, sd " << sd_vertical << " K");
  CHECK(std::abs(number(row, "vertical_asymmetry_K") - vertical) < 4 * sd_vertical);
  check_reported_se(row, "vertical_se_K", sd_vertical);
  CHECK(row.at("horizontal_axis") == "y");
  CHECK(row.at("horizontal_case") == "cool wall");
  INFO("horizontal asymmetry " << number(row, "horizontal_asymmetry_K") << " K, hand "
                               << t_north - t_south << " K, sd " << sd_horizontal << " K");
  CHECK(std::abs(number(row, "horizontal_asymmetry_K") - (t_north - t_south)) < 4 * sd_horizontal);
  check_reported_se(row, "horizontal_se_K", sd_horizontal);
  // Operative temperature, air below 0.2 m/s: the mean of air and mean radiant temperature.
  CHECK(number(row, "operative_C") ==
        Approx(0.5 * 19 + 0.5 * number(row, "mean_radiant_C")).margin(1e-4));
  // The hand values themselves, for the record: t_mr about 22 C, warm-ceiling asymmetry a
  // few kelvin.
  CHECK(mrt - 273.15 > 20);
  CHECK(mrt - 273.15 < 25);
}
