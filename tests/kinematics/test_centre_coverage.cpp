// CI-sized coverage check of the dynamical centre's error ellipse on mocks
// that fulcrum did not make: tools/coverage_study.py draws 16 noise
// realisations of the `bright` galaxy of tests/python/mockgen.py (numpy /
// scipy / astropy: beam-correlated noise by FFT, moment-1 velocities of a
// beam-convolved disc, 3-sigma clipping), runs `fulcrum kinematics` on each
// and returns the squared Mahalanobis distances of the true centre.
//
// For a correct 2x2 covariance m2 follows chi^2 with 2 degrees of freedom:
// mean 2, P(m2 <= 4) = 1 - e^-2 = 0.865 (exact). Errors 1.4x too small (the
// state this guards against) double m2: mean 3.9, P(m2 <= 4) = 0.64.
// Tolerances for 16 draws (the standard error of the mean m2 is 2/sqrt(16) =
// 0.5): mean m2 below 3.2 and 2-sigma coverage at least 0.6; errors more than
// 2x too large (a mean m2 below 0.6, coverage of 1.0 with mean m2 < 1) also
// fail. The full study (40+ realisations, four galaxies) is
// tools/coverage_study.py, its table in docs/uncertainties.md.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"

TEST_CASE("centre covariance covers the truth on independent mocks", "[kinematics][python][coverage]") {
  const auto dir = fulcrum::test::temp_dir("centre_coverage");
  const auto out = (dir / "coverage.json").string();
  const auto r = fulcrum::test::run_shell(
      "OMP_NUM_THREADS=1 /usr/bin/python3 " + fulcrum::test::source_dir() +
      "/tools/coverage_study.py --fulcrum " FULCRUM_BINARY
      " --presets bright --n 16 --jobs 2 --kinematics-only --first-seed 500 --json " + out);
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  std::ifstream in(out);
  const auto j = nlohmann::json::parse(in);
  const auto& s = j["summary"]["bright"];
  WARN(r.out);
  // Refusals (first guesses spoilt by isolated noise peaks) are not this
  // check's subject; at least 12 fits are needed for its tolerances.
  REQUIRE(s["n_ok"].get<int>() >= 12);
  const double mean_m2 = s["mean_m2"].get<double>();
  const double in2 = s["in_2sigma"].get<double>();
  CHECK(mean_m2 < 3.2);
  CHECK(mean_m2 > 0.6);
  CHECK(in2 >= 0.6);
  CHECK(!(in2 == 1.0 && mean_m2 < 1.0));
}
