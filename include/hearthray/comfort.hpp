// Radiant comfort at points in a room: angle factors from each point to every patch by rays
// traced with the same Tracer, then the figures of ISO 7726 / ISO 7730 / ASHRAE 55 from the
// solved surfaces.
//
// Angle factors (fraction of the radiation a body receives that comes from each patch), each
// from `rays` rays per point with F_j = hits_j / N and standard error sqrt(F(1-F)/N):
//  - sphere: directions uniform over the sphere (a small sphere, the globe of ISO 7726);
//  - seated / standing person: directions drawn with density proportional to the person's
//    projected area in that direction (Fanger's method, "Thermal Comfort", 1970, as used by
//    ISO 7726 Annex B: F_p-j = (1/pi) integral over patch j of f_p dOmega). f_p is modelled as
//    a cos(beta) + b |sin(beta)| (beta the altitude; averaged over the azimuth, i.e. a person
//    turning about a vertical axis) -- exact for a vertical cylinder or prism, with a and b
//    matched to Fanger's projected-area factors at beta = 0 and 90 degrees: standing 0.30 and
//    0.08, seated 0.25 and 0.20 (values recalled from memory; not checked against the printed
//    charts). Only the ratio b/a matters: the density is normalised so the factors sum to one.
//  - six small plane elements facing +x, -x, +y, -y, +z, -z: cosine-weighted hemispheres
//    (Malley's method), for the plane radiant temperatures.
// Random numbers are keyed by (seed, point, ray index) as in sampling.hpp, with a stream key
// distinct from the view-factor patches', so results do not depend on the thread count.
//
// Radiant temperatures use the patches' radiosity J (emitted plus reflected, W/m^2), not
// eps sigma T^4: a gray surface sends a body its radiosity, so T_r^4 = sum_j F_j J_j / sigma
// (ISO 7726's T_mr^4 = sum F T^4 is the black-surface case of the same sum). The body's own
// radiation reflected back by the room is neglected (a small body). Rays that leave the scene
// or meet the back of a one-sided surface see the surroundings (black, at surroundings_K).
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/comfort_input.hpp"
#include "hearthray/geometry.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/pmv.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/statistics.hpp"  // factor_standard_error
#include "hearthray/tracer.hpp"

namespace hearthray {

struct ComfortPoint {
  std::string name;
  Vec3 position;  // m, scene frame
  ComfortBody body = ComfortBody::sphere;
  int grid_i = -1, grid_j = -1;  // cell of the grid (x, y index), -1 for a named point
};

// Named points as given, then the grid over the plan of the scene's bounding box (z up):
// points `spacing` apart, centred in the box shrunk by `margin`, at `height` above its floor.
// Throws InputError when a point lies outside the scene's bounding box or the grid has no room.
std::vector<ComfortPoint> comfort_points(const Scene& scene, const ComfortInput& input);

// Rays from one point in one direction distribution, as counts.
struct DirectionTally {
  std::uint64_t rays = 0;
  std::uint64_t escaped = 0;         // hit nothing
  std::uint64_t back_face = 0;       // met the back of a one-sided surface
  std::vector<std::uint32_t> patch;  // patches hit, ascending
  std::vector<std::uint64_t> count;  // their hits

  double factor(std::uint32_t p) const;  // hits / rays (0 when not hit)
  double lost() const;                   // (escaped + back_face) / rays
};
// Sum of the factors to the patches of surface `surface` (both sides of a two-sided one).
double factor_to_surface(const DirectionTally& t, const PatchSet& patches, std::uint32_t surface);

// The six plane elements, in this order.
enum PlaneDirection { plus_x, minus_x, plus_y, minus_y, plus_z, minus_z };
inline constexpr std::array<const char*, 6> kPlaneNames = {"+x", "-x", "+y", "-y", "+z", "-z"};

struct PointFactors {
  DirectionTally body;                  // sphere or person
  std::array<DirectionTally, 6> plane;  // by PlaneDirection
};

struct AngleFactorOptions {
  std::uint64_t rays = kDefaultComfortRays;  // per point, for the body and for each plane
  std::uint64_t seed = kDefaultSeed;
  int threads = 0;  // 0 = all cores; results do not depend on it
  bool IsValid(std::string* error) const;
};

// Throws InputError for invalid options.
std::vector<PointFactors> trace_angle_factors(const Scene& scene, const PatchSet& patches,
                                              const Tracer& tracer,
                                              const std::vector<ComfortPoint>& points,
                                              const AngleFactorOptions& options);

// Relative projected area of a body in a direction of altitude beta (radians), as used to draw
// its rays (1 for the sphere; see above for the persons). Maximum over beta is
// body_density_max(body).
double projected_area_weight(ComfortBody body, double sin_beta);
double body_density_max(ComfortBody body);

// ---- figures ----

// Radiosity of every patch (ExchangeResult::faces[p].radiosity) and the surroundings.
struct RadiantField {
  std::vector<double> radiosity;  // W/m^2, per patch
  double surroundings_K = 0;      // seen by rays that leave (or meet back faces)
};

// A radiant temperature from a tally: T^4 = sum_j F_j J_j / sigma, with its standard error
// from the multinomial counts (variance of the per-ray value over N, through dT = dT^4/4T^3).
struct RadiantTemperature {
  double kelvin = 0;
  double se_K = 0;
};
RadiantTemperature radiant_temperature(const DirectionTally& t, const RadiantField& field);

// The cases of radiant asymmetry of ISO 7730 (2005, sec. 6.3 and Table A.4) and ASHRAE 55.
enum class AsymmetryCase { warm_ceiling, cool_ceiling, warm_wall, cool_wall };
std::string to_string(AsymmetryCase c);
// Limit for category A/B (PD below about 5 %): warm ceiling 5 K, cool wall 10 K, cool ceiling
// 14 K, warm wall 23 K (ISO 7730 Table A.4; ASHRAE 55 sec. 5.3 -- recalled from memory).
double asymmetry_limit_K(AsymmetryCase c);
// Percentage dissatisfied (%) by the ISO 7730 (2005) curves (sec. 6.3, Figure 4; recalled):
//  warm ceiling  PD = 100 / (1 + exp(2.84 - 0.174 dt)) - 5.5   (dt < 23 K)
//  cool wall     PD = 100 / (1 + exp(6.61 - 0.345 dt))         (dt < 15 K)
//  cool ceiling  PD = 100 / (1 + exp(9.93 - 0.50 dt))          (dt < 15 K)
//  warm wall     PD = 100 / (1 + exp(3.72 - 0.052 dt)) - 3.5   (dt < 35 K)
// dt = |asymmetry| in K; clamped below at 0 %. Beyond the stated range the curve is
// extrapolated (the result says so through `pd_extrapolated`).
double percentage_dissatisfied(AsymmetryCase c, double dt_K);
double asymmetry_pd_range_K(AsymmetryCase c);  // upper end of the curve's stated range

// Weight A of the air temperature in t_o = A t_a + (1 - A) t_mr (ISO 7726 Annex G / ASHRAE 55
// simple form, recalled): 0.5 below 0.2 m/s, 0.6 from 0.2 to 0.6, 0.7 from 0.6 to 1.0 m/s.
double operative_air_weight(double air_speed);

struct Asymmetry {
  double delta_K = 0;  // warm side minus cool side, >= 0
  double se_K = 0;
  AsymmetryCase kind = AsymmetryCase::warm_ceiling;
  double limit_K = 0;
  double pd_percent = 0;
  bool pd_extrapolated = false;
  int axis = 2;  // 0 x, 1 y, 2 z
  bool within() const { return delta_K < limit_K; }
};

struct PointComfort {
  ComfortPoint point;
  RadiantTemperature mean_radiant;
  std::array<RadiantTemperature, 6> plane;  // plane radiant temperatures by PlaneDirection
  Asymmetry vertical;                       // +z (up-facing element: ceiling side) against -z
  Asymmetry horizontal;                     // the larger of x and y
  double operative_K = 0;
  double lost_fraction = 0;      // of the body's rays: left the scene or met a back face
  std::optional<PmvResult> pmv;  // when the conditions give activity and clothing
  bool within_limits() const { return vertical.within() && horizontal.within(); }
};

struct ComfortConditions {
  double air_K = 293.15;
  double air_speed = 0.1;             // m/s
  std::optional<PersonInput> person;  // PMV and PPD at the point from t_a, t_mr, speed
};

// Figures at one point. Vertical: the up-facing element's t_pr (radiation from above) minus the
// down-facing one's; warmer above is a warm ceiling, else a cool ceiling. Horizontal: on each
// axis the difference of the opposite elements; the axis with the larger one is taken. Whether
// it is a warm or a cool wall is decided by which side departs more from the mean of the four
// horizontal t_pr (our rule: the standards name the cases but give no test).
PointComfort evaluate_comfort(const ComfortPoint& point, const PointFactors& factors,
                              const RadiantField& field, const ComfortConditions& air);

}  // namespace hearthray
