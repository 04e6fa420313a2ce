// Tests of the kinematic-fit entry point (kinematics/kinematic_fit.hpp):
// exact recovery on noise-free fields, grid orientation, m/s conversion,
// refusals and the JSON contract. Truth comes from the in-test generator
// (velocity_field_mock.hpp, the published tilted-ring formula).
#include <catch2/catch.hpp>

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
  auto fit = fit_kinematics(m.velocity, nullptr, opt);
  INFO(to_json(fit).dump(1));
  REQUIRE(fit.status == "ok");
  // Tolerance: the model is not exactly representable (arctan curve vs
  // piecewise-linear nodes), so a small bias remains; 0.02 arcsec = 1% of
  // the beam (our choice).
  CHECK(separation_arcsec(fit.centre->world, m.true_centre) < 0.02);
  CHECK(std::abs(angle_diff_deg(fit.pa_deg, spec.pa_deg)) < 0.2);
  CHECK(std::abs(fit.inc_deg - spec.inc_deg) < 0.5);
  CHECK(std::abs(fit.vsys_kms - spec.vsys_kms) < 0.1);
  REQUIRE(fit.harmonic_centre);
  CHECK(separation_arcsec(fit.harmonic_centre->world, m.true_centre) < 0.05);
}
