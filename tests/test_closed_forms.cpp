// Self-checks of the closed-form view factors in tests/support/closed_forms.hpp. Each formula
// is recalled from memory (see the header), so each is checked here against something
// independent of it: values stated in the project's issue, limits with elementary answers, sum
// rules (closure of a box), reciprocity, and quadratures of a different formula.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>

#include "support/closed_forms.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

constexpr double kPi = 3.14159265358979323846;

// Integral of f over [0, L] with nodes clustered at 0 (substitution y = L s^4), so that the
// logarithmic edge behaviour of element factors near a common edge is integrated accurately.
double integrate_clustered(const std::function<double(double)>& f, double L, int n) {
  double sum = 0;
  for (const auto& [s, w] : gauss_legendre_01(n)) {
    sum += w * f(L * s * s * s * s) * L * 4 * s * s * s;
  }
  return sum;
}

// Plain Gauss-Legendre on [lo, hi].
double integrate(const std::function<double(double)>& f, double lo, double hi, int n) {
  double sum = 0;
  for (const auto& [s, w] : gauss_legendre_01(n)) sum += w * f(lo + (hi - lo) * s);
  return sum * (hi - lo);
}

// Element at (x, y) in the plane z = 0 to the rectangle r in the plane z = c, as the signed
// sum of four B-3 corner rectangles (B-3 is odd in each side length).
double element_to_parallel_rect(double x, double y, const Rect& r, double c) {
  return element_to_parallel_rectangle_corner(r.x1 - x, r.y1 - y, c) -
         element_to_parallel_rectangle_corner(r.x0 - x, r.y1 - y, c) -
         element_to_parallel_rectangle_corner(r.x1 - x, r.y0 - y, c) +
         element_to_parallel_rectangle_corner(r.x0 - x, r.y0 - y, c);
}

// F from r1 (plane z = 0) to r2 (plane z = c) by Gauss-Legendre over r1 of the B-3 sums.
double parallel_rects_by_quadrature(const Rect& r1, const Rect& r2, double c, int n) {
  const double total = integrate(
      [&](double x) {
        return integrate([&](double y) { return element_to_parallel_rect(x, y, r2, c); }, r1.y0,
                         r1.y1, n);
      },
      r1.x0, r1.x1, n);
  return total / r1.area();
}

}  // namespace

TEST_CASE("C-11 and C-14 give the cube values stated in the issue", "[closed_forms]") {
  // Issue 2 ("Done when"): a unit cube has opposite faces 0.19982 (Howell C-11) and adjacent
  // faces 0.20004 (Howell C-14), values given to 5 decimals.
  CHECK(std::fabs(parallel_rectangles_aligned(1, 1, 1) - 0.19982) < 5e-6);
  CHECK(std::fabs(perpendicular_rectangles_common_edge(1, 1, 1) - 0.20004) < 5e-6);
}

TEST_CASE("C-11 and C-14 close every box (the five other faces sum to 1)", "[closed_forms]") {
  // Summation rule for an enclosure of flat faces (no face sees itself). The box sides enter
  // C-11 and C-14 in different roles, so swapped arguments would break the sums.
  const double boxes[][3] = {{1, 1, 1}, {1, 2, 3}, {0.3, 5, 1.7}, {10, 0.1, 2}};
  for (const auto& box : boxes) {
    const double a = box[0], b = box[1], c = box[2];
    // Face a x b (normal along the c side): opposite face at distance c; two walls a x c
    // share an edge a with it (they extend c, it extends b away from that edge); two walls
    // b x c share an edge b.
    const double floor = parallel_rectangles_aligned(a, b, c) +
                         2 * perpendicular_rectangles_common_edge(a, b, c) +
                         2 * perpendicular_rectangles_common_edge(b, a, c);
    const double wall_ac = parallel_rectangles_aligned(a, c, b) +
                           2 * perpendicular_rectangles_common_edge(a, c, b) +
                           2 * perpendicular_rectangles_common_edge(c, a, b);
    const double wall_bc = parallel_rectangles_aligned(b, c, a) +
                           2 * perpendicular_rectangles_common_edge(b, c, a) +
                           2 * perpendicular_rectangles_common_edge(c, b, a);
    INFO("box " << a << " x " << b << " x " << c);
    CHECK(std::fabs(floor - 1) < 1e-12);
    CHECK(std::fabs(wall_ac - 1) < 1e-12);
    CHECK(std::fabs(wall_bc - 1) < 1e-12);
  }
}

TEST_CASE("C-11 limits: far apart, and long strips (crossed strings)", "[closed_forms]") {
  // Far apart: expanding the kernel cos1 cos2 / (pi r^2) = c^2 / (pi r^4) in the in-plane
  // offset rho gives F = a b / (pi c^2) [1 - 2 <rho^2> / c^2 + O(c^-4)], where the mean square
  // offset between random points of the two rectangles is <rho^2> = (a^2 + b^2) / 6. (Much
  // further apart the formula loses digits to cancellation: ~1e-5 relative at c/a = 1000.)
  const double far = 100;
  CHECK(parallel_rectangles_aligned(1, 2, far) ==
        Approx(2 / (kPi * far * far) * (1 - 5.0 / (3 * far * far))).epsilon(1e-7));
  // Infinitely long strips of width a a distance c apart: F = sqrt(1 + (c/a)^2) - c/a
  // (Hottel's crossed-string method). A length of 1e5 leaves an end effect of order c/b.
  const double a = 1.0, c = 0.6;
  CHECK(std::fabs(parallel_rectangles_aligned(a, 1e5, c) -
                  (std::sqrt(1 + (c / a) * (c / a)) - c / a)) < 1e-4);
  // Large plates close together see almost only each other.
  CHECK(parallel_rectangles_aligned(1e4, 1e4, 1) > 1 - 1e-3);
}

TEST_CASE("C-14 limits and reciprocity", "[closed_forms]") {
  // Long perpendicular strips with a common edge: F12 = (w + h - sqrt(w^2 + h^2)) / (2 w)
  // (crossed strings); a length of 1e5 leaves an end effect of order w/l.
  const double w = 1.0, h = 2.5;
  CHECK(std::fabs(perpendicular_rectangles_common_edge(1e5, w, h) -
                  (w + h - std::sqrt(w * w + h * h)) / (2 * w)) < 1e-4);
  // Reciprocity A1 F12 = A2 F21.
  const double l = 1.3;
  CHECK(l * w * perpendicular_rectangles_common_edge(l, w, h) ==
        Approx(l * h * perpendicular_rectangles_common_edge(l, h, w)).epsilon(1e-13));
}

TEST_CASE("C-11 equals the area average of B-3 element factors", "[closed_forms]") {
  const double cases[][3] = {{1, 1, 1}, {2, 0.5, 0.7}, {0.4, 3, 2}};
  for (const auto& k : cases) {
    const Rect r{0, k[0], 0, k[1]};
    INFO("a, b, c = " << k[0] << ", " << k[1] << ", " << k[2]);
    // The element factor is analytic over the emitter (the planes are apart), so 24-point
    // Gauss-Legendre converges far below the tolerance.
    CHECK(std::fabs(parallel_rects_by_quadrature(r, r, k[2], 24) -
                    parallel_rectangles_aligned(k[0], k[1], k[2])) < 1e-10);
  }
}

TEST_CASE("C-14 equals the area average of perpendicular element factors", "[closed_forms]") {
  // Emitter x in [0, l] along the common edge, y in [0, w] away from it. The wall seen from
  // (x, y) splits at x into two rectangles of edge x and l - x, height h, at distance y.
  const double l = 1.5, w = 0.8, h = 2.0;
  auto element = [&](double x, double y) {
    return element_to_perpendicular_rectangle_corner(h, x, y) +
           element_to_perpendicular_rectangle_corner(h, l - x, y);
  };
  // Split x at l/2 and cluster nodes towards both ends and towards the common edge, where the
  // element factor has logarithmic derivatives.
  auto over_y = [&](double x) {
    return integrate_clustered([&](double y) { return element(x, y); }, w, 48);
  };
  const double half = l / 2;
  const double total = integrate_clustered(over_y, half, 48) +
                       integrate_clustered([&](double x) { return over_y(l - x); }, half, 48);
  CHECK(std::fabs(total / (l * w) - perpendicular_rectangles_common_edge(l, w, h)) < 1e-11);
}

TEST_CASE("element factors agree with Lambert's contour formula", "[closed_forms]") {
  const Vec3 origin{0, 0, 0}, up{0, 0, 1};
  const double cases[][3] = {{1, 1, 1}, {2, 0.3, 0.5}, {0.1, 4, 3}};
  for (const auto& k : cases) {
    const double a = k[0], b = k[1], c = k[2];
    INFO("a, b, c = " << a << ", " << b << ", " << c);
    // B-3: rectangle in the plane z = c with a corner above the element.
    const std::vector<Vec3> parallel = {{0, 0, c}, {a, 0, c}, {a, b, c}, {0, b, c}};
    CHECK(element_to_parallel_rectangle_corner(a, b, c) ==
          Approx(element_to_polygon(origin, up, parallel)).epsilon(1e-12));
    // Perpendicular: rectangle in the plane y = c, edge of length b along x in the element's
    // plane, extending a in z.
    const std::vector<Vec3> perpendicular = {{0, c, 0}, {b, c, 0}, {b, c, a}, {0, c, a}};
    CHECK(element_to_perpendicular_rectangle_corner(a, b, c) ==
          Approx(element_to_polygon(origin, up, perpendicular)).epsilon(1e-12));
  }
  // Four corner rectangles of B-3 around the element cover an infinite plane: F -> 1.
  CHECK(4 * element_to_parallel_rectangle_corner(1e9, 1e9, 1) == Approx(1).epsilon(1e-8));
}

TEST_CASE("coaxial disks: limits, reciprocity and quadrature of element factors",
          "[closed_forms]") {
  // Far apart: F12 -> r2^2 / h^2 (= A2 / (pi h^2)).
  CHECK(coaxial_disks(1, 2, 1e4) == Approx(4e-8).epsilon(1e-6));
  // Reciprocity.
  CHECK(coaxial_disks(1, 2, 0.7) == Approx(4 * coaxial_disks(2, 1, 0.7)).epsilon(1e-13));
  // Close together, a small disk under a large one sees almost only it.
  CHECK(coaxial_disks(1, 2, 1e-4) > 1 - 1e-6);

  // Area average over disk 1 of the element factor to disk 2. Disk 2 is bracketed by its
  // inscribed and circumscribed 4096-gons, whose element factors come from Lambert's formula:
  // the disk value lies between the two averages, and they are within ~1e-6 of each other.
  const double r1 = 0.8, r2 = 1.3, h = 0.9;
  const int n = 4096;
  auto polygon = [&](double radius) {
    std::vector<Vec3> p;
    for (int k = 0; k < n; ++k) {
      const double t = 2 * kPi * k / n;
      p.push_back({radius * std::cos(t), radius * std::sin(t), h});
    }
    return p;
  };
  const auto inner = polygon(r2), outer = polygon(r2 / std::cos(kPi / n));
  auto average = [&](const std::vector<Vec3>& target) {
    return integrate(
        [&](double rho) {
          return element_to_polygon({rho, 0, 0}, {0, 0, 1}, target) * 2 * rho / (r1 * r1);
        },
        0, r1, 24);
  };
  const double lower = average(inner), upper = average(outer);
  const double exact = coaxial_disks(r1, r2, h);
  CHECK(upper - lower < 1e-5);
  CHECK(exact >= lower - 1e-12);
  CHECK(exact <= upper + 1e-12);
}

TEST_CASE("coaxial polygon bounds bracket the disk value and shrink with n", "[closed_forms]") {
  const double r1 = 1, r2 = 1, h = 1;
  const Bounds coarse = coaxial_polygons_bounds(r1, r2, h, 16);
  const Bounds fine = coaxial_polygons_bounds(r1, r2, h, 256);
  CHECK(coarse.lower < fine.lower);
  CHECK(fine.upper < coarse.upper);
  CHECK(fine.upper - fine.lower < 1e-3);
  // The polygon area tends to the circle area as n grows.
  CHECK(inscribed_polygon_area(1, 1 << 16) == Approx(kPi).epsilon(1e-8));
}

TEST_CASE("general parallel rectangles: aligned case, superposition, quadrature",
          "[closed_forms]") {
  const Rect unit{0, 1, 0, 1};
  CHECK(parallel_rectangles_exchange_area(unit, unit, 1) ==
        Approx(parallel_rectangles_aligned(1, 1, 1)).epsilon(1e-12));
  const Rect r1{0, 1, 0, 2}, r2{0.5, 2, -1, 0.7};
  const double c = 0.8;
  // Superposition: r2 split in two along y.
  const Rect lo{0.5, 2, -1, 0.1}, hi{0.5, 2, 0.1, 0.7};
  CHECK(parallel_rectangles_exchange_area(r1, r2, c) ==
        Approx(parallel_rectangles_exchange_area(r1, lo, c) +
               parallel_rectangles_exchange_area(r1, hi, c))
            .epsilon(1e-12));
  // Reciprocity (the formula is symmetric in the two rectangles).
  CHECK(parallel_rectangles_exchange_area(r1, r2, c) ==
        Approx(parallel_rectangles_exchange_area(r2, r1, c)).epsilon(1e-12));
  // Quadrature of B-3 element factors over r1.
  CHECK(std::fabs(parallel_rectangles_exchange_area(r1, r2, c) / r1.area() -
                  parallel_rects_by_quadrature(r1, r2, c, 32)) < 1e-10);
}

TEST_CASE("sphere to rectangle: solid angle, closure at a cube centre, limits", "[closed_forms]") {
  // A sphere at the centre of a cube sees the six faces, 24 corner rectangles, in total 1.
  CHECK(24 * sphere_to_rectangle_corner(0.5, 0.5, 0.5) == Approx(1).epsilon(1e-14));
  // A quarter plane is an eighth of the sphere's view.
  CHECK(sphere_to_rectangle_corner(1e9, 1e9, 1) == Approx(0.125).epsilon(1e-8));
  // Far away: F -> a b / (4 pi d^2).
  CHECK(sphere_to_rectangle_corner(1, 2, 1e4) == Approx(2 / (4 * kPi * 1e8)).epsilon(1e-6));
  // The factor is the solid angle of the rectangle seen from the centre over 4 pi; the solid
  // angle by quadrature: Omega = integral of d / (x^2 + y^2 + d^2)^(3/2) dx dy.
  const double a = 1.2, b = 0.7, d = 0.9;
  const double omega = integrate(
      [&](double x) {
        return integrate([&](double y) { return d / std::pow(x * x + y * y + d * d, 1.5); }, 0, b,
                         32);
      },
      0, a, 32);
  CHECK(sphere_to_rectangle_corner(a, b, d) == Approx(omega / (4 * kPi)).epsilon(1e-10));
}

TEST_CASE("baffled plates: limits and a midpoint sum of Lambert's contour formula",
          "[closed_forms]") {
  // A baffle as wide as the plates hides them from each other entirely; a vanishing one hides
  // nothing (C-11).
  CHECK(std::fabs(baffled_plates_factor(1, 1, 1)) < 1e-12);
  CHECK(std::fabs(baffled_plates_factor(1, 1, 1.5)) < 1e-12);
  CHECK(baffled_plates_factor(1, 1, 1e-4) ==
        Approx(parallel_rectangles_aligned(1, 1, 1)).epsilon(1e-6));
  // The quadrature has converged: twice the nodes change nothing.
  const double f = baffled_plates_factor(1, 1, 0.6);
  CHECK(baffled_plates_factor(1, 1, 0.6, 48) == Approx(f).epsilon(1e-12));
  // Independently: the element factor to the upper plate minus that to the hidden rectangle,
  // both by Lambert's contour formula, summed at the midpoints of a 64 x 64 grid over the
  // lower plate (the midpoint rule's error here is about 1e-5).
  const int n = 64;
  double sum = 0;
  auto square = [](double x0, double x1, double y0, double y1) {
    return std::vector<Vec3>{{x0, y0, 1}, {x1, y0, 1}, {x1, y1, 1}, {x0, y1, 1}};
  };
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n; ++j) {
      const Vec3 x{-0.5 + (i + 0.5) / n, -0.5 + (j + 0.5) / n, 0};
      double visible = element_to_polygon(x, {0, 0, 1}, square(-0.5, 0.5, -0.5, 0.5));
      const double x0 = std::max(-0.5, -0.6 - x.x), x1 = std::min(0.5, 0.6 - x.x);
      const double y0 = std::max(-0.5, -0.6 - x.y), y1 = std::min(0.5, 0.6 - x.y);
      if (x1 > x0 && y1 > y0) visible -= element_to_polygon(x, {0, 0, 1}, square(x0, x1, y0, y1));
      sum += visible / (n * n);
    }
  CHECK(f == Approx(sum).margin(1e-4));
  CHECK(f > 0.01);
}
