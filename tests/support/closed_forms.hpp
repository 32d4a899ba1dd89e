// Closed-form view factors used as reference values by the tests and validation cases.
//
// Catalogue numbers refer to J. R. Howell, "A Catalog of Radiation Heat Transfer Configuration
// Factors" (3rd ed., online catalog; the same entries are in the appendix of Siegel & Howell,
// "Thermal Radiation Heat Transfer"). The formulas and the entry numbers are recalled from
// memory and were not checked against the printed catalog; tests/test_closed_forms.cpp checks
// every formula against values stated in the project's issue, against limits, against sum
// rules and reciprocity, and against an independent quadrature of a different formula, so a
// mis-remembered formula would fail there.
#pragma once

#include <array>
#include <functional>
#include <vector>

#include "hearthray/geometry.hpp"

namespace hearthray::testing {

// C-11: from one rectangle a x b to an identical, parallel, directly opposed rectangle at
// distance c. Loses digits to cancellation when c is far larger than a and b (about 1e-5
// relative at c = 1000 a); the cases here stay below c = 100 a.
double parallel_rectangles_aligned(double a, double b, double c);

// C-14: two rectangles at 90 degrees sharing an edge of length l. Factor from the rectangle of
// width w (its extent away from the common edge) to the rectangle of height h.
double perpendicular_rectangles_common_edge(double l, double w, double h);

// Coaxial parallel disks (catalog entry C-41 as recalled; the number is not checked): from the
// disk of radius r1 to the disk of radius r2, their planes a distance h apart.
double coaxial_disks(double r1, double r2, double h);

// B-3 (number as recalled): from a plane element to a parallel rectangle a x b at distance c,
// the element's normal passing through a corner of the rectangle.
double element_to_parallel_rectangle_corner(double a, double b, double c);

// Element to perpendicular rectangle (catalog section B; entry number not recalled): a plane
// element and a rectangle in perpendicular planes. One edge of the rectangle, of length b,
// lies in the element's plane; the rectangle extends a distance a out of that plane; c is the
// distance from the element to the rectangle's plane, and the foot of the perpendicular from
// the element to that plane is a corner of the rectangle.
double element_to_perpendicular_rectangle_corner(double a, double b, double c);

// Sphere to rectangle a x b (catalog section C; entry number not recalled): the sphere's centre
// is at distance d from the rectangle's plane on the normal through one corner. Valid for any
// sphere radius below d (the factor is the rectangle's solid angle seen from the centre over
// 4 pi).
double sphere_to_rectangle_corner(double a, double b, double d);

// Axis-aligned rectangle [x0, x1] x [y0, y1] in a plane z = const.
struct Rect {
  double x0 = 0, x1 = 0, y0 = 0, y1 = 0;
  double area() const { return (x1 - x0) * (y1 - y0); }
};

// Exchange area A1 F12 between two parallel rectangles with parallel edges, in planes a
// distance c apart (in general position: any offsets and sizes). The kernel integrated in
// closed form and summed over the 16 corner combinations (the form given by Siegel & Howell
// for parallel rectangles; recalled from memory).
double parallel_rectangles_exchange_area(const Rect& r1, const Rect& r2, double c);

// From one plate to the other in baffled_plates_obj (meshes.hpp): p x p plates directly
// opposed a distance `gap` apart, a centred opaque q x q baffle half-way. A ray from x on the
// lower plate through the baffle's point b meets the upper plane at 2b - x, so the baffle hides
// from x exactly the rectangle (2 baffle - x) of that plane, and
//   A F = A1 F12 (unobstructed, parallel_rectangles_exchange_area)
//         - integral over the lower plate of F_dA(x -> upper ∩ (2 baffle - x)) dx,
// the element factor by superposition of B-3 over the rectangle's corners, the area integral by
// Gauss-Legendre (`nodes` per piece) on the pieces where no edge of the intersection switches,
// on which the integrand is smooth. Our own construction from those closed forms.
double baffled_plates_factor(double p, double gap, double q, int nodes = 24);

// Factor from an element at `point` with unit normal `normal` to a planar polygon lying wholly
// on the element's front side, by Lambert's contour formula (Hottel & Sarofim, "Radiative
// Transfer", 1967; Siegel & Howell): F = |sum_k gamma_k n . (R_k x R_k+1)/|R_k x R_k+1|| / 2pi.
double element_to_polygon(const Vec3& point, const Vec3& normal, const std::vector<Vec3>& polygon);

// Bounds on the factor between the regular n-gons inscribed in two coaxial disks (the meshes of
// tests/support/meshes.hpp, with corresponding vertices at the same angles). The exchange area
// A1 F12 is an integral of a positive kernel over both surfaces, so it grows with each surface:
// S(inner circles) <= S(polygons) <= S(circles), where the inner circles are those inscribed in
// the polygons (radius r cos(pi/n)). Dividing by the polygon area bounds the polygon factor.
struct Bounds {
  double lower = 0, upper = 0;
};
Bounds coaxial_polygons_bounds(double r1, double r2, double h, int segments);

// Area of the regular n-gon inscribed in a circle of radius r.
double inscribed_polygon_area(double r, int segments);

// Gauss-Legendre nodes and weights on [0, 1] (Newton's method on P_n evaluated by its
// three-term recurrence; Davis & Rabinowitz, "Methods of Numerical Integration", ch. 2).
// Used by the quadrature self-checks.
std::vector<std::array<double, 2>> gauss_legendre_01(int n);

// Standard deviation of a binomial proportion p estimated from n trials, sqrt(p (1 - p) / n):
// the spread of a factor estimated from n rays at its exact value p. Validation cases take
// their tolerances from this, not from the standard errors the tool reports.
double binomial_sd(double p, double n);

// Area average of f over triangle (a, b, c): the triangle split into 4^depth similar pieces
// (midpoint subdivision), f taken at each piece's centroid. Used to average an element factor
// over a patch.
double triangle_average(const Vec3& a, const Vec3& b, const Vec3& c, int depth,
                        const std::function<double(const Vec3&)>& f);

}  // namespace hearthray::testing
