// Radiating properties of a combustion gas as a set of gray gases: a gray gas of one
// absorption coefficient, or the weighted sum of gray gases (WSGG) of Smith, Shen & Friedman
// (1982) for CO2-H2O mixtures at 1 atm, each optionally with soot added as a gray absorber.
//
// In the WSGG model the gas is a clear gas (k = 0) and three gray gases of absorption
// coefficients k_i = kappa_i (p_w + p_c); a surface or gas zone at temperature T emits a share
// a_i(T) of its black-body power in gray gas i, and the total emissivity of a uniform path of
// length L is eps = sum_i a_i(T) [1 - exp(-k_i L)] (Smith, Shen & Friedman, "Evaluation of
// coefficients for the weighted sum of gray gases model", J. Heat Transfer 104(4):602-608,
// 1982, eq. 2 and Table 2, transcribed).
#pragma once

#include <array>
#include <string>
#include <vector>

namespace hearthray {

// The coefficient sets of Smith, Shen & Friedman (1982), Table 2.
enum class WsggSet {
  mixture_ratio_1,  // p_w / p_c = 1 (fuel oil in air, roughly)
  mixture_ratio_2,  // p_w / p_c = 2 (natural gas in air, roughly)
  co2_only,         // p_c -> 0 atm, no water vapour
  h2o_dilute,       // p_w -> 0 atm, no carbon dioxide
  h2o_one_atm       // p_w = 1 atm, no carbon dioxide
};
std::string to_string(WsggSet set);

// Range of the fit (Smith, Shen & Friedman 1982): 600 <= T <= 2400 K, 0.001 <= pL <= 10 atm m.
inline constexpr double kWsggMinTemperature = 600;     // K
inline constexpr double kWsggMaxTemperature = 2400;    // K
inline constexpr double kWsggMinPathPressure = 0.001;  // atm m
inline constexpr double kWsggMaxPathPressure = 10;     // atm m

struct GasComposition {
  double p_h2o = 0;  // partial pressure of water vapour, atm
  double p_co2 = 0;  // partial pressure of carbon dioxide, atm
  // Soot volume fraction (m^3 of soot per m^3 of gas), 0 for none; added as a gray absorber.
  double soot_volume_fraction = 0;
  // Temperature at which the soot absorption coefficient is evaluated, K (it grows with T;
  // one value is held for the whole enclosure).
  double soot_temperature = 1500;
};

// A set of gray gases: absorption coefficients k_g (1/m) and emission weights a_g(T).
// Gray gas 0 is the clear gas of the WSGG model (k = soot only); for a single gray gas the
// set has one entry of weight 1.
class GrayGasSet {
 public:
  // One gray gas of absorption coefficient k (1/m, >= 0); weight 1 at every temperature.
  static GrayGasSet gray(double absorption_coefficient);
  // WSGG for a composition at 1 atm total pressure. The coefficient set is chosen from p_w/p_c:
  // 0.5 <= p_w/p_c < 1.5 the ratio-1 set, 1.5 <= p_w/p_c <= 4 the ratio-2 set; p_w = 0 the CO2
  // set, p_c = 0 the dilute-H2O set (p_w <= 0.2 atm; above, the p_w = 1 atm set). Other ratios
  // are refused (InputError naming the ratio). Ratios between 0.5 and 0.8 or 2.5 and 4 are an
  // extrapolation of the nearest set and give a warning.
  static GrayGasSet wsgg(const GasComposition& composition);
  // WSGG with a named set (for tests); p_w + p_c must be positive.
  static GrayGasSet wsgg(WsggSet set, const GasComposition& composition);

  std::size_t size() const { return k_.size(); }
  double absorption_coefficient(std::size_t g) const { return k_[g]; }  // 1/m
  const std::vector<double>& absorption_coefficients() const { return k_; }
  // Share of black-body emission at temperature T (K) in gray gas g, and its derivative
  // d a_g / d T (1/K). The polynomial is evaluated with T clamped to the fit's range
  // (600..2400 K) and sum to one; see temperature_in_range(). The published cubics of the two
  // water-vapour sets dip slightly below zero (to -5.5e-4) above ~2050 K; kept as published.
  double weight(std::size_t g, double T) const;
  double weight_derivative(std::size_t g, double T) const;
  bool temperature_in_range(double T) const;
  // Total emissivity of a uniform, isothermal path of length L (m) at temperature T (K):
  // sum_g a_g(T) [1 - exp(-k_g L)].
  double emissivity(double T, double L) const;
  // Path pressure (p_w + p_c) L in atm m for a path of length L, 0 for a gray gas.
  double path_pressure(double L) const { return (p_h2o_ + p_co2_) * L; }

  bool is_wsgg() const { return wsgg_; }
  WsggSet set() const { return set_; }
  double soot_absorption_coefficient() const { return k_soot_; }
  // Warnings raised when the set was chosen (extrapolated ratio, ...).
  const std::vector<std::string>& warnings() const { return warnings_; }
  std::string describe() const;

 private:
  std::vector<double> k_;
  // b[g][j]: weight polynomial coefficients of gray gas g (g >= 1; the clear gas takes the
  // rest), T^j in K^-j.
  std::vector<std::array<double, 4>> b_;
  bool wsgg_ = false;
  WsggSet set_ = WsggSet::mixture_ratio_2;
  double p_h2o_ = 0, p_co2_ = 0, k_soot_ = 0;
  std::vector<std::string> warnings_;
};

// Gray absorption coefficient of soot (1/m) of volume fraction f_v at temperature T (K):
// the Planck mean of small soot particles, k = 3.83 C0 f_v T / C2 with C2 = 1.4388e-2 m K and
// C0 = 7.0 (Modest, Radiative Heat Transfer, chapter on radiative properties of particulate
// media, soot; the form and C0 recalled from memory, not checked against the printed page).
// About 1860 f_v T.
double soot_absorption_coefficient(double volume_fraction, double T);

}  // namespace hearthray
