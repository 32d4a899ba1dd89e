#include "hearthray/gas_properties.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"

namespace hearthray {

namespace {

struct WsggCoefficients {
  double kappa[3];  // (atm m)^-1
  double b[3][4];   // b_i1 .. b_i4, already scaled: T^(j-1) in K^-(j-1)
};

// Smith, Shen & Friedman (1982), Table 2, transcribed (scaled from the printed b1 x 10,
// b2 x 10^4, b3 x 10^7, b4 x 10^11); check against the printed table when changing them.
const WsggCoefficients& coefficients(WsggSet set) {
  static const WsggCoefficients ratio_1 = {{0.4303, 7.055, 178.1},
                                           {{5.150e-1, -2.303e-4, 0.9779e-7, -1.494e-11},
                                            {0.7749e-1, 3.399e-4, -2.297e-7, 3.770e-11},
                                            {1.907e-1, -1.824e-4, 0.5608e-7, -0.5122e-11}}};
  static const WsggCoefficients ratio_2 = {{0.4201, 6.516, 131.9},
                                           {{6.508e-1, -5.551e-4, 3.029e-7, -5.353e-11},
                                            {-0.2504e-1, 6.112e-4, -3.882e-7, 6.528e-11},
                                            {2.718e-1, -3.118e-4, 1.221e-7, -1.612e-11}}};
  static const WsggCoefficients co2 = {{0.3966, 15.64, 394.3},
                                       {{0.4334e-1, 2.620e-4, -1.560e-7, 2.565e-11},
                                        {-0.4814e-1, 2.822e-4, -1.794e-7, 3.274e-11},
                                        {0.5492e-1, 0.1087e-4, -0.3500e-7, 0.9123e-11}}};
  static const WsggCoefficients h2o_dilute = {{0.4098, 6.325, 120.5},
                                              {{5.977e-1, -5.119e-4, 3.042e-7, -5.564e-11},
                                               {0.5677e-1, 3.333e-4, -1.967e-7, 2.718e-11},
                                               {1.800e-1, -2.334e-4, 1.008e-7, -1.454e-11}}};
  static const WsggCoefficients h2o_one_atm = {{0.4496, 7.113, 119.7},
                                               {{6.324e-1, -8.358e-4, 6.135e-7, -13.03e-11},
                                                {-0.2016e-1, 7.145e-4, -5.212e-7, 9.868e-11},
                                                {3.500e-1, -5.040e-4, 2.425e-7, -3.888e-11}}};
  switch (set) {
    case WsggSet::mixture_ratio_1:
      return ratio_1;
    case WsggSet::mixture_ratio_2:
      return ratio_2;
    case WsggSet::co2_only:
      return co2;
    case WsggSet::h2o_dilute:
      return h2o_dilute;
    case WsggSet::h2o_one_atm:
      return h2o_one_atm;
  }
  throw std::logic_error("unknown WSGG set");
}

double clamp_temperature(double T) {
  return std::min(std::max(T, kWsggMinTemperature), kWsggMaxTemperature);
}

void check_composition(const GasComposition& c) {
  auto bad = [](double x) { return !std::isfinite(x) || x < 0; };
  if (bad(c.p_h2o) || bad(c.p_co2))
    throw InputError("gas: partial pressures of H2O and CO2 must be finite and >= 0 atm");
  if (c.p_h2o + c.p_co2 > 1.0)
    throw InputError("gas: p_H2O + p_CO2 = " + rounded("%.4g", c.p_h2o + c.p_co2) +
                     " atm exceeds the total pressure of 1 atm the WSGG fit is made for");
  if (bad(c.soot_volume_fraction) || c.soot_volume_fraction > 1e-4)
    throw InputError("gas: soot volume fraction must be between 0 and 1e-4 (got " +
                     rounded("%.4g", c.soot_volume_fraction) + ")");
  if (!std::isfinite(c.soot_temperature) || c.soot_temperature <= 0)
    throw InputError("gas: soot temperature must be a positive temperature in K");
}

}  // namespace

std::string to_string(WsggSet set) {
  switch (set) {
    case WsggSet::mixture_ratio_1:
      return "Smith-Shen-Friedman 1982, p_w/p_c = 1";
    case WsggSet::mixture_ratio_2:
      return "Smith-Shen-Friedman 1982, p_w/p_c = 2";
    case WsggSet::co2_only:
      return "Smith-Shen-Friedman 1982, CO2 (p_c -> 0)";
    case WsggSet::h2o_dilute:
      return "Smith-Shen-Friedman 1982, H2O (p_w -> 0)";
    case WsggSet::h2o_one_atm:
      return "Smith-Shen-Friedman 1982, H2O (p_w = 1 atm)";
  }
  return "?";
}

double soot_absorption_coefficient(double volume_fraction, double T) {
  constexpr double kC0 = 7.0;        // recalled from memory (Modest), typical soot n and k
  constexpr double kC2 = 1.4388e-2;  // second radiation constant, m K
  return 3.83 * kC0 * volume_fraction * T / kC2;
}

GrayGasSet GrayGasSet::gray(double absorption_coefficient) {
  if (!std::isfinite(absorption_coefficient) || absorption_coefficient < 0)
    throw InputError("gas: absorption coefficient must be finite and >= 0 1/m");
  GrayGasSet set;
  set.k_ = {absorption_coefficient};
  return set;
}

GrayGasSet GrayGasSet::wsgg(const GasComposition& c) {
  check_composition(c);
  const double pw = c.p_h2o, pc = c.p_co2;
  if (pw + pc <= 0)
    throw InputError("gas: p_H2O + p_CO2 is 0: the gas does not radiate (give a gray gas instead)");
  std::vector<std::string> warnings;
  WsggSet set;
  if (pw == 0) {
    set = WsggSet::co2_only;
  } else if (pc == 0) {
    set = pw <= 0.2 ? WsggSet::h2o_dilute : WsggSet::h2o_one_atm;
    if (pw > 0.2 && pw < 0.8)
      warnings.push_back("gas: p_H2O = " + rounded("%.4g", pw) +
                         " atm lies between the dilute and the 1 atm water-vapour sets; the "
                         "1 atm set is used (extrapolated)");
  } else {
    const double ratio = pw / pc;
    if (ratio < 0.5 || ratio > 4)
      throw InputError("gas: p_H2O/p_CO2 = " + rounded("%.4g", ratio) +
                       " is outside the range of the Smith-Shen-Friedman mixture sets "
                       "(fitted at 1 and 2; accepted 0.5 to 4)");
    set = ratio < 1.5 ? WsggSet::mixture_ratio_1 : WsggSet::mixture_ratio_2;
    if (ratio < 0.8 || ratio > 2.5)
      warnings.push_back("gas: p_H2O/p_CO2 = " + rounded("%.4g", ratio) +
                         " is extrapolated with the " + to_string(set) + " set");
  }
  GrayGasSet result = wsgg(set, c);
  result.warnings_.insert(result.warnings_.begin(), warnings.begin(), warnings.end());
  return result;
}

GrayGasSet GrayGasSet::wsgg(WsggSet set, const GasComposition& c) {
  check_composition(c);
  const double p = c.p_h2o + c.p_co2;
  if (p <= 0) throw InputError("gas: p_H2O + p_CO2 must be positive for the WSGG model");
  const WsggCoefficients& w = coefficients(set);
  GrayGasSet result;
  result.wsgg_ = true;
  result.set_ = set;
  result.p_h2o_ = c.p_h2o;
  result.p_co2_ = c.p_co2;
  result.k_soot_ = c.soot_volume_fraction > 0 ? hearthray::soot_absorption_coefficient(
                                                    c.soot_volume_fraction, c.soot_temperature)
                                              : 0.0;
  result.k_ = {result.k_soot_};
  for (int i = 0; i < 3; ++i) {
    result.k_.push_back(w.kappa[i] * p + result.k_soot_);
    result.b_.push_back({w.b[i][0], w.b[i][1], w.b[i][2], w.b[i][3]});
  }
  return result;
}

bool GrayGasSet::temperature_in_range(double T) const {
  return !wsgg_ || (T >= kWsggMinTemperature && T <= kWsggMaxTemperature);
}

double GrayGasSet::weight(std::size_t g, double T) const {
  if (!wsgg_) return 1.0;
  const double t = clamp_temperature(T);
  auto a = [&](std::size_t i) {
    const auto& b = b_[i];
    return b[0] + t * (b[1] + t * (b[2] + t * b[3]));
  };
  if (g > 0) return a(g - 1);
  double sum = 0;
  for (std::size_t i = 0; i < b_.size(); ++i) sum += a(i);
  return 1.0 - sum;
}

double GrayGasSet::weight_derivative(std::size_t g, double T) const {
  // Zero outside the fit's range, where the weights are held at their end values.
  if (!wsgg_ || T < kWsggMinTemperature || T > kWsggMaxTemperature) return 0.0;
  auto da = [&](std::size_t i) {
    const auto& b = b_[i];
    return b[1] + T * (2 * b[2] + T * 3 * b[3]);
  };
  if (g > 0) return da(g - 1);
  double sum = 0;
  for (std::size_t i = 0; i < b_.size(); ++i) sum += da(i);
  return -sum;
}

double GrayGasSet::emissivity(double T, double L) const {
  double eps = 0;
  for (std::size_t g = 0; g < k_.size(); ++g) eps += weight(g, T) * -std::expm1(-k_[g] * L);
  return eps;
}

std::string GrayGasSet::describe() const {
  std::ostringstream s;
  if (!wsgg_) {
    s << "gray gas, k = " << k_[0] << " 1/m";
    return s.str();
  }
  s << "weighted sum of gray gases (" << to_string(set_) << "), p_H2O = " << p_h2o_
    << " atm, p_CO2 = " << p_co2_ << " atm";
  if (k_soot_ > 0) s << ", soot k = " << k_soot_ << " 1/m";
  return s.str();
}

}  // namespace hearthray
