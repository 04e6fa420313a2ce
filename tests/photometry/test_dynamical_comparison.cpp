// Offsets of photometric centres from a dynamical centre: worked values,
// the beam and distance conversions, and astropy/scipy references.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "fulcrum/photometry/dynamical_comparison.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

TEST_CASE("offset, beams, kpc and significance of a known offset", "[photometry][comparison]") {
  const Centre k = measured_centre(CentreMethod::kinematic_rings, {150.0, 20.0},
                                   Eigen::Matrix2d::Identity() * 0.04, "test");
  const OffsetFrame f(k.position);
  const WorldCoord p = f.to_world({0.3, 0.4});  // 0.5 arcsec at PA atan2(0.3, 0.4)
  Eigen::Matrix2d cp;
  cp << 0.01, 0.0, 0.0, 0.01;
  ComparisonOptions o;
  o.beam = Beam{2.0, 1.0, 0.0};  // major axis north-south
  o.distance_mpc = 100.0;
  const CentreOffset r = offset_from_dynamical(measured_centre(CentreMethod::photometric_peak, p, cp, "test"), k, o);
  // Exact by construction (tangent-plane offsets round trip): 1e-9 arcsec.
  CHECK(r.east_arcsec == Approx(0.3).margin(1e-9));
  CHECK(r.north_arcsec == Approx(0.4).margin(1e-9));
  CHECK(r.offset_arcsec == Approx(0.5).margin(1e-7));
  CHECK(r.pa_deg == Approx(std::atan2(0.3, 0.4) * 180 / M_PI).margin(1e-6));
  // Beam FWHM along PA alpha of an ellipse with semi-axes 1 (N-S) and 0.5:
  // 2 / sqrt(cos^2 a / 1 + sin^2 a / 0.25), a = atan2(0.3, 0.4): cos = 0.8, sin = 0.6.
  const double along = 2.0 / std::sqrt(0.64 / 1.0 + 0.36 / 0.25);
  CHECK(*r.beam_fwhm_along_arcsec == Approx(along).epsilon(1e-9));
  CHECK(*r.offset_beams == Approx(0.5 / along).epsilon(1e-6));
  // 1 arcsec at 100 Mpc = 100e3 kpc * pi / 648000 = 0.4848 kpc (small angles).
  CHECK(*r.offset_kpc == Approx(0.5 * 100e3 * M_PI / 648000.0).epsilon(1e-6));
  // Mahalanobis with C = 0.05 I: m = 0.5 / sqrt(0.05); p = exp(-m^2 / 2).
  const double m = 0.5 / std::sqrt(0.05);
  CHECK(r.mahalanobis == Approx(m).epsilon(1e-6));
  CHECK(r.probability == Approx(std::exp(-0.5 * m * m)).epsilon(1e-6));
  // Along the beam's axes the FWHM is the axis itself.
  CHECK(beam_fwhm_along(*o.beam, 0.0) == Approx(2.0));
  CHECK(beam_fwhm_along(*o.beam, 90.0) == Approx(1.0));
  CHECK(beam_fwhm_along(*o.beam, 180.0) == Approx(2.0));
}

TEST_CASE("comparison summary skips failed centres and reports the spread", "[photometry][comparison]") {
  PhotometrySummary s;
  const OffsetFrame f({10.0, -30.0});
  const SkyOffset offs[] = {{0.2, 0.0}, {0.0, 0.2}, {-0.2, 0.0}};
  for (int i = 0; i < 3; ++i) {
    PhotometricMeasurement c;
    c.centre = measured_centre(CentreMethod::external, f.to_world(offs[i]), Eigen::Matrix2d::Identity() * 1e-4,
                               "test");
    c.centre.label = "c" + std::to_string(i);
    s.centres.push_back(c);
  }
  PhotometricMeasurement bad;
  bad.centre = failed_centre(CentreMethod::external, "test", "test");
  bad.centre.label = "failed";
  s.centres.push_back(bad);
  const Centre k = measured_centre(CentreMethod::kinematic_rings, f.to_world({0.0, 0.0}),
                                   Eigen::Matrix2d::Identity() * 1e-4, "test");
  const ComparisonSummary cmp = compare_with_dynamical(s, k);
  REQUIRE(cmp.offsets.size() == 4);
  CHECK_FALSE(cmp.offsets[3].ok);
  CHECK(cmp.spread.count == 3);
  CHECK(cmp.spread.max_separation_arcsec == Approx(0.4).epsilon(1e-6));
  // Mean offset (0, 0.2/3); scatter about it.
  REQUIRE(cmp.mean_offset);
  CHECK(cmp.mean_offset->north_arcsec == Approx(0.2 / 3).epsilon(1e-6));
  const auto j = to_json(cmp);
  CHECK(j["offsets"]["failed"].is_null());
  CHECK(j["offsets"]["c0"]["offset_beams"].is_null());
}

TEST_CASE("offsets agree with astropy and scipy.stats.chi2", "[photometry][comparison][python]") {
  nlohmann::json cases = nlohmann::json::array();
  const double decs[] = {-70.0, -5.0, 20.0, 84.0};
  int i = 0;
  for (double dec : decs) {
    Eigen::Matrix2d ck;
    ck << 0.09, 0.02, 0.02, 0.05;
    const Centre k = measured_centre(CentreMethod::kinematic_rings, {359.9995 - 100.0 * i, dec}, ck, "test");
    const OffsetFrame f(k.position);
    const WorldCoord p = f.to_world({1.7 - 1.1 * i, -0.6 + 0.9 * i});
    Eigen::Matrix2d cp;
    cp << 0.02, -0.005, -0.005, 0.03;
    const CentreOffset r =
        offset_from_dynamical(measured_centre(CentreMethod::photometric_peak, p, cp, "test"), k, {});
    cases.push_back({{"dyn", {k.position.ra_deg, k.position.dec_deg}},
                     {"cdyn", {{0.09, 0.02}, {0.02, 0.05}}},
                     {"pos", {p.ra_deg, p.dec_deg}},
                     {"cpos", {{0.02, -0.005}, {-0.005, 0.03}}},
                     {"east", r.east_arcsec}, {"north", r.north_arcsec},
                     {"offset_arcsec", r.offset_arcsec}, {"pa_deg", r.pa_deg},
                     {"mahalanobis", r.mahalanobis}, {"probability", r.probability}});
    ++i;
  }
  const auto dir = test::temp_dir("dynoff");
  std::ofstream(dir / "cases.json") << std::setprecision(17) << cases.dump();
  const auto res = test::run_python("check_dynamical_offsets.py", (dir / "cases.json").string());
  INFO(res.out << res.err);
  CHECK(res.exit_code == 0);
}
