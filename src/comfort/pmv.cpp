// PMV and PPD by the program of ISO 7730:2005 Annex D (see include/hearthray/pmv.hpp).
#include "hearthray/pmv.hpp"

#include <algorithm>
#include <cmath>

#include "core/text.hpp"

namespace hearthray {
namespace {

constexpr double kWattsPerMet = 58.15;  // W/m2 (ISO 7730, recalled)
constexpr double kCloToSI = 0.155;      // m2K/W per clo
constexpr double kKelvinOffset = 273;   // as in the standard's program
// The t_cl iteration of Annex D: stop when successive iterates (in hundreds of kelvin) differ
// by less than this; at most this many steps.
constexpr double kIterationTolerance = 0.00015;
constexpr int kMaxIterations = 150;

// Ranges of ISO 7730:2005 sec. 4.1 (recalled).
constexpr double kMetLow = 0.8, kMetHigh = 4.0;
constexpr double kCloLow = 0.0, kCloHigh = 2.0;
constexpr double kAirLow_C = 10, kAirHigh_C = 30;
constexpr double kRadiantLow_C = 10, kRadiantHigh_C = 40;
constexpr double kSpeedHigh = 1.0;
constexpr double kVapourHigh_Pa = 2700;
constexpr double kPmvLimit = 2.0;

void flag(std::vector<std::string>* out, bool outside, const std::string& text) {
  if (outside) out->push_back(text);
}

}  // namespace

std::string pmv_input_problem(double met, double clo, double relative_humidity) {
  if (!(met >= kMetLow && met <= kMetHigh))
    return "the metabolic rate " + rounded("%.3g", met) +
           " met is outside the 0.8 to 4 met (46 to 232 W/m2) for which ISO 7730 states PMV";
  if (!(clo >= kCloLow && clo <= kCloHigh))
    return "the clothing insulation " + rounded("%.3g", clo) +
           " clo is outside the 0 to 2 clo for which ISO 7730 states PMV";
  if (!(relative_humidity >= 0 && relative_humidity <= 1))
    return "the relative humidity " + percent(relative_humidity) + " is not between 0 and 100 %";
  return "";
}

double predicted_percentage_dissatisfied(double pmv) {
  return 100 - 95 * std::exp(-0.03353 * std::pow(pmv, 4) - 0.2179 * pmv * pmv);
}

PmvResult predicted_mean_vote(const PmvInput& in) {
  PmvResult r;
  const double ta = in.air_C, tr = in.mean_radiant_C;
  const double pa = in.relative_humidity * 1000 * std::exp(16.6536 - 4030.183 / (ta + 235));
  const double icl = kCloToSI * in.clo;
  const double M = in.met * kWattsPerMet;
  const double MW = M - in.external_work_met * kWattsPerMet;
  const double fcl = icl <= 0.078 ? 1 + 1.29 * icl : 1.05 + 0.645 * icl;
  const double hcf = 12.1 * std::sqrt(in.air_speed);
  const double taa = ta + kKelvinOffset, tra = tr + kKelvinOffset;
  // The Annex D iteration for the clothing surface temperature (in hundreds of kelvin).
  const double tcla = taa + (35.5 - ta) / (3.5 * icl + 0.1);
  const double p1 = icl * fcl, p2 = p1 * 3.96, p3 = p1 * 100, p4 = p1 * taa;
  const double p5 = 308.7 - 0.028 * MW + p2 * std::pow(tra / 100, 4);
  double xn = tcla / 100, xf = tcla / 50, hc = hcf;
  r.converged = false;
  while (r.iterations < kMaxIterations) {
    ++r.iterations;
    xf = (xf + xn) / 2;
    const double hcn = 2.38 * std::pow(std::abs(100 * xf - taa), 0.25);
    hc = std::max(hcf, hcn);
    xn = (p5 + p4 * hc - p2 * std::pow(xf, 4)) / (100 + p3 * hc);
    if (std::abs(xn - xf) <= kIterationTolerance) {
      r.converged = true;
      break;
    }
  }
  const double tcl = 100 * xn - kKelvinOffset;
  const double hl1 = 3.05e-3 * (5733 - 6.99 * MW - pa);                        // skin diffusion
  const double hl2 = MW > kWattsPerMet ? 0.42 * (MW - kWattsPerMet) : 0;       // sweating
  const double hl3 = 1.7e-5 * M * (5867 - pa);                                 // latent respiration
  const double hl4 = 0.0014 * M * (34 - ta);                                   // dry respiration
  const double hl5 = 3.96 * fcl * (std::pow(xn, 4) - std::pow(tra / 100, 4));  // radiation
  const double hl6 = fcl * hc * (tcl - ta);                                    // convection
  const double ts = 0.303 * std::exp(-0.036 * M) + 0.028;
  r.pmv = ts * (MW - hl1 - hl2 - hl3 - hl4 - hl5 - hl6);
  r.ppd = predicted_percentage_dissatisfied(r.pmv);
  r.clothing_surface_C = tcl;
  r.vapour_pressure_Pa = pa;

  auto range = [](double v, const char* unit, double lo, double hi) {
    return rounded("%.1f", v) + " " + unit + " (" + rounded("%g", lo) + ".." + rounded("%g", hi) +
           " " + unit + ")";
  };
  flag(&r.out_of_range, ta < kAirLow_C || ta > kAirHigh_C,
       "air temperature " + range(ta, "C", kAirLow_C, kAirHigh_C));
  flag(&r.out_of_range, tr < kRadiantLow_C || tr > kRadiantHigh_C,
       "mean radiant temperature " + range(tr, "C", kRadiantLow_C, kRadiantHigh_C));
  flag(&r.out_of_range, in.air_speed < 0 || in.air_speed > kSpeedHigh,
       "air speed " + range(in.air_speed, "m/s", 0, kSpeedHigh));
  flag(&r.out_of_range, pa > kVapourHigh_Pa,
       "water vapour pressure " + range(pa, "Pa", 0, kVapourHigh_Pa));
  flag(&r.out_of_range, std::abs(r.pmv) > kPmvLimit,
       "PMV " + rounded("%+.2f", r.pmv) + " (the standard uses PMV between -2 and +2)");
  flag(&r.out_of_range, !r.converged, "clothing temperature iteration did not converge");
  return r;
}

}  // namespace hearthray
