// Tests of the kinematic-fit entry point (kinematics/kinematic_fit.hpp):
// exact recovery on noise-free fields, grid orientation, m/s conversion,
// refusals and the JSON contract. Truth comes from the in-test generator
// (velocity_field_mock.hpp, the published tilted-ring formula).
#include <catch2/catch.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

TEST_CASE("noise-free, unsmeared field: exact recovery", "[kinematics]") {
  test::VelocityMockSpec spec;
  spec.smear = false;
  spec.noise_kms = 0;
  spec.centre_offset = {0.7, -0.4};
  spec.rotation_deg = 33;
  auto m = test::make_velocity_mock(spec);
  KinematicOptions opt;
  opt.correct_beam_smearing = false;  // the mock is not smeared
  auto fit = fit_kinematics(m.velocity, nullptr, opt);
  INFO(to_json(fit).dump(1));
  REQUIRE(fit.status == "ok");
  // Tolerance: the model is not exactly representable (arctan curve vs
  // piecewise-linear nodes), so a small bias remains; 0.02 arcsec = 1% of
  // the beam (our choice).
  CHECK(separation_arcsec(fit.centre->position, m.true_centre) < 0.02);
  CHECK(std::abs(angle_diff_deg(fit.pa_deg, spec.pa_deg)) < 0.2);
  CHECK(std::abs(fit.inc_deg - spec.inc_deg) < 0.5);
  CHECK(std::abs(fit.vsys_kms - spec.vsys_kms) < 0.1);
  REQUIRE(fit.harmonic_centre);
  CHECK(separation_arcsec(fit.harmonic_centre->position, m.true_centre) < 0.05);
}

TEST_CASE("refusals carry a reason instead of a centre", "[kinematics]") {
  test::VelocityMockSpec spec;
  spec.noise_kms = 3;
  SECTION("too few pixels") {
    spec.disc_radius_arcsec = 2.0;
    auto m = test::make_velocity_mock(spec);
    auto fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{});
    CHECK(fit.status == "refused");
    CHECK(fit.reason.find("too few pixels") != std::string::npos);
    CHECK_FALSE(fit.centre);
    CHECK(to_json(fit)["centre"].is_null());
  }
  SECTION("no rotation") {
    spec.vflat_kms = 0.0;
    auto m = test::make_velocity_mock(spec);
    auto fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{});
    INFO(fit.reason);
    CHECK(fit.status == "refused");
    CHECK(fit.reason.find("rotation") != std::string::npos);
  }
  SECTION("face-on") {
    spec.inc_deg = 4.0;
    auto m = test::make_velocity_mock(spec);
    auto fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{});
    INFO(fit.reason);
    CHECK(fit.status == "refused");
  }
  SECTION("empty map") {
    auto m = test::make_velocity_mock(spec);
    for (double& v : m.velocity.data) v = std::numeric_limits<double>::quiet_NaN();
    auto fit = fit_kinematics(m.velocity, nullptr, KinematicOptions{});
    CHECK(fit.status == "refused");
  }
}

TEST_CASE("m/s maps are converted to km/s, non-velocity units are refused", "[kinematics]") {
  test::VelocityMockSpec spec;
  spec.noise_kms = 0;
  spec.smear = false;
  auto m = test::make_velocity_mock(spec);
  Image ms = m.velocity;
  for (double& v : ms.data) v *= 1000.0;
  ms.unit = "m/s";
  auto a = fit_kinematics(m.velocity, nullptr, KinematicOptions{});
  auto b = fit_kinematics(ms, nullptr, KinematicOptions{});
  REQUIRE(b.status == "ok");
  CHECK(b.vsys_kms == Approx(a.vsys_kms).epsilon(1e-9));
  CHECK_FALSE(b.notes.empty());
  ms.unit = "";  // values beyond 1e5: taken as m/s
  CHECK(fit_kinematics(ms, nullptr, KinematicOptions{}).vsys_kms == Approx(a.vsys_kms).epsilon(1e-9));
  ms.unit = "Jy/beam";
  CHECK_THROWS_AS(fit_kinematics(ms, nullptr, KinematicOptions{}), InputError);
}

TEST_CASE("JSON holds the contract keys", "[kinematics]") {
  test::VelocityMockSpec spec;
  spec.noise_kms = 2;
  auto m = test::make_velocity_mock(spec);
  auto fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{});
  REQUIRE(fit.status == "ok");
  auto j = to_json(fit);
  for (const char* k : {"ra_deg", "dec_deg", "x_pix", "y_pix", "cov_arcsec2"})
    CHECK(j["centre"].contains(k));
  for (const char* k : {"pa_deg", "inc_deg", "vsys_kms", "rings", "method", "status",
                        "harmonic_centre", "diagnostics"})
    CHECK(j.contains(k));
  CHECK(j["method"] == "both");
  // FITS pixel of the centre: the WCS inverse of its RA/Dec, plus 1.
  const PixelCoord p = m.velocity.wcs.world_to_pixel(fit.centre->position);
  CHECK(j["centre"]["x_pix"].get<double>() == Approx(p.x + 1).margin(1e-9));
  CHECK(j["centre"]["cov_arcsec2"][0][1].get<double>() ==
        Approx(j["centre"]["cov_arcsec2"][1][0].get<double>()));
}
