// The noise of a line map from its emission-free pixels, against Gaussian
// noise fields drawn by numpy (tests/python/make_noise_maps.py): the truth
// is the realised numpy standard deviation of the noise alone.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "fulcrum/imaging/noise_estimate.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;

TEST_CASE("map noise from emission-free pixels matches numpy's noise", "[imaging][noise][python]") {
  const auto dir = test::temp_dir("noise");
  const auto r = test::run_python("make_noise_maps.py", dir.string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  nlohmann::json truth;
  std::ifstream(dir / "truth.json") >> truth;
  for (const char* name : {"white", "correlated"}) {
    const Image map = read_image((dir / (std::string(name) + ".fits")).string());
    const NoiseEstimate e = estimate_map_noise(map);
    const double t = truth[name]["numpy_std"].get<double>();
    INFO(name << ": " << e.sentence(map.unit) << " vs numpy " << t << "; negative side " << e.rms_negative_side
              << "; " << e.check);
    REQUIRE(e.ok);
    // 12000 pixels minus the source: the MAD's statistical error is
    // ~1.1% (white), larger for beam-correlated noise (~60 independent
    // pixels per beam area fewer); acceptance 4% and 8%.
    CHECK(std::abs(e.rms / t - 1.0) < (std::string(name) == "white" ? 0.04 : 0.08));
    CHECK(std::abs(e.rms_negative_side / t - 1.0) < (std::string(name) == "white" ? 0.04 : 0.08));
    CHECK(e.check.empty());
    CHECK(e.pixels_used < map.size() - 500);  // the source was left out
    CHECK(e.sentence(map.unit).find("emission-free pixels: rms = ") != std::string::npos);
  }
  const Image masked = read_image((dir / "masked.fits").string());
  const NoiseEstimate m = estimate_map_noise(masked);
  CHECK_FALSE(m.ok);
  CHECK(m.reason.find("no noise outside its emission") != std::string::npos);
}

TEST_CASE("too few emission-free pixels: the noise is not estimated", "[imaging][noise]") {
  Image im;
  im.nx = im.ny = 8;
  im.data.assign(64, 0.0);
  for (int i = 0; i < 64; ++i) im.data[i] = 0.01 * ((i * 37) % 11 - 5);
  const NoiseEstimate e = estimate_map_noise(im);
  CHECK_FALSE(e.ok);
  CHECK(e.reason.find("emission-free pixels (at least 100") != std::string::npos);
}
