// Noise of clipped line-map pixels (split/clipped_noise.hpp): the closed-form
// variance against scipy.stats.truncnorm, the Hermite covariance of two
// clipped pixels against direct integration (scipy), its limits, and its use
// by the split.
#include <catch2/catch.hpp>

#include <fstream>

#include <nlohmann/json.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/split/clipped_noise.hpp"
#include "fulcrum/split/half_split.hpp"
#include "split_mock.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::split;

TEST_CASE("clipped-pixel variance equals scipy truncnorm moments", "[split][clip][python]") {
  auto dir = test::temp_dir("clipvar");
  nlohmann::json cases = nlohmann::json::array();
  for (double sigma : {0.5, 1.0, 3.0})
    for (double t : {0.0, 2.0, 3.0, 5.0})
      for (double snr : {-3.0, -0.5, 0.0, 1.0, 2.5, 3.0, 3.5, 6.0, 20.0})
        cases.push_back({{"s", snr * sigma}, {"sigma", sigma}, {"t", t},
                         {"variance", clipped_pixel_variance(snr * sigma, sigma, t)}});
  std::ofstream(dir / "cases.json") << cases.dump(1);
  auto r = test::run_python("check_clipped_variance.py", (dir / "cases.json").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("clipped-pixel covariance from Hermite coefficients equals direct integration",
          "[split][clip][python]") {
  auto dir = test::temp_dir("clipcov");
  nlohmann::json cases = nlohmann::json::array();
  constexpr int kOrder = 120;  // rho^k <= 0.8^120 = 2e-12: the series' tail is negligible
  for (double t : {2.0, 3.0})
    for (double si : {-1.0, 1.5, 3.0, 4.5, 10.0})
      for (double sj : {0.0, 2.8, 6.0})
        for (double rho : {0.2, 0.5, 0.8}) {
          const double gi = 1.0, gj = 0.7;  // different sigmas: an error map
          const auto ci = clipped_hermite_coefficients(si, gi, t, kOrder);
          const auto cj = clipped_hermite_coefficients(sj, gj, t, kOrder);
          double cov = 0.0, term = 1.0;
          for (int k = 1; k <= kOrder; ++k) {
            term *= rho / k;  // rho^k / k!
            cov += ci[k - 1] * cj[k - 1] * term;
          }
          const double mean_i = clipped_pixel_mean(si, gi, t);
          cases.push_back({{"si", si}, {"sj", sj}, {"sigi", gi}, {"sigj", gj}, {"t", t}, {"rho", rho},
                           {"covariance", cov}, {"mean_i", mean_i},
                           {"inverse_i", brightness_of_clipped_mean(mean_i, gi, t)}});
        }
  std::ofstream(dir / "cases.json") << cases.dump(1);
  auto r = test::run_python("check_clipped_covariance.py", (dir / "cases.json").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("clipped-pixel Hermite coefficients add up to the variance", "[split][clip]") {
  // sum_k c_k^2 / k! = Var M (Parseval for the Hermite basis). The clip is a
  // jump, so c_k^2 / k! falls only like k^-3/2 and the partial sums approach
  // Var M from below, slowly: at order 160 they hold 88-98% of it for these
  // S/N (measured with scipy in Python while writing this test).
  for (double s : {-2.0, 0.0, 2.0, 3.0, 4.0, 8.0}) {
    const auto c = clipped_hermite_coefficients(s, 1.0, 3.0, 160);
    double sum = 0.0, fact = 1.0;
    for (int k = 1; k <= 160; ++k) {
      fact *= k;
      sum += c[k - 1] * c[k - 1] / fact;
    }
    const double var = clipped_pixel_variance(s, 1.0, 3.0);
    INFO("S/N " << s << ": sum " << sum << ", variance " << var);
    CHECK(sum <= var * (1.0 + 1e-9));
    CHECK(sum >= 0.87 * var);
  }
  // Far above the threshold only c_1 = sigma is left (linear pixel).
  const auto c = clipped_hermite_coefficients(40.0, 2.0, 3.0, 4);
  CHECK(c[0] == Approx(2.0).epsilon(1e-12));
  CHECK(std::abs(c[1]) < 1e-12);
}

TEST_CASE("clipped-pixel variance limits", "[split][clip]") {
  // Far above the threshold the clip never acts: sigma^2 (exact limit).
  CHECK(clipped_pixel_variance(30.0, 1.0, 3.0) == Approx(1.0).epsilon(1e-9));
  // Far below: the pixel is always 0 (down to the floor).
  CHECK(clipped_pixel_variance(-20.0, 1.0, 3.0) < 1e-9);
  // At the threshold the jump between 0 and ~t sigma dominates: 3.79 sigma^2
  // at t = 3 (from the closed form, E[M] = 1.899, E[M^2] = 7.394).
  CHECK(clipped_pixel_variance(3.0, 1.0, 3.0) == Approx(3.7875).margin(2e-3));
}

TEST_CASE("a clipped map's split uses the clip-aware variances", "[split][clip]") {
  test::TinyMock m;
  m.rms = 0.05;
  auto maps = test::make_tiny_mock(m);
  for (double& v : maps.map.data)
    if (v < 3.0 * m.rms) v = 0.0;
  SplitOptions so;
  so.centre = m.centre;
  so.rms = m.rms;
  so.aperture = ApertureSpec{8.0, 60.0, 0.7, std::nullopt};
  const SplitSummary plain = split_halves(maps.map, so);
  so.clip_snr = 3.0;
  const SplitSummary clip = split_halves(maps.map, so);
  INFO("sigma_A plain " << plain.asymmetry_err << ", clip-aware " << clip.asymmetry_err);
  CHECK(clip.asymmetry == plain.asymmetry);  // the values are untouched
  CHECK(clip.asymmetry_err != plain.asymmetry_err);
  CHECK(clip.noise_source.find("clip-aware") != std::string::npos);
  so.clip_snr = -1.0;
  CHECK_THROWS_AS(split_halves(maps.map, so), InputError);
}
