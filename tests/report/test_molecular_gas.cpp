// Molecular-gas masses: the Solomon & Vanden Bout (2005) coefficient
// 3.25e7 against the definition L' = c^2 / (2 k) S dV nu_obs^-2 D_L^2
// (1 + z)^-3 evaluated with astropy's constants and units (python3-astropy).
#include <catch2/catch.hpp>

#include <cmath>

#include "../support/test_support.hpp"
#include "fulcrum/report/molecular_gas.hpp"

using namespace fulcrum;
using namespace fulcrum::report;

TEST_CASE("L'CO agrees with its definition evaluated by astropy", "[report][python]") {
  for (const char* line : {"1-0", "2-1"})
    for (double z : {0.0, 0.023, 0.5}) {
      double lp = co_line_luminosity(2.5, line, 95.0, z);
      auto r = test::run_python("check_lprime.py", std::string(line) + " " + std::to_string(z) + " " +
                                                       std::to_string(lp));
      INFO(r.out << r.err);
      CHECK(r.exit_code == 0);
    }
}

TEST_CASE("masses of the halves follow alpha_CO and R21, non-Jy units are refused", "[report]") {
  MolecularGasOptions o;
  o.distance_mpc = 100.0;
  std::string why;
  auto m = molecular_gas_masses(3.0, 1.0, 0.1, 0.1, "Jy km/s", o, &why);
  REQUIRE(m);
  CHECK(m->leading_mass / m->trailing_mass == Approx(3.0));
  CHECK(m->leading_mass == Approx(4.3 * m->leading_lprime));  // Bolatto+2013 Galactic alpha_CO
  o.line = "2-1";
  auto m21 = molecular_gas_masses(3.0, 1.0, 0.1, 0.1, "Jy km/s", o, &why);
  REQUIRE(m21);
  CHECK(m21->leading_mass == Approx(4.3 * m21->leading_lprime / 0.65));
  CHECK(!molecular_gas_masses(3.0, 1.0, 0.1, 0.1, "K km/s x pixel", o, &why));
  CHECK(why.find("Jy km/s") != std::string::npos);
  o.distance_mpc = 0;
  CHECK(!molecular_gas_masses(3.0, 1.0, 0.1, 0.1, "Jy km/s", o, &why));
}
