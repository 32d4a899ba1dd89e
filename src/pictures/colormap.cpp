// Colour maps of our own design. The sequential map (and each half of the diverging map) is a
// smooth path through CIELAB (CIE 1976 L*a*b*, D65 white): a uniform cubic B-spline over control
// points of rising lightness (its ends clamped by repeating the end points), parametrised by arc
// length, so equal steps of the value give equal colour differences (CIE76 Delta E) and lightness
// rises strictly (a B-spline over rising control values rises: it is a moving positive average of
// them). The order of values therefore reads from lightness alone, also in grey print. Lab to sRGB
// follows IEC 61966-2-1 (sRGB primaries, D65, its transfer function).
#include <algorithm>
#include <array>
#include <cmath>

#include "hearthray/render.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

struct Lab {
  double L, a, b;
};

// Control points (L*, a*, b*) of our sequential map, "deep water to sand": ink blue, slate
// blue, teal, sage, sand, cream. Chroma stays moderate and falls towards the light end, so the
// top of the scale is a pale cream rather than a saturated yellow; the hues run blue -> teal ->
// warm sand, never through purple or green-yellow. Chosen by hand so that the whole path stays
// inside the sRGB gamut (a clipped colour would break the equal steps, which the tests check).
constexpr std::array<Lab, 6> kPath{
    {{16, 14, -34}, {32, 0, -28}, {48, -22, -14}, {63, -16, 8}, {78, 4, 28}, {95, 1, 12}}};

// The diverging map's two halves, each from the neutral grey at zero outwards: lightness falls
// by the same steps on both sides; blue-green below zero, copper-red above. Chosen by hand,
// inside the sRGB gamut (checked by the tests).
constexpr std::array<Lab, 5> kBelowZero{
    {{95, 0, 0}, {80, -20, -8}, {63, -32, -14}, {46, -28, -22}, {30, -14, -30}}};
constexpr std::array<Lab, 5> kAboveZero{
    {{95, 0, 0}, {80, 14, 20}, {63, 32, 36}, {46, 46, 34}, {30, 38, 22}}};

double distance(const Lab& p, const Lab& q) {
  return std::sqrt((p.L - q.L) * (p.L - q.L) + (p.a - q.a) * (p.a - q.a) +
                   (p.b - q.b) * (p.b - q.b));
}

// Point u in [0, 1] of the uniform cubic B-spline over the control points path[0..n), ends
// clamped.
Lab spline(const Lab* path, int count, double u) {
  const int n = count + 1;  // spans over the padded control polygon
  auto control = [&](int i) { return path[std::clamp(i - 2, 0, count - 1)]; };
  const double x = u * n;
  const int i = std::min(int(x), n - 1);
  const double t = x - i;
  const double w[4] = {(1 - t) * (1 - t) * (1 - t) / 6, (3 * t * t * t - 6 * t * t + 4) / 6,
                       (-3 * t * t * t + 3 * t * t + 3 * t + 1) / 6, t * t * t / 6};
  Lab c{0, 0, 0};
  for (int k = 0; k < 4; ++k) {
    const Lab& p = control(i + k);
    c.L += w[k] * p.L;
    c.a += w[k] * p.a;
    c.b += w[k] * p.b;
  }
  return c;
}

// A spline sampled densely with its cumulative arc length, for the arc-length lookup.
struct ArcTable {
  static constexpr int kSamples = 2048;
  std::array<Lab, kSamples + 1> point;
  std::array<double, kSamples + 1> arc;
  ArcTable(const Lab* path, int count) {
    arc[0] = 0;
    for (int k = 0; k <= kSamples; ++k) {
      point[std::size_t(k)] = spline(path, count, double(k) / kSamples);
      if (k > 0)
        arc[std::size_t(k)] =
            arc[std::size_t(k - 1)] + distance(point[std::size_t(k - 1)], point[std::size_t(k)]);
    }
  }
  // The point a share t in [0, 1] of the arc length along.
  Lab at(double t) const {
    const double s = t * arc.back();
    const auto it = std::lower_bound(arc.begin() + 1, arc.end() - 1, s);
    const auto k = std::size_t(it - arc.begin());
    const double u = (s - arc[k - 1]) / (arc[k] - arc[k - 1]);
    const Lab& p = point[k - 1];
    const Lab& q = point[k];
    return {p.L + u * (q.L - p.L), p.a + u * (q.a - p.a), p.b + u * (q.b - p.b)};
  }
};

double srgb_encode(double linear) {
  linear = std::clamp(linear, 0.0, 1.0);
  return linear <= 0.0031308 ? 12.92 * linear : 1.055 * std::pow(linear, 1 / 2.4) - 0.055;
}

Colour lab_to_srgb(const Lab& c) {
  // CIE 1976 inverse, D65 reference white.
  const double fy = (c.L + 16) / 116, fx = fy + c.a / 500, fz = fy - c.b / 200;
  constexpr double d = 6.0 / 29.0;
  auto finv = [](double t) { return t > d ? t * t * t : 3 * d * d * (t - 4.0 / 29.0); };
  const double X = 0.95047 * finv(fx), Y = finv(fy), Z = 1.08883 * finv(fz);
  return {srgb_encode(3.2404542 * X - 1.5371385 * Y - 0.4985314 * Z),
          srgb_encode(-0.9692660 * X + 1.8760108 * Y + 0.0415560 * Z),
          srgb_encode(0.0556434 * X - 0.2040259 * Y + 1.0572252 * Z)};
}

bool in_gamut(const Lab& c) {
  const double fy = (c.L + 16) / 116, fx = fy + c.a / 500, fz = fy - c.b / 200;
  constexpr double d = 6.0 / 29.0;
  auto finv = [](double t) { return t > d ? t * t * t : 3 * d * d * (t - 4.0 / 29.0); };
  const double X = 0.95047 * finv(fx), Y = finv(fy), Z = 1.08883 * finv(fz);
  const double rgb[3] = {3.2404542 * X - 1.5371385 * Y - 0.4985314 * Z,
                         -0.9692660 * X + 1.8760108 * Y + 0.0415560 * Z,
                         0.0556434 * X - 0.2040259 * Y + 1.0572252 * Z};
  for (double v : rgb)
    if (v < 0 || v > 1) return false;
  return true;
}

}  // namespace

Colour sequential_colour(double t) {
  static const ArcTable table(kPath.data(), int(kPath.size()));
  if (!(t > 0)) t = 0;  // also NaN
  if (t > 1) t = 1;
  return lab_to_srgb(table.at(t));
}

Colour diverging_colour(double t) {
  static const ArcTable below(kBelowZero.data(), int(kBelowZero.size()));
  static const ArcTable above(kAboveZero.data(), int(kAboveZero.size()));
  if (!(t > 0)) t = 0;  // also NaN
  if (t > 1) t = 1;
  return lab_to_srgb(t < 0.5 ? below.at(1 - 2 * t) : above.at(2 * t - 1));
}

Colour category_colour(std::size_t index) {
  // Hues 30 degrees apart, visited in steps of 150 degrees so neighbouring indices differ
  // strongly; two lightness levels; chroma lowered where the hue would leave the sRGB gamut.
  const std::size_t k = index % kCategoryColours;
  const double hue = (25.0 + 30.0 * double((k * 5) % 12)) * kPi / 180.0;
  const double L = k % 2 ? 62.0 : 76.0;
  double chroma = 44;
  Lab c{L, chroma * std::cos(hue), chroma * std::sin(hue)};
  while (!in_gamut(c) && chroma > 0) {
    chroma -= 1;
    c = {L, chroma * std::cos(hue), chroma * std::sin(hue)};
  }
  return lab_to_srgb(c);
}

}  // namespace hearthray
