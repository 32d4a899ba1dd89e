#include "support/closed_forms.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "hearthray/units.hpp"  // kPi

namespace hearthray::testing {
namespace {

void require_positive(double v, const char* what) {
  if (!(v > 0) || !std::isfinite(v)) {
    throw std::invalid_argument(std::string("closed form: ") + what + " must be positive");
  }
}

}  // namespace

// Howell C-11 (recalled): X = a/c, Y = b/c,
// F = 2/(pi X Y) { ln[(1+X^2)(1+Y^2)/(1+X^2+Y^2)]^(1/2) + X sqrt(1+Y^2) atan(X/sqrt(1+Y^2))
//                  + Y sqrt(1+X^2) atan(Y/sqrt(1+X^2)) - X atan X - Y atan Y }.
double parallel_rectangles_aligned(double a, double b, double c) {
  require_positive(a, "a");
  require_positive(b, "b");
  require_positive(c, "c");
  const double x = a / c, y = b / c;
  const double x2 = x * x, y2 = y * y;
  const double sx = std::sqrt(1 + x2), sy = std::sqrt(1 + y2);
  const double braces = 0.5 * std::log((1 + x2) * (1 + y2) / (1 + x2 + y2)) +
                        x * sy * std::atan(x / sy) + y * sx * std::atan(y / sx) - x * std::atan(x) -
                        y * std::atan(y);
  return 2 / (kPi * x * y) * braces;
}

// Howell C-14 (recalled): H = h/l, W = w/l,
// F = 1/(pi W) { W atan(1/W) + H atan(1/H) - sqrt(H^2+W^2) atan(1/sqrt(H^2+W^2))
//   + 1/4 ln{ (1+W^2)(1+H^2)/(1+W^2+H^2) [W^2(1+W^2+H^2)/((1+W^2)(W^2+H^2))]^(W^2)
//             [H^2(1+H^2+W^2)/((1+H^2)(H^2+W^2))]^(H^2) } }.
// The logarithm of the product is taken as a sum of logarithms (no overflow for large W, H).
double perpendicular_rectangles_common_edge(double l, double w, double h) {
  require_positive(l, "l");
  require_positive(w, "w");
  require_positive(h, "h");
  const double W = w / l, H = h / l;
  const double w2 = W * W, h2 = H * H, s2 = w2 + h2, s = std::sqrt(s2);
  const double log_term = std::log((1 + w2) * (1 + h2) / (1 + s2)) +
                          w2 * std::log(w2 * (1 + s2) / ((1 + w2) * s2)) +
                          h2 * std::log(h2 * (1 + s2) / ((1 + h2) * s2));
  const double braces =
      W * std::atan(1 / W) + H * std::atan(1 / H) - s * std::atan(1 / s) + 0.25 * log_term;
  return braces / (kPi * W);
}

// Coaxial disks (recalled): R1 = r1/h, R2 = r2/h, X = 1 + (1 + R2^2)/R1^2,
// F = [X - sqrt(X^2 - 4 (R2/R1)^2)] / 2, evaluated as 2 q^2 / (X + sqrt(X^2 - 4 q^2)) with
// q = R2/R1 to avoid cancellation when the disks are far apart.
double coaxial_disks(double r1, double r2, double h) {
  require_positive(r1, "r1");
  require_positive(r2, "r2");
  require_positive(h, "h");
  const double R1 = r1 / h, R2 = r2 / h, q = r2 / r1;
  const double X = 1 + (1 + R2 * R2) / (R1 * R1);
  return 2 * q * q / (X + std::sqrt(X * X - 4 * q * q));
}

// B-3 (recalled): A = a/c, B = b/c,
// F = 1/(2 pi) [ A/sqrt(1+A^2) atan(B/sqrt(1+A^2)) + B/sqrt(1+B^2) atan(A/sqrt(1+B^2)) ].
// Odd in a and in b, which the general-position sums in the tests rely on.
double element_to_parallel_rectangle_corner(double a, double b, double c) {
  require_positive(c, "c");
  const double A = a / c, B = b / c;
  const double sa = std::sqrt(1 + A * A), sb = std::sqrt(1 + B * B);
  return (A / sa * std::atan(B / sa) + B / sb * std::atan(A / sb)) / (2 * kPi);
}

// Element to perpendicular rectangle (recalled): X = a/b, Y = c/b,
// F = 1/(2 pi) [ atan(1/Y) - Y/sqrt(X^2+Y^2) atan(1/sqrt(X^2+Y^2)) ].
double element_to_perpendicular_rectangle_corner(double a, double b, double c) {
  require_positive(a, "a");
  require_positive(b, "b");
  require_positive(c, "c");
  const double X = a / b, Y = c / b, s = std::sqrt(X * X + Y * Y);
  return (std::atan(1 / Y) - Y / s * std::atan(1 / s)) / (2 * kPi);
}

// Sphere to rectangle (recalled): D1 = d/a, D2 = d/b,
// F = 1/(4 pi) atan( [1/(D1^2 + D2^2 + D1^2 D2^2)]^(1/2) ).
double sphere_to_rectangle_corner(double a, double b, double d) {
  require_positive(a, "a");
  require_positive(b, "b");
  require_positive(d, "d");
  const double d1 = d / a, d2 = d / b;
  return std::atan(std::sqrt(1 / (d1 * d1 + d2 * d2 + d1 * d1 * d2 * d2))) / (4 * kPi);
}

// A1 F12 = sum_{i,j,k,l} (-1)^(i+j+k+l) G(x_i - xi_k, y_j - eta_l) with
// G(u, v) = 1/(2 pi) [ u sqrt(v^2+c^2) atan(u/sqrt(v^2+c^2)) + v sqrt(u^2+c^2)
//                      atan(v/sqrt(u^2+c^2)) - c^2/2 ln(u^2+v^2+c^2) ].
double parallel_rectangles_exchange_area(const Rect& r1, const Rect& r2, double c) {
  require_positive(c, "c");
  const double c2 = c * c;
  auto G = [c2](double u, double v) {
    const double su = std::sqrt(u * u + c2), sv = std::sqrt(v * v + c2);
    return (u * sv * std::atan(u / sv) + v * su * std::atan(v / su) -
            0.5 * c2 * std::log(u * u + v * v + c2)) /
           (2 * kPi);
  };
  const double x[2] = {r1.x0, r1.x1}, y[2] = {r1.y0, r1.y1};
  const double xi[2] = {r2.x0, r2.x1}, eta[2] = {r2.y0, r2.y1};
  double sum = 0;
  for (int i = 0; i < 2; ++i)
    for (int j = 0; j < 2; ++j)
      for (int k = 0; k < 2; ++k)
        for (int l = 0; l < 2; ++l) {
          const double sign = ((i + j + k + l) % 2 == 0) ? 1.0 : -1.0;
          sum += sign * G(x[i] - xi[k], y[j] - eta[l]);
        }
  return sum;
}

double baffled_plates_factor(double p, double gap, double q, int nodes) {
  require_positive(p, "p");
  require_positive(gap, "gap");
  require_positive(q, "q");
  const double h = p / 2;
  // Element at the origin, a rectangle [x0, x1] x [y0, y1] in a parallel plane at `gap`: B-3
  // at each corner, odd in each coordinate, so corners on either side of the normal just add.
  auto to_rectangle = [gap](double x0, double x1, double y0, double y1) {
    if (x1 <= x0 || y1 <= y0) return 0.0;
    auto f = [gap](double a, double b) { return element_to_parallel_rectangle_corner(a, b, gap); };
    return f(x1, y1) - f(x0, y1) - f(x1, y0) + f(x0, y0);
  };
  // Along one axis, the hidden interval of the upper plate seen from coordinate u:
  // [-h, h] ∩ [-q - u, q - u]; its ends switch at u = +-(q - h).
  std::vector<double> cuts{-h, h};
  for (double u : {q - h, h - q})
    if (u > -h && u < h) cuts.push_back(u);
  std::sort(cuts.begin(), cuts.end());
  const auto rule = gauss_legendre_01(nodes);
  double hidden = 0;
  for (std::size_t a = 0; a + 1 < cuts.size(); ++a)
    for (std::size_t b = 0; b + 1 < cuts.size(); ++b)
      for (const auto& [sx, wx] : rule)
        for (const auto& [sy, wy] : rule) {
          const double x = cuts[a] + sx * (cuts[a + 1] - cuts[a]);
          const double y = cuts[b] + sy * (cuts[b + 1] - cuts[b]);
          const double w = wx * wy * (cuts[a + 1] - cuts[a]) * (cuts[b + 1] - cuts[b]);
          hidden += w * to_rectangle(std::max(-h, -q - x) - x, std::min(h, q - x) - x,
                                     std::max(-h, -q - y) - y, std::min(h, q - y) - y);
        }
  const Rect plate{-h, h, -h, h};
  return (parallel_rectangles_exchange_area(plate, plate, gap) - hidden) / plate.area();
}

double element_to_polygon(const Vec3& point, const Vec3& normal, const std::vector<Vec3>& polygon) {
  double sum = 0;
  const std::size_t n = polygon.size();
  for (std::size_t k = 0; k < n; ++k) {
    const Vec3 r0 = polygon[k] - point;
    const Vec3 r1 = polygon[(k + 1) % n] - point;
    const Vec3 c = cross(r0, r1);
    const double len = norm(c);
    if (len == 0) continue;  // edge in line with the point: it subtends no angle
    const double gamma = std::atan2(len, dot(r0, r1));
    sum += gamma * dot(normal, c) / len;
  }
  return std::fabs(sum) / (2 * kPi);
}

double inscribed_polygon_area(double r, int segments) {
  return 0.5 * segments * r * r * std::sin(2 * kPi / segments);
}

Bounds coaxial_polygons_bounds(double r1, double r2, double h, int segments) {
  if (segments < 3) throw std::invalid_argument("closed form: a polygon needs 3 segments");
  const double shrink = std::cos(kPi / segments);  // inscribed-circle radius over r
  const double a1 = inscribed_polygon_area(r1, segments);
  const double ri1 = r1 * shrink, ri2 = r2 * shrink;
  Bounds b;
  b.lower = kPi * ri1 * ri1 * coaxial_disks(ri1, ri2, h) / a1;
  b.upper = kPi * r1 * r1 * coaxial_disks(r1, r2, h) / a1;
  return b;
}

std::vector<std::array<double, 2>> gauss_legendre_01(int n) {
  std::vector<std::array<double, 2>> nodes(n);
  for (int i = 0; i < n; ++i) {
    double x = std::cos(kPi * (i + 0.75) / (n + 0.5));  // Tricomi's initial guess
    double dp = 0;
    for (int iter = 0; iter < 100; ++iter) {
      double p0 = 1, p1 = x;
      for (int k = 2; k <= n; ++k) {
        const double p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = n * (x * p1 - p0) / (x * x - 1);
      const double dx = p1 / dp;
      x -= dx;
      if (std::fabs(dx) < 1e-15) break;
    }
    // Recompute P_n' at the converged root for the weight.
    double p0 = 1, p1 = x;
    for (int k = 2; k <= n; ++k) {
      const double p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
      p0 = p1;
      p1 = p2;
    }
    dp = n * (x * p1 - p0) / (x * x - 1);
    const double w = 2 / ((1 - x * x) * dp * dp);
    nodes[i] = {0.5 * (1 - x), 0.5 * w};  // map [-1, 1] to [0, 1]
  }
  return nodes;
}

double binomial_sd(double p, double n) {
  if (!(n > 0) || !(p >= 0 && p <= 1))
    throw std::invalid_argument("binomial_sd: need n > 0, 0 <= p <= 1");
  return std::sqrt(p * (1 - p) / n);
}

double triangle_average(const Vec3& a, const Vec3& b, const Vec3& c, int depth,
                        const std::function<double(const Vec3&)>& f) {
  if (depth == 0) return f((a + b + c) / 3.0);
  const Vec3 ab = (a + b) * 0.5, bc = (b + c) * 0.5, ca = (c + a) * 0.5;
  return 0.25 *
         (triangle_average(a, ab, ca, depth - 1, f) + triangle_average(ab, b, bc, depth - 1, f) +
          triangle_average(ca, bc, c, depth - 1, f) + triangle_average(ab, bc, ca, depth - 1, f));
}

}  // namespace hearthray::testing
