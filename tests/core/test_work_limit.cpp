// Work limits checked before a command starts (core/work_limit.hpp): the
// refusal names the setting, its value, the estimate and the limit; an
// estimate within the limit passes. Limits are the project's own choices
// (docs/reliability.md, "Limits").
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/work_limit.hpp"

using namespace fulcrum;

TEST_CASE("work limit: within passes, beyond is refused naming setting, estimate and limit", "[core][limits]") {
  CHECK_NOTHROW(check_work_limit("step_arcsec", "0.5", "the scan grid", 1e8, 1e8, "points"));
  try {
    check_work_limit("angle_step_deg", "1e-06", "the scan grid", 1.6e11, 1e8, "points", "441 offsets x 3.6e+08 angles");
    FAIL("no refusal");
  } catch (const SettingError& e) {
    CHECK(e.setting() == "angle_step_deg");
    CHECK(std::string(e.what()) ==
          "angle_step_deg = 1e-06 is not allowed: must be within the limit of 1e+08 points for the scan grid; "
          "this asks for 441 offsets x 3.6e+08 angles = 1.6e+11 points (`limit_scale` raises the limit)");
  }
  // A non-finite estimate (an infinite width) is refused, never compared as passing.
  CHECK_THROWS_AS(check_work_limit("x", "inf", "w", std::numeric_limits<double>::infinity(), 1e8, "points"),
                  SettingError);
  CHECK_THROWS_AS(check_work_limit("x", "nan", "w", std::nan(""), 1e8, "points"), SettingError);
}

TEST_CASE("work limit: estimates as text", "[core][limits]") {
  CHECK(estimate_text(441) == "441");
  CHECK(estimate_text(1e6) == "1000000");
  CHECK(estimate_text(1.6e11) == "1.6e+11");
}

TEST_CASE("work limit: one scale raises every limit, from 1 to 1e6", "[core][limits]") {
  CHECK(work_limit_scale() == 1.0);  // the test runner sets no FULCRUM_LIMIT_SCALE
  CHECK_THROWS_AS(check_work_limit("step_arcsec", "0.1", "the scan grid", 5e8, 1e8, "points"), SettingError);
  set_work_limit_scale(10.0);
  CHECK_NOTHROW(check_work_limit("step_arcsec", "0.1", "the scan grid", 5e8, 1e8, "points"));
  CHECK_THROWS_WITH(check_work_limit("step_arcsec", "0.01", "the scan grid", 5e10, 1e8, "points"),
                    Catch::Contains("within the limit of 1e+09 points"));
  CHECK_THROWS_AS(set_work_limit_scale(0.5), SettingError);
  CHECK_THROWS_AS(set_work_limit_scale(std::nan("")), SettingError);
  set_work_limit_scale(1.0);
}

TEST_CASE("count limit: a count's upper end is a work limit the scale raises, the lower end a range",
          "[core][limits]") {
  CHECK(check_count_limit("draws", 10000000, 100, 1e7, "the bootstrap", "draws") == 10000000);
  CHECK_THROWS_WITH(check_count_limit("draws", 99, 100, 1e7, "the bootstrap", "draws"),
                    "draws = 99 is not allowed: must be a whole number within [100, 10000000] draws");
  CHECK_THROWS_WITH(check_count_limit("draws", 10000001, 100, 1e7, "the bootstrap", "draws"),
                    "draws = 10000001 is not allowed: must be within the limit of 1e+07 draws for the bootstrap; "
                    "this asks for 1e+07 draws (`limit_scale` raises the limit)");
  set_work_limit_scale(10.0);
  CHECK(check_count_limit("draws", 100000000, 100, 1e7, "the bootstrap", "draws") == 100000000);
  CHECK_THROWS_WITH(check_count_limit("draws", 100000001, 100, 1e7, "the bootstrap", "draws"),
                    Catch::Contains("within the limit of 1e+08 draws"));
  // Never beyond what the count's type holds, whatever the scale.
  set_work_limit_scale(1e6);
  CHECK_THROWS_WITH(check_count_limit("draws", 3000000000LL, 100, 1e7, "the bootstrap", "draws"),
                    "draws = 3000000000 is not allowed: must be a whole number within [100, 2147483647] draws");
  set_work_limit_scale(1.0);
  CHECK(count_limit_rule(1000, 0, 1000, "the mask growth", "pixels").empty());
  CHECK(count_limit_rule(1001, 0, 1000, "the mask growth", "pixels") ==
        "within the limit of 1000 pixels for the mask growth; this asks for 1001 pixels (`limit_scale` raises the "
        "limit)");
}
