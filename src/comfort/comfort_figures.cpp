// Comfort figures from angle factors and solved radiosities (see include/hearthray/comfort.hpp):
// radiant temperatures, radiant asymmetry against ISO 7730 / ASHRAE 55, operative temperature.
#include <algorithm>
#include <cmath>

#include "hearthray/comfort.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

// The percentage-dissatisfied curves of ISO 7730:2005, sec. 6.3 (Figure 4), as
// PD = 100 / (1 + exp(c0 - c1 dt)) - shift for dt below `range` (recalled from memory; not
// checked against the printed standard). Limits: ISO 7730 Table A.4 (categories A and B) and
// ASHRAE 55 (allowable radiant temperature asymmetry), also recalled.
struct Curve {
  double c0, c1, shift, range, limit;
};
const Curve& curve(AsymmetryCase c) {
  static const Curve warm_ceiling{2.84, 0.174, 5.5, 23, 5};
  static const Curve cool_wall{6.61, 0.345, 0.0, 15, 10};
  static const Curve cool_ceiling{9.93, 0.50, 0.0, 15, 14};
  static const Curve warm_wall{3.72, 0.052, 3.5, 35, 23};
  switch (c) {
    case AsymmetryCase::warm_ceiling:
      return warm_ceiling;
    case AsymmetryCase::cool_ceiling:
      return cool_ceiling;
    case AsymmetryCase::warm_wall:
      return warm_wall;
    default:
      return cool_wall;
  }
}

Asymmetry make_asymmetry(double delta, double se, AsymmetryCase kind, int axis) {
  Asymmetry a;
  a.delta_K = std::abs(delta);
  a.se_K = se;
  a.kind = kind;
  a.axis = axis;
  a.limit_K = asymmetry_limit_K(kind);
  a.pd_percent = percentage_dissatisfied(kind, a.delta_K);
  a.pd_extrapolated = a.delta_K > asymmetry_pd_range_K(kind);
  return a;
}

}  // namespace

std::string to_string(AsymmetryCase c) {
  switch (c) {
    case AsymmetryCase::warm_ceiling:
      return "warm ceiling";
    case AsymmetryCase::cool_ceiling:
      return "cool ceiling";
    case AsymmetryCase::warm_wall:
      return "warm wall";
    default:
      return "cool wall";
  }
}

double asymmetry_limit_K(AsymmetryCase c) {
  return curve(c).limit;
}

double asymmetry_pd_range_K(AsymmetryCase c) {
  return curve(c).range;
}

double percentage_dissatisfied(AsymmetryCase c, double dt_K) {
  const Curve& k = curve(c);
  const double pd = 100 / (1 + std::exp(k.c0 - k.c1 * std::abs(dt_K))) - k.shift;
  return std::max(0.0, pd);
}

double operative_air_weight(double air_speed) {
  if (air_speed < 0.2) return 0.5;
  if (air_speed < 0.6) return 0.6;
  return 0.7;
}

RadiantTemperature radiant_temperature(const DirectionTally& t, const RadiantField& field) {
  RadiantTemperature r;
  if (t.rays == 0) return r;
  // Per-ray value X = J/sigma of the patch hit (K^4), or T_s^4 for a ray that is lost. Two
  // passes (mean, then squared deviations) keep a uniform room's error at exactly zero.
  const double n = double(t.rays);
  const double lost = t.lost();
  const double xs = std::pow(field.surroundings_K, 4);
  double mean = lost * xs;
  for (std::size_t k = 0; k < t.patch.size(); ++k) {
    mean += double(t.count[k]) / n * (field.radiosity[t.patch[k]] / kStefanBoltzmann);
  }
  double variance = lost * (xs - mean) * (xs - mean);
  for (std::size_t k = 0; k < t.patch.size(); ++k) {
    const double d = field.radiosity[t.patch[k]] / kStefanBoltzmann - mean;
    variance += double(t.count[k]) / n * d * d;
  }
  variance /= n;
  r.kelvin = std::pow(std::max(mean, 0.0), 0.25);
  r.se_K = r.kelvin > 0 ? std::sqrt(variance) / (4 * r.kelvin * r.kelvin * r.kelvin) : 0;
  return r;
}

PointComfort evaluate_comfort(const ComfortPoint& point, const PointFactors& factors,
                              const RadiantField& field, const ComfortConditions& air) {
  PointComfort c;
  c.point = point;
  c.mean_radiant = radiant_temperature(factors.body, field);
  for (std::size_t d = 0; d < 6; ++d) c.plane[d] = radiant_temperature(factors.plane[d], field);
  c.lost_fraction = factors.body.lost();

  const RadiantTemperature& up = c.plane[plus_z];
  const RadiantTemperature& down = c.plane[minus_z];
  const double vertical = up.kelvin - down.kelvin;
  c.vertical =
      make_asymmetry(vertical, std::hypot(up.se_K, down.se_K),
                     vertical >= 0 ? AsymmetryCase::warm_ceiling : AsymmetryCase::cool_ceiling, 2);

  const double dx = c.plane[plus_x].kelvin - c.plane[minus_x].kelvin;
  const double dy = c.plane[plus_y].kelvin - c.plane[minus_y].kelvin;
  const int axis = std::abs(dx) >= std::abs(dy) ? 0 : 1;
  const RadiantTemperature& pos = c.plane[axis == 0 ? plus_x : plus_y];
  const RadiantTemperature& neg = c.plane[axis == 0 ? minus_x : minus_y];
  const double mean = 0.25 * (c.plane[plus_x].kelvin + c.plane[minus_x].kelvin +
                              c.plane[plus_y].kelvin + c.plane[minus_y].kelvin);
  const double warm = std::max(pos.kelvin, neg.kelvin), cool = std::min(pos.kelvin, neg.kelvin);
  const AsymmetryCase wall_case =
      warm - mean > mean - cool ? AsymmetryCase::warm_wall : AsymmetryCase::cool_wall;
  c.horizontal = make_asymmetry(warm - cool, std::hypot(pos.se_K, neg.se_K), wall_case, axis);

  const double A = operative_air_weight(air.air_speed);
  c.operative_K = A * air.air_K + (1 - A) * c.mean_radiant.kelvin;
  if (air.person) {
    PmvInput in;
    in.air_C = air.air_K - kZeroCelsius;
    in.mean_radiant_C = c.mean_radiant.kelvin - kZeroCelsius;
    in.air_speed = air.air_speed;
    in.relative_humidity = air.person->relative_humidity;
    in.met = air.person->met;
    in.clo = air.person->clo;
    c.pmv = predicted_mean_vote(in);
  }
  return c;
}

}  // namespace hearthray
