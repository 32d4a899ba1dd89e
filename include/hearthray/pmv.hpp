// Predicted mean vote (PMV) and predicted percentage dissatisfied (PPD) of ISO 7730:2005
// (Fanger's model; equations (1) to (5) of its section 4, and the program of its Annex D),
// for a person in given air, radiant surroundings, activity and clothing.
//
//   PMV = [0.303 exp(-0.036 M) + 0.028] { (M - W) - 3.05e-3 [5733 - 6.99 (M - W) - p_a]
//         - 0.42 [(M - W) - 58.15] - 1.7e-5 M (5867 - p_a) - 0.0014 M (34 - t_a)
//         - 3.96e-8 f_cl [(t_cl + 273)^4 - (t_r + 273)^4] - f_cl h_c (t_cl - t_a) }
//   t_cl = 35.7 - 0.028 (M - W) - I_cl { 3.96e-8 f_cl [(t_cl + 273)^4 - (t_r + 273)^4]
//          + f_cl h_c (t_cl - t_a) }                 (solved by the Annex D iteration)
//   h_c = max(2.38 |t_cl - t_a|^0.25, 12.1 sqrt(v_ar))
//   f_cl = 1.00 + 1.290 I_cl (I_cl <= 0.078 m2K/W), 1.05 + 0.645 I_cl otherwise
//   PPD = 100 - 95 exp(-0.03353 PMV^4 - 0.2179 PMV^2)
// with M, W in W/m2 (1 met = 58.15 W/m2), I_cl in m2K/W (1 clo = 0.155 m2K/W), p_a the water
// vapour partial pressure (Pa) from the relative humidity by the Annex D program's saturation
// formula p_s = 1000 exp(16.6536 - 4030.183 / (t_a + 235)) Pa, and the sweat term taken as
// zero when (M - W) < 58.15. Kelvin = C + 273 as in the standard's program. (Equations and
// constants recalled from memory; check them against the printed standard.)
//
// The standard's ranges (ISO 7730:2005 sec. 4.1, recalled): M 46..232 W/m2 (0.8..4 met),
// I_cl 0..0.310 m2K/W (0..2 clo), t_a 10..30 C, t_r 10..40 C, v_ar 0..1 m/s, p_a 0..2700 Pa;
// and PMV is to be used between -2 and +2. Inputs a scene file gives (met, clo, humidity) are
// refused outside them; conditions that come out of a solve (air and radiant temperature,
// vapour pressure) are flagged in the result instead.
#pragma once

#include <string>
#include <vector>

namespace hearthray {

struct PmvInput {
  double air_C = 20;               // t_a
  double mean_radiant_C = 20;      // t_r
  double air_speed = 0.1;          // relative air speed v_ar, m/s
  double relative_humidity = 0.5;  // 0..1
  double met = 1.2;                // metabolic rate, met
  double clo = 1.0;                // clothing insulation, clo
  double external_work_met = 0;    // W, met (usually 0)
};

struct PmvResult {
  double pmv = 0;
  double ppd = 0;                 // %
  double clothing_surface_C = 0;  // t_cl
  double vapour_pressure_Pa = 0;  // p_a
  int iterations = 0;             // of the t_cl iteration
  bool converged = true;
  // Which conditions lie outside the standard's ranges (names such as "air temperature 8.0 C
  // (10..30 C)"); PMV beyond +-2 is one of them.
  std::vector<std::string> out_of_range;
  bool in_range() const { return out_of_range.empty(); }
};

// The ranges of ISO 7730 sec. 4.1 for the inputs a user gives. Returns "" when `met`, `clo`
// and the relative humidity (0..1) may be used, else a sentence naming the first one outside.
std::string pmv_input_problem(double met, double clo, double relative_humidity);

PmvResult predicted_mean_vote(const PmvInput& in);

// PPD (%) of a PMV.
double predicted_percentage_dissatisfied(double pmv);

}  // namespace hearthray
