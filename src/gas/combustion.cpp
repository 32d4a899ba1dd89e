#include "hearthray/combustion.hpp"

#include <cmath>
#include <sstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"

namespace hearthray {

namespace {

constexpr double kGasConstant = 8.314462618;  // J/(mol K), CODATA 2018 (exact in the 2019 SI)
constexpr double kAirNitrogenPerOxygen = 79.0 / 21.0;  // dry air, argon counted as N2
constexpr double kCarbon = 12.011e-3, kHydrogen = 1.008e-3, kOxygen = 15.999e-3,
                 kNitrogen = 14.007e-3;  // kg/mol, IUPAC standard atomic weights

struct Nasa7 {
  double high[7];  // 1000..3500 K
  double low[7];   // 200..1000 K
};

// GRI-Mech 3.0 thermodynamic data (NASA 7-coefficient form), recalled from memory: see the
// header; tests/test_combustion.cpp checks continuity at 1000 K and JANAF values at 298.15 K.
const Nasa7& coefficients(Species s) {
  static const Nasa7 n2 = {{2.92664000e+00, 1.48797680e-03, -5.68476000e-07, 1.00970380e-10,
                            -6.75335100e-15, -9.22797700e+02, 5.98052800e+00},
                           {3.29867700e+00, 1.40824040e-03, -3.96322200e-06, 5.64151500e-09,
                            -2.44485400e-12, -1.02089990e+03, 3.95037200e+00}};
  static const Nasa7 o2 = {{3.28253784e+00, 1.48308754e-03, -7.57966669e-07, 2.09470555e-10,
                            -2.16717794e-14, -1.08845772e+03, 5.45323129e+00},
                           {3.78245636e+00, -2.99673416e-03, 9.84730201e-06, -9.68129509e-09,
                            3.24372837e-12, -1.06394356e+03, 3.65767573e+00}};
  static const Nasa7 co2 = {{3.85746029e+00, 4.41437026e-03, -2.21481404e-06, 5.23490188e-10,
                             -4.72084164e-14, -4.87591660e+04, 2.27163806e+00},
                            {2.35677352e+00, 8.98459677e-03, -7.12356269e-06, 2.45919022e-09,
                             -1.43699548e-13, -4.83719697e+04, 9.90105222e+00}};
  static const Nasa7 h2o = {{3.03399249e+00, 2.17691804e-03, -1.64072518e-07, -9.70419870e-11,
                             1.68200992e-14, -3.00042971e+04, 4.96677010e+00},
                            {4.19864056e+00, -2.03643410e-03, 6.52040211e-06, -5.48797062e-09,
                             1.77197817e-12, -3.02937267e+04, -8.49032208e-01}};
  static const Nasa7 ch4 = {{7.48514950e-02, 1.33909467e-02, -5.73285809e-06, 1.22292535e-09,
                             -1.01815230e-13, -9.46834459e+03, 1.84373180e+01},
                            {5.14987613e+00, -1.36709788e-02, 4.91800599e-05, -4.84743026e-08,
                             1.66693956e-11, -1.02466476e+04, -4.64130376e+00}};
  static const Nasa7 c3h8 = {{7.53413680e+00, 1.88722390e-02, -6.27184900e-06, 9.14756490e-10,
                              -4.78380690e-14, -1.64675160e+04, -1.78923490e+01},
                             {9.33553810e-01, 2.64245790e-02, 6.10597270e-06, -2.19774990e-08,
                              9.51492530e-12, -1.39585200e+04, 1.92016910e+01}};
  switch (s) {
    case Species::N2:
      return n2;
    case Species::O2:
      return o2;
    case Species::CO2:
      return co2;
    case Species::H2O:
      return h2o;
    case Species::CH4:
      return ch4;
    case Species::C3H8:
      return c3h8;
  }
  throw std::logic_error("unknown species");
}

const double* range_for(Species s, double T) {
  const Nasa7& c = coefficients(s);
  return T < 1000 ? c.low : c.high;
}

// Lower heating value (J/kg) of C_x H_y from the enthalpies of formation at 25 C, water as
// vapour: C_x H_y + (x + y/4) O2 -> x CO2 + y/2 H2O.
double heating_value_from_formation(Species fuel, double x, double y) {
  const double T = kReferenceTemperature;
  const double reactants = molar_enthalpy(fuel, T) + (x + y / 4) * molar_enthalpy(Species::O2, T);
  const double products =
      x * molar_enthalpy(Species::CO2, T) + y / 2 * molar_enthalpy(Species::H2O, T);
  return (reactants - products) / molar_mass(fuel);
}

}  // namespace

double molar_enthalpy(Species s, double T) {
  const double* a = range_for(s, T);
  return kGasConstant * T *
         (a[0] + T * (a[1] / 2 + T * (a[2] / 3 + T * (a[3] / 4 + T * a[4] / 5))) + a[5] / T);
}

double molar_heat_capacity(Species s, double T) {
  const double* a = range_for(s, T);
  return kGasConstant * (a[0] + T * (a[1] + T * (a[2] + T * (a[3] + T * a[4]))));
}

double molar_mass(Species s) {
  switch (s) {
    case Species::N2:
      return 2 * kNitrogen;
    case Species::O2:
      return 2 * kOxygen;
    case Species::CO2:
      return kCarbon + 2 * kOxygen;
    case Species::H2O:
      return 2 * kHydrogen + kOxygen;
    case Species::CH4:
      return kCarbon + 4 * kHydrogen;
    case Species::C3H8:
      return 3 * kCarbon + 8 * kHydrogen;
  }
  throw std::logic_error("unknown species");
}

Fuel methane() {
  return {"methane (natural gas)", 1, 4, molar_mass(Species::CH4),
          heating_value_from_formation(Species::CH4, 1, 4)};
}

Fuel propane() {
  return {"propane", 3, 8, molar_mass(Species::C3H8),
          heating_value_from_formation(Species::C3H8, 3, 8)};
}

Fuel fuel_oil(double c_to_h, double lower_heating_value) {
  if (!std::isfinite(c_to_h) || c_to_h < 4 || c_to_h > 12)
    throw InputError("fuel oil: carbon-to-hydrogen mass ratio must be between 4 and 12 (got " +
                     rounded("%.6g", c_to_h) + "; light fuel oil is about 6.3 to 7.5)");
  if (!std::isfinite(lower_heating_value) || lower_heating_value < 30e6 ||
      lower_heating_value > 50e6)
    throw InputError("fuel oil: lower heating value must be between 30 and 50 MJ/kg (got " +
                     rounded("%.6g", lower_heating_value / 1e6) + " MJ/kg)");
  const double n = (kCarbon / kHydrogen) / c_to_h;  // H atoms per C atom
  return {"fuel oil CH" + rounded("%.6g", n), 1, n, kCarbon + n * kHydrogen, lower_heating_value};
}

bool CombustionInput::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (!(fuel.carbon > 0) || !(fuel.hydrogen >= 0) || !(fuel.molar_mass > 0) ||
      !(fuel.lower_heating_value > 0))
    return fail("the fuel needs positive carbon, molar mass and heating value");
  if (!std::isfinite(firing_rate) || firing_rate <= 0)
    return fail("firing rate must be positive (W)");
  if (flue_o2_dry >= 0) {
    if (!(flue_o2_dry < 0.15))
      return fail("O2 in the dry flue gas must be below 15 % (got " +
                  rounded("%.6g", 100 * flue_o2_dry) + " %)");
  } else if (!std::isfinite(excess_air) || excess_air < 0 || excess_air > 5) {
    return fail("excess air must be between 0 and 500 % (got " + rounded("%.6g", 100 * excess_air) +
                " %)");
  }
  if (!std::isfinite(air_temperature) || air_temperature < 200 || air_temperature > 1500)
    return fail("combustion-air temperature must be between 200 and 1500 K (got " +
                rounded("%.6g", air_temperature) + " K)");
  return true;
}

Combustion burn(const CombustionInput& in) {
  std::string why;
  if (!in.IsValid(&why)) throw InputError("combustion: " + why);
  Combustion c;
  c.fuel = in.fuel;
  c.firing_rate = in.firing_rate;
  c.air_temperature = in.air_temperature;
  const double x = in.fuel.carbon, y = in.fuel.hydrogen;
  const double stoich_o2 = x + y / 4;  // mol O2 per mol fuel
  const double k = kAirNitrogenPerOxygen;
  if (in.flue_o2_dry >= 0) {
    // Dry products per mol fuel: x CO2 + e S O2 + k (1 + e) S N2, with O2 share w:
    // e S (1 - w (1 + k)) = w (x + k S).
    const double w = in.flue_o2_dry;
    c.excess_air = w * (x + k * stoich_o2) / (stoich_o2 * (1 - w * (1 + k)));
  } else {
    c.excess_air = in.excess_air;
  }
  const double e = c.excess_air;
  c.fuel_mass_flow = in.firing_rate / in.fuel.lower_heating_value;
  const double n_fuel = c.fuel_mass_flow / in.fuel.molar_mass;
  c.n_air_o2 = (1 + e) * stoich_o2 * n_fuel;
  c.n_air_n2 = k * c.n_air_o2;
  c.air_mass_flow = c.n_air_o2 * molar_mass(Species::O2) + c.n_air_n2 * molar_mass(Species::N2);
  c.stoichiometric_air_fuel_ratio = c.air_mass_flow / (1 + e) / c.fuel_mass_flow;
  c.products_mass_flow = c.fuel_mass_flow + c.air_mass_flow;
  c.n_co2 = x * n_fuel;
  c.n_h2o = y / 2 * n_fuel;
  c.n_o2 = e * stoich_o2 * n_fuel;
  c.n_n2 = c.n_air_n2;
  const double total = c.n_co2 + c.n_h2o + c.n_o2 + c.n_n2;
  c.p_co2 = c.n_co2 / total;
  c.p_h2o = c.n_h2o / total;
  c.p_o2 = c.n_o2 / total;
  c.p_n2 = c.n_n2 / total;
  c.flue_o2_dry = c.n_o2 / (total - c.n_h2o);
  const double T0 = kReferenceTemperature, Ta = in.air_temperature;
  c.air_enthalpy_in =
      c.n_air_o2 * (molar_enthalpy(Species::O2, Ta) - molar_enthalpy(Species::O2, T0)) +
      c.n_air_n2 * (molar_enthalpy(Species::N2, Ta) - molar_enthalpy(Species::N2, T0));
  c.adiabatic_flame_temperature = c.products_temperature(c.firing_rate + c.air_enthalpy_in);
  return c;
}

double Combustion::products_enthalpy(double T) const {
  const double T0 = kReferenceTemperature;
  auto dh = [&](Species s) { return molar_enthalpy(s, T) - molar_enthalpy(s, T0); };
  return n_co2 * dh(Species::CO2) + n_h2o * dh(Species::H2O) + n_o2 * dh(Species::O2) +
         n_n2 * dh(Species::N2);
}

double Combustion::products_heat_capacity(double T) const {
  return n_co2 * molar_heat_capacity(Species::CO2, T) +
         n_h2o * molar_heat_capacity(Species::H2O, T) + n_o2 * molar_heat_capacity(Species::O2, T) +
         n_n2 * molar_heat_capacity(Species::N2, T);
}

double Combustion::products_temperature(double H) const {
  // Newton safeguarded by bisection on [100, 6000] K (H(T) increases: cp > 0).
  double lo = 100, hi = 6000;
  if (!(H >= products_enthalpy(lo) && H <= products_enthalpy(hi)))
    throw InputError("combustion: products' enthalpy " + rounded("%.6g", H) +
                     " W is outside what 100..6000 K can carry");
  double T = 1500;
  for (int it = 0; it < 200; ++it) {
    const double f = products_enthalpy(T) - H;
    (f > 0 ? hi : lo) = T;
    double next = T - f / products_heat_capacity(T);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::fabs(next - T) < 1e-11 * T) return next;
    T = next;
  }
  return T;
}

}  // namespace hearthray
