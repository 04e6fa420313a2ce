// The one noise model (imaging/noise_correlation.hpp):
//  * eta is 2 x pixels-per-beam for noise white before the beam and 1 x for
//    an interferometric image, never below 1, 1 without a beam (the formula
//    of the header: Omega_beam = 2 pi sigma_maj sigma_min, common practice);
//  * against a numpy simulation (tests/python/check_noise_correlation.py):
//    white deviates smoothed by the beam in Fourier space (or shaped to
//    correlate like the beam), the measured pixel correlation at given lags
//    and the measured variance of sums over boxes much larger than the beam
//    agree with rho and eta of fulcrum within the simulation's sampling error.
#include "fulcrum/imaging/noise_correlation.hpp"

#include <catch2/catch.hpp>

#include <cmath>
#include <nlohmann/json.hpp>
#include <numbers>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"

using namespace fulcrum;

TEST_CASE("noise correlation: eta from the beam", "[imaging][noise]") {
  const Beam beam{2.0, 1.6, 30.0};
  const double pix = 0.25;  // 0.5" pixels
  const double ppb = beam.pixels_per_beam(pix);
  // exact: area of a Gaussian with sigma^2 = 2 sigma_b^2 per axis over the pixel area
  CHECK(correlated_pixel_factor(beam, pix) == Approx(2.0 * ppb).epsilon(1e-12));
  CHECK(correlated_pixel_factor(beam, pix, NoiseModel::interferometric) == Approx(ppb).epsilon(1e-12));
  CHECK(correlated_pixel_factor(std::nullopt, pix) == 1.0);
  CHECK(correlated_pixel_factor(Beam{0.01, 0.01, 0.0}, pix) == 1.0);  // narrower than a pixel
  const NoiseCorrelation c = noise_correlation_of_beam(beam);
  CHECK(c.at(0, 0) == 1.0);
  // Along the major axis (PA 30), half a FWHM out the beam is 1/2 and its
  // autocorrelation (sigma sqrt2 x larger) 2^(-1/2); one FWHM out the beam is
  // 2^-4 and the autocorrelation 2^-2. Exact.
  const double pa = 30.0 * std::numbers::pi / 180.0;
  CHECK(c.at(1.0 * std::sin(pa), 1.0 * std::cos(pa)) == Approx(std::pow(2.0, -0.5)).epsilon(1e-12));
  CHECK(c.at(2.0 * std::sin(pa), 2.0 * std::cos(pa)) == Approx(0.25).epsilon(1e-12));
  // Along the minor axis (PA 120), half the minor FWHM out: 2^(-1/2).
  const double pm = 120.0 * std::numbers::pi / 180.0;
  CHECK(c.at(0.8 * std::sin(pm), 0.8 * std::cos(pm)) == Approx(std::pow(2.0, -0.5)).epsilon(1e-12));
  CHECK(parse_noise_model("interferometric") == NoiseModel::interferometric);
  CHECK_THROWS_AS(parse_noise_model("white"), InputError);
}

TEST_CASE("noise correlation: rho and eta against a numpy simulation", "[imaging][noise][python]") {
  const auto dir = test::temp_dir("noise_correlation");
  nlohmann::json cases = nlohmann::json::array();
  struct Case { Beam beam; double pixel, rotation; bool flip; NoiseModel model; };
  const Case list[] = {{{2.0, 1.6, 30.0}, 0.5, 25.0, false, NoiseModel::smoothed},
                       {{1.5, 1.5, 0.0}, 0.5, 0.0, true, NoiseModel::smoothed},
                       {{2.0, 1.2, 120.0}, 0.5, 40.0, false, NoiseModel::interferometric}};
  for (const auto& k : list) {
    const NoiseCorrelation c = noise_correlation_of_beam(k.beam, k.model);
    nlohmann::json lags = nlohmann::json::array();
    for (auto [de, dn] : {std::pair{0.5, 0.0}, {0.0, 0.5}, {1.0, 1.0}, {-1.5, 0.5}, {2.0, -1.0}})
      lags.push_back({{"east", de}, {"north", dn}, {"rho", c.at(de, dn)}});
    cases.push_back({{"bmaj_arcsec", k.beam.bmaj_arcsec}, {"bmin_arcsec", k.beam.bmin_arcsec},
                     {"bpa_deg", k.beam.bpa_deg}, {"pixel_arcsec", k.pixel},
                     {"grid_rotation_deg", k.rotation}, {"flip", k.flip},
                     {"model", noise_model_name(k.model)},
                     {"eta", correlated_pixel_factor(k.beam, k.pixel * k.pixel, k.model)},
                     {"lags", lags}});
  }
  const auto path = (dir / "cases.json").string();
  write_text_file(path, cases.dump());
  const auto r = test::run_python("check_noise_correlation.py", path);
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  WARN(r.out);
}
