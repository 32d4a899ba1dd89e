// Gray gases: the single gray gas, the WSGG sets of Smith, Shen & Friedman (1982), soot.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/error.hpp"
#include "hearthray/gas_properties.hpp"

using namespace hearthray;

TEST_CASE("a gray gas has one weight of one and the Beer-Lambert emissivity", "[gas]") {
  const GrayGasSet gas = GrayGasSet::gray(0.5);
  REQUIRE(gas.size() == 1);
  CHECK(gas.weight(0, 300) == 1.0);
  CHECK(gas.weight_derivative(0, 1500) == 0.0);
  // eps = 1 - exp(-k L) for a uniform gray path (Beer-Lambert law; Modest, Radiative Heat
  // Transfer, ch. 1).
  CHECK(gas.emissivity(1200, 2.0) == Approx(1 - std::exp(-1.0)).epsilon(1e-14));
  CHECK_THROWS_AS(GrayGasSet::gray(-1), InputError);
  CHECK_THROWS_AS(GrayGasSet::gray(NAN), InputError);
}

TEST_CASE("WSGG weights stay positive and below one over the fit's temperature range", "[gas]") {
  // Smith, Shen & Friedman (1982) fit 600..2400 K: a_i > 0 and sum a_i < 1 there, so the
  // clear gas keeps a positive share. The two water-vapour sets are the exception: as
  // transcribed, their third weight dips to -5.5e-4 above about 2050 K (checked by hand from the
  // table; a property of the cubic fit, kept as published), so they are held to > -1e-3.
  for (WsggSet set : {WsggSet::mixture_ratio_1, WsggSet::mixture_ratio_2, WsggSet::co2_only,
                      WsggSet::h2o_dilute, WsggSet::h2o_one_atm}) {
    const GrayGasSet gas = GrayGasSet::wsgg(set, {0.1, 0.1});
    REQUIRE(gas.size() == 4);
    for (double T = 600; T <= 2400; T += 50) {
      double sum = 0;
      for (std::size_t g = 0; g < 4; ++g) {
        const bool water = set == WsggSet::h2o_dilute || set == WsggSet::h2o_one_atm;
        CHECK(gas.weight(g, T) > (water ? -1e-3 : 0.0));
        sum += gas.weight(g, T);
      }
      CHECK(sum == Approx(1.0).epsilon(1e-14));
      // The derivative is the polynomial's: compare with a central difference.
      for (std::size_t g = 0; g < 4; ++g) {
        const double h = 0.01;
        const double fd = (gas.weight(g, T + h) - gas.weight(g, T - h)) / (2 * h);
        if (T > 600 && T < 2400) CHECK(gas.weight_derivative(g, T) == Approx(fd).margin(1e-9));
      }
    }
  }
}

TEST_CASE("WSGG emissivity of a uniform path matches the published formula", "[gas]") {
  // Reference values: eps = sum_i a_i(T) [1 - exp(-kappa_i pL)] (Smith, Shen & Friedman 1982,
  // eq. 2 and Table 2), evaluated by hand in
  // a separate Python session from a second typing of the table, not by this code.
  struct Case {
    WsggSet set;
    double T, pL, eps;
  };
  const Case cases[] = {
      {WsggSet::mixture_ratio_2, 1000, 0.1, 0.206212},
      {WsggSet::mixture_ratio_2, 1500, 0.3, 0.267036},
      {WsggSet::mixture_ratio_2, 1200, 1.0, 0.420049},
      {WsggSet::mixture_ratio_2, 2000, 0.05, 0.060742},
      {WsggSet::mixture_ratio_1, 1000, 0.1, 0.188817},
      {WsggSet::mixture_ratio_1, 1500, 0.3, 0.240999},
      {WsggSet::co2_only, 1000, 0.1, 0.115825},
      {WsggSet::co2_only, 1500, 0.3, 0.123805},
  };
  for (const Case& c : cases) {
    // pL in atm m: a path of L = pL / p at p_w + p_c = 0.3 atm (ratio 2), or CO2 alone.
    const GasComposition comp =
        c.set == WsggSet::co2_only ? GasComposition{0.0, 0.3} : GasComposition{0.2, 0.1};
    const GrayGasSet gas = GrayGasSet::wsgg(c.set, comp);
    INFO(to_string(c.set) << " T = " << c.T << " pL = " << c.pL);
    CHECK(gas.emissivity(c.T, c.pL / 0.3) == Approx(c.eps).margin(1e-6));
  }
  // The weights at 1500 K of the ratio-2 set, from the same hand evaluation: 0.3190, 0.2386,
  // 0.0244 and the clear gas 0.4179.
  const GrayGasSet gas = GrayGasSet::wsgg(WsggSet::mixture_ratio_2, {0.2, 0.1});
  CHECK(gas.weight(1, 1500) == Approx(0.3190).margin(1e-4));
  CHECK(gas.weight(2, 1500) == Approx(0.2386).margin(1e-4));
  CHECK(gas.weight(3, 1500) == Approx(0.0244).margin(1e-4));
  CHECK(gas.weight(0, 1500) == Approx(0.4179).margin(1e-4));
  // Gray gas i has k_i = kappa_i (p_w + p_c) (data file): 6.516 (atm m)^-1 x 0.3 atm.
  CHECK(gas.absorption_coefficient(2) == Approx(6.516 * 0.3).epsilon(1e-14));
  CHECK(gas.absorption_coefficient(0) == 0.0);
}

TEST_CASE("WSGG set follows p_w/p_c and refuses states outside the fit", "[gas]") {
  CHECK(GrayGasSet::wsgg({0.18, 0.09}).set() == WsggSet::mixture_ratio_2);  // methane in air
  CHECK(GrayGasSet::wsgg({0.12, 0.12}).set() == WsggSet::mixture_ratio_1);
  CHECK(GrayGasSet::wsgg({0.0, 0.1}).set() == WsggSet::co2_only);
  CHECK(GrayGasSet::wsgg({0.1, 0.0}).set() == WsggSet::h2o_dilute);
  CHECK(GrayGasSet::wsgg({0.12, 0.12}).warnings().empty());
  CHECK_FALSE(GrayGasSet::wsgg({0.3, 0.1}).warnings().empty());  // ratio 3: extrapolated
  CHECK_THROWS_WITH(GrayGasSet::wsgg({0.5, 0.1}), Catch::Contains("outside the range"));
  CHECK_THROWS_WITH(GrayGasSet::wsgg({0.01, 0.1}), Catch::Contains("outside the range"));
  CHECK_THROWS_AS(GrayGasSet::wsgg({0.0, 0.0}), InputError);
  CHECK_THROWS_AS(GrayGasSet::wsgg({0.7, 0.5}), InputError);  // above 1 atm
  CHECK_THROWS_AS(GrayGasSet::wsgg({-0.1, 0.1}), InputError);
  // Outside 600..2400 K the weights are held at the end of the range and flagged.
  const GrayGasSet gas = GrayGasSet::wsgg({0.2, 0.1});
  CHECK_FALSE(gas.temperature_in_range(400));
  CHECK(gas.weight(1, 400) == gas.weight(1, 600));
  CHECK(gas.weight_derivative(1, 400) == 0.0);
}

TEST_CASE("soot adds a gray absorption coefficient to every gray gas", "[gas]") {
  // k = 3.83 C0 f_v T / C2 with C0 = 7 (Modest; recalled): about 1860 f_v T (the value often
  // quoted for soot, also recalled).
  const double k = soot_absorption_coefficient(1e-7, 1500);
  CHECK(k == Approx(1863.4 * 1e-7 * 1500).epsilon(1e-3));
  GasComposition comp{0.12, 0.12, 1e-7, 1500};
  const GrayGasSet gas = GrayGasSet::wsgg(comp);
  const GrayGasSet clean = GrayGasSet::wsgg({0.12, 0.12});
  for (std::size_t g = 0; g < gas.size(); ++g)
    CHECK(gas.absorption_coefficient(g) - clean.absorption_coefficient(g) ==
          Approx(k).epsilon(1e-12));
  CHECK(gas.emissivity(1500, 1.0) > clean.emissivity(1500, 1.0));
  CHECK_THROWS_AS(GrayGasSet::wsgg({0.12, 0.12, 1e-2, 1500}), InputError);
}
