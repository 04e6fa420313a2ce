// Noise of clipped line-map pixels (split/clipped_noise.hpp): the closed-form
// variance against scipy.stats.truncnorm, its limits, and its use by the split.
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
