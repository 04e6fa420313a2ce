// The two public CO velocity fields of fixtures/realdata/ (README there:
// source, licence, citation, published geometry) run end to end as
// delivered: `fulcrum inspect`, `fulcrum kinematics` and `fulcrum analyse`
// on the raw files, no conversion. Reference values: the published
// geometry (Cooke, Levy et al. 2022, MNRAS 512, 1012, Table 2) as listed in
// the fixtures' README; acceptance bounds of the task (centre within 0.5
// beam, PA within 6 deg, inclination within 10 deg, published values within
// 3 sigma of fulcrum's errors).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/offset_frame.hpp"

using namespace fulcrum;

namespace {

struct Published {
  const char* name;
  double ra, dec, pa, inc, beam;  // deg, deg, deg, deg, arcsec (README table)
};

// Copied from fixtures/realdata/README.md (the paper's Table 1 and 2).
constexpr Published kGalaxies[] = {{"NGC4310", 185.6094622, 29.20863889, 335, 71, 2.4},
                                   {"NGC5692", 219.57549, 3.41031, 36, 53, 2.85}};

std::string fixture(const std::string& name, const std::string& kind) {
  return test::source_dir() + "/fixtures/realdata/" + name + "." + kind + ".fits";
}

}  // namespace

TEST_CASE("inspect tells velocity fields from their error maps", "[realdata][cli]") {
  for (const auto& g : kGalaxies) {
    auto v = test::run_fulcrum("inspect --json " + fixture(g.name, "cgrad.vcen"));
    INFO(v.out << v.err);
    REQUIRE(v.exit_code == 0);
    const auto jv = nlohmann::json::parse(v.out);
    CHECK(jv["looks_like_error_map"] == false);
    CHECK(jv["uses"][0].get<std::string>().rfind("velocity field", 0) == 0);
    CHECK(jv["missing"]["blank_pixels"].get<int>() > 0);
    CHECK(v.err.find("equal to BLANK = -999") != std::string::npos);
    auto e = test::run_fulcrum("inspect --json " + fixture(g.name, "evcen"));
    REQUIRE(e.exit_code == 0);
    const auto je = nlohmann::json::parse(e.out);
    CHECK(je["looks_like_error_map"] == true);
    CHECK(je["uses"][0].get<std::string>().rfind("velocity error map", 0) == 0);
    CHECK(je["missing"]["infinite"].get<int>() > 0);
    CHECK(je["missing"]["absurd_ge_1e30"].get<int>() > 0);
  }
}

TEST_CASE("real velocity fields as delivered: geometry near the published one", "[realdata][cli]") {
  const auto dir = test::temp_dir("realdata-kin");
  for (const auto& g : kGalaxies) {
    const std::string json = (dir / (std::string(g.name) + ".json")).string();
    auto r = test::run_fulcrum("--quiet kinematics --velocity " + fixture(g.name, "cgrad.vcen") +
                               " --velocity-error " + fixture(g.name, "evcen") + " --intensity " +
                               fixture(g.name, "gausspk") + " --json " + json);
    INFO(g.name << "\n" << r.out << r.err);
    REQUIRE(r.exit_code == 0);
    CHECK(r.err.find("rank deficient") == std::string::npos);  // no stray solver lines
    std::ifstream in(json);
    const auto j = nlohmann::json::parse(in);
    REQUIRE(j["status"] == "ok");
    const double sep = separation_arcsec({j["centre"]["ra_deg"], j["centre"]["dec_deg"]}, {g.ra, g.dec});
    INFO("centre " << sep << " arcsec from the published one; PA " << j["pa_deg"] << ", inc "
                   << j["inc_deg"]);
    // The task's bounds (fixtures/realdata/README.md: a careful fit with a
    // different method lands within about half a beam, ~5 deg in PA, 5-10
    // deg in inclination).
    const double dpa = angle_diff_deg(j["pa_deg"].get<double>(), g.pa);
    const double dinc = j["inc_deg"].get<double>() - g.inc;
    CHECK(sep < 0.5 * g.beam);
    CHECK(std::abs(dpa) < 6.0);
    CHECK(std::abs(dinc) < 10.0);
    // The published PA and inclination within 3 sigma of fulcrum's errors.
    CHECK(std::abs(dpa) < 3.0 * j["pa_err_deg"].get<double>());
    CHECK(std::abs(dinc) < 3.0 * j["inc_err_deg"].get<double>());
    // The published centre through fulcrum's 2x2 covariance (sqrt of the
    // Mahalanobis distance) within 3 sigma: 1.3 (NGC4310) and 2.2 (NGC5692)
    // today (docs/validation.md), with the centre errors widened by the
    // re-fit bootstrap (x1.71, x1.73; docs/uncertainties.md section 4b).
    // NGC4310 was at 2.4 while a beam-smearing refit stopped at the
    // iteration cap dropped the correction (docs/performance.md, "analyse,
    // sixth pass").
    CHECK(j["centre_bootstrap"]["applied"].get<bool>());
    const OffsetFrame frame(WorldCoord{j["centre"]["ra_deg"].get<double>(), j["centre"]["dec_deg"].get<double>()});
    const SkyOffset d = frame.to_offset({g.ra, g.dec});
    const auto& c = j["centre"]["cov_arcsec2"];
    const double a = c[0][0], b = c[0][1], e = c[1][1];
    const double m2 = (e * d.east * d.east - 2 * b * d.east * d.north + a * d.north * d.north) / (a * e - b * b);
    INFO("published centre at " << std::sqrt(m2) << " sigma");
    CHECK(m2 < 9.0);
    CHECK(j["footprint"]["isolated_pixels"].get<int>() + j["footprint"]["velocity_outliers"].get<int>() > 0);
  }
}

TEST_CASE("real velocity fields as delivered: analyse gives a verdict", "[realdata][cli][pipeline]") {
  const auto dir = test::temp_dir("realdata-analyse");
  for (const auto& g : kGalaxies) {
    const std::string out = (dir / g.name).string();
    // No tail direction comes with these data: tail PA 90 deg is an arbitrary
    // stated value; this test is of running end to end, not of the result.
    auto r = test::run_fulcrum("--quiet analyse --velocity " + fixture(g.name, "cgrad.vcen") +
                               " --velocity-error " + fixture(g.name, "evcen") + " --intensity " +
                               fixture(g.name, "gausspk") + " --intensity-error " +
                               fixture(g.name, "egausspk") + " --tail-pa 90 --draws 2000 --calibrate 0 --no-figures --out " +
                               out);
    INFO(g.name << "\n" << r.out << r.err);
    REQUIRE(r.exit_code == 0);
    std::ifstream in(out + "/report.json");
    const auto j = nlohmann::json::parse(in);
    CHECK(j["kinematics"]["status"] == "ok");
    CHECK(j["verdict"] != "undetermined");
  }
}
