// The one validation layer for settings (core/settings_check.hpp,
// pipeline/input_settings.hpp): the checkers' ranges and messages, and the
// same refusal, word for word, from the manifest and from the command line.
//
// Allowed ranges are the project's own choices (documented in
// docs/conventions.md); the number text is std::to_chars shortest round
// trip (C++17 [charconv]).
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <functional>
#include <limits>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;

namespace {
std::string problem_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const SettingError& e) {
    return e.problem();
  }
  return "(accepted)";
}
constexpr double kNan = std::numeric_limits<double>::quiet_NaN();
}  // namespace

TEST_CASE("setting checkers: ranges, returned values, messages with the bad value", "[core][settings]") {
  CHECK(check_positive("rms", 0.5) == 0.5);
  CHECK(problem_of([] { check_positive("rms", 0.0, "(map units)"); }) ==
        "rms = 0 is not allowed: must be a finite number > 0 (map units)");
  CHECK(problem_of([] { check_positive("rms", kNan); }) == "rms = nan is not allowed: must be a finite number > 0");
  CHECK(problem_of([] { check_non_negative("w", -1e-300); }) ==
        "w = -1e-300 is not allowed: must be a finite number >= 0");
  CHECK(problem_of([] { check_finite_in_range("x", 2.5, 0, 2); }) ==
        "x = 2.5 is not allowed: must be a finite number within [0, 2]");
  CHECK(check_finite_in_range("x", 2.0, 0, 2) == 2.0);  // the ends are allowed
  CHECK(problem_of([] { check_integer_in_range("draws", 99, 100, 1000); }) ==
        "draws = 99 is not allowed: must be a whole number within [100, 1000]");
  CHECK(problem_of([] { check_one_of("co_line", "3-2", {"1-0", "2-1"}); }) ==
        "co_line = '3-2' is not allowed: must be 1-0 or 2-1");
  // Seeds: negative refused, never wrapped; 53 bits at most (exact in JSON doubles).
  CHECK(check_seed("seed", 0) == 0u);
  CHECK(check_seed("seed", (std::int64_t{1} << 53) - 1) == (std::uint64_t{1} << 53) - 1);
  CHECK(problem_of([] { check_seed("seed", -1); }).rfind("seed = -1 is not allowed", 0) == 0);
  CHECK(problem_of([] { check_seed("seed", std::int64_t{1} << 53); }) != "(accepted)");
}

TEST_CASE("position angles are wrapped into 0 to 360 deg, absurd ones are refused", "[core][settings]") {
  // Exact: fmod of a double by 360 is exact (IEEE 754 remainder is exact).
  CHECK(check_position_angle_deg("tail_pa_deg", 400.0) == 40.0);
  CHECK(check_position_angle_deg("tail_pa_deg", -30.0) == 330.0);
  CHECK(check_position_angle_deg("tail_pa_deg", 360.0) == 0.0);
  CHECK(check_position_angle_deg("tail_pa_deg", -720.0) == 0.0);
  CHECK(check_position_angle_deg("tail_pa_deg", 299.75) == 299.75);
  CHECK(problem_of([] { check_position_angle_deg("tail_pa_deg", 1e300); }) ==
        "tail_pa_deg = 1e+300 is not allowed: must be a finite angle in degrees within [-720, 720]");
  CHECK(problem_of([] { check_position_angle_deg("tail_pa_deg", -INFINITY); }).find("= -inf is not allowed") !=
        std::string::npos);
}

TEST_CASE("galaxy settings: tail PA error, rms, PSF, distance, draws, seed", "[core][settings]") {
  namespace setting = pipeline::setting;
  for (double bad : {kNan, 360.0, -5.0, 90.5})
    CHECK(problem_of([&] { setting::tail_pa_err_deg(bad); }).rfind("tail_pa_err_deg = ", 0) == 0);
  CHECK(setting::tail_pa_err_deg(0.0) == 0.0);   // 0: the tail direction held fixed
  CHECK(setting::tail_pa_err_deg(90.0) == 90.0);
  CHECK(problem_of([] { setting::rms(-0.01); }).rfind("rms = -0.01 is not allowed", 0) == 0);
  CHECK(problem_of([] { setting::psf_fwhm_arcsec(0.0); }).rfind("psf_fwhm_arcsec = 0 is not allowed", 0) == 0);
  CHECK(problem_of([] { setting::distance_mpc(0.0); }) != "(accepted)");
  CHECK(problem_of([] { setting::distance_mpc(1e6); }) != "(accepted)");
  CHECK(setting::distance_mpc(16.5) == 16.5);
  CHECK(problem_of([] { setting::draws(99); }) != "(accepted)");
  CHECK(setting::draws(100) == 100);
  CHECK(problem_of([] { setting::calibrate(-1); }) != "(accepted)");
  CHECK(problem_of([] { setting::co_ratio_21(0.0); }) ==
        "co_ratio_21 = 0 is not allowed: must be a finite number within (0, 2]");
  CHECK(problem_of([] { setting::redshift(11.0); }) != "(accepted)");
}

TEST_CASE("the manifest and the command line refuse tail_pa = 1e300 with the same words", "[core][settings][cli]") {
  const std::string rule = "1e+300 is not allowed: must be a finite angle in degrees within [-720, 720]";
  // The manifest: file and line, then the library's message with the key.
  std::string manifest_error;
  try {
    pipeline::parse_manifest("[[galaxy]]\nname = \"Mock-A\"\nvelocity = \"v.fits\"\nintensity = \"m.fits\"\n"
                             "tail_pa_deg = 1e300\n",
                             "/data/s.toml");
  } catch (const InputError& e) {
    manifest_error = e.what();
  }
  CHECK(manifest_error == "/data/s.toml: line 5: tail_pa_deg = " + rule);
  // The command line: the same check (it runs before any file is read), the flag in place of the key.
  const std::string any_file = test::source_dir() + "/CMakeLists.txt";
  const auto out = test::temp_dir("settings_cli") / "out";
  const auto r = test::run_fulcrum("analyse --velocity " + any_file + " --intensity " + any_file +
                                   " --rms 0.1 --tail-pa 1e300 --out " + out.string());
  CHECK(r.exit_code == 2);
  CHECK(r.err == "fulcrum: --tail-pa = " + rule + "\n");
  CHECK_FALSE(std::filesystem::exists(out));
}

TEST_CASE("numbers as text: shortest round trip, fixed, significant", "[core][settings]") {
  CHECK(shortest_text(0.1) == "0.1");
  CHECK(std::stod(shortest_text(0.1 + 0.2)) == 0.1 + 0.2);  // round trip, exact
  CHECK(shortest_text(1e300) == "1e+300");
  CHECK(shortest_text(kNan) == "nan");
  CHECK(fixed_text(-0.0004, 3) == "0.000");  // no "-0.000"
  CHECK(fixed_text(2.345678, 2) == "2.35");
  CHECK(significant_text(123456.789, 4) == "1.235e+05");
}

TEST_CASE("a name handed to another program is one plain word", "[core][settings]") {
  CHECK(check_plain_name("slurm_partition", "short") == "short");
  CHECK(check_plain_name("slurm_partition", "gpu-a100,cpu_2.x") == "gpu-a100,cpu_2.x");
  const std::vector<std::string> refused = {"", "a b", "x;rm", "$(id)", "tab\there", std::string(129, 'a')};
  for (const auto& bad : refused) {
    INFO(bad);
    CHECK_THROWS_AS(check_plain_name("slurm_partition", bad), SettingError);
  }
  try {
    check_plain_name("slurm_account", "my account");
  } catch (const SettingError& e) {
    CHECK(std::string(e.what()) ==
          "slurm_account = 'my account' is not allowed: must be 1 to 128 letters, digits and the characters _ - . , "
          "(no spaces)");
  }
}
