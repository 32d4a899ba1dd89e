// Combustion: from a fuel, a firing rate and the excess air to the products' composition
// (partial pressures for the gas properties), mass flow and enthalpy.
//
// Complete combustion of C_x H_y in dry air (21 % O2, 79 % N2 by volume, argon counted as
// nitrogen: common practice) at 1 atm; no dissociation, no CO, no NOx. Fuel and air enter at
// their temperatures, the fuel at 25 C. The firing rate is on the lower heating value (water
// leaves as vapour), so heat released = firing rate when the products leave at 25 C.
//
// Thermochemistry: NASA 7-coefficient polynomials (McBride, Gordon & Reno, "Coefficients for
// calculating thermodynamic and transport properties of individual species", NASA TM-4513,
// 1993), with the coefficients of the GRI-Mech 3.0 thermodynamic data file (Smith et al.,
// 1999) for N2, O2, CO2, H2O, CH4 and C3H8 over 200..3500 K. The coefficients were recalled
// from memory; checked here (tests/test_combustion.cpp) for continuity of cp, h and s at the
// 1000 K break and against JANAF values at 298.15 K.
#pragma once

#include <string>

namespace hearthray {

enum class Species { N2, O2, CO2, H2O, CH4, C3H8 };

// Molar enthalpy (J/mol, including the enthalpy of formation at 298.15 K) and heat capacity
// (J/mol K) at T (K). Outside 200..3500 K the end polynomial is extrapolated.
double molar_enthalpy(Species s, double T);
double molar_heat_capacity(Species s, double T);
// Molar mass, kg/mol (IUPAC atomic weights C 12.011, H 1.008, O 15.999, N 14.007).
double molar_mass(Species s);

inline constexpr double kReferenceTemperature = 298.15;  // K, 25 C

struct Fuel {
  std::string name;
  double carbon = 1, hydrogen = 4;  // atoms per molecule (per carbon atom for an oil)
  double molar_mass = 0;            // kg/mol of that unit
  double lower_heating_value = 0;   // J/kg
};

// Natural gas taken as methane; LHV from the enthalpies of formation above (50.0 MJ/kg).
Fuel methane();
Fuel propane();
// A light fuel oil as CH_n from its carbon-to-hydrogen mass ratio (typical 6.3..7.5) and its
// lower heating value (J/kg; 42.7 MJ/kg is a typical figure for light heating oil, common
// practice: give the supplier's).
Fuel fuel_oil(double carbon_to_hydrogen_mass_ratio, double lower_heating_value = 42.7e6);

struct CombustionInput {
  Fuel fuel = methane();
  double firing_rate = 0;  // W, on the lower heating value
  // Air beyond stoichiometric, as a fraction (0.1 = 10 % excess air)...
  double excess_air = 0.1;
  // ...or, when >= 0, the oxygen in the dry flue gas as a volume fraction (0.03 = 3 % O2 dry);
  // the excess air follows from it.
  double flue_o2_dry = -1;
  double air_temperature = kReferenceTemperature;  // K

  bool IsValid(std::string* error) const;
};

struct Combustion {
  Fuel fuel;
  double firing_rate = 0;                    // W
  double excess_air = 0;                     // fraction
  double flue_o2_dry = 0;                    // volume fraction of O2 in the dry products
  double air_temperature = 0;                // K
  double fuel_mass_flow = 0;                 // kg/s
  double air_mass_flow = 0;                  // kg/s
  double products_mass_flow = 0;             // kg/s (fuel + air)
  double stoichiometric_air_fuel_ratio = 0;  // kg air / kg fuel
  // Molar flows of the products, mol/s, and of the air, mol/s.
  double n_co2 = 0, n_h2o = 0, n_o2 = 0, n_n2 = 0;
  double n_air_o2 = 0, n_air_n2 = 0;
  // Partial pressures of the products at 1 atm total, atm (= mole fractions).
  double p_co2 = 0, p_h2o = 0, p_o2 = 0, p_n2 = 0;
  double air_enthalpy_in = 0;              // W: sensible enthalpy of the air above 25 C
  double adiabatic_flame_temperature = 0;  // K, all heat released, no losses, no dissociation

  // Sensible enthalpy flow of the products at T above 25 C, W, and its derivative, W/K.
  double products_enthalpy(double T) const;
  double products_heat_capacity(double T) const;
  // Temperature at which the products carry the enthalpy flow H (W above 25 C).
  double products_temperature(double H) const;
};

// Throws InputError for invalid input (naming the field).
Combustion burn(const CombustionInput& input);

}  // namespace hearthray
