// The velocity scatter beyond the error map (kinematics/velocity_scatter.hpp)
// by injection and recovery on invented mocks (velocity_field_mock.hpp: the
// published tilted-ring formula, Begeman 1989): with a right error map the
// measured scatter is small against the stated errors and the weights stay;
// with white non-circular scatter of a known rms added to the velocities but
// not to the error map, the measured scatter recovers it.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/kinematics/velocity_scatter.hpp"
#include "fulcrum/sky/angle.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

namespace {

test::VelocityMockSpec scatter_spec(unsigned seed) {
  test::VelocityMockSpec spec;
  spec.seed = seed;
  spec.snr_scaled_noise = true;  // heteroscedastic errors, as a moment-1 map's
  spec.noise_kms = 6.0;
  spec.noise_floor_kms = 1.0;
  return spec;
}

}  // namespace

TEST_CASE("the scatter beyond a right error map is small", "[kinematics][scatter]") {
  const auto m = test::make_velocity_mock(scatter_spec(21));
  const KinematicFit fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{}, &m.intensity);
  REQUIRE(fit.status == "ok");
  INFO("scatter " << fit.scatter.scatter_kms << " km/s, median stated error "
                  << fit.scatter.median_sigma_kms << ", reduced chi2 " << fit.scatter.reduced_chi2_before);
  REQUIRE(fit.scatter.estimated);
  // A right error map leaves at most a scatter well below the typical error
  // (the residual beam-smearing mismatch of the corrected model); half the
  // median error changes the weights of the noisiest pixels by < 12%
  // (our own tolerance).
  CHECK(fit.scatter.scatter_kms < 0.5 * fit.scatter.median_sigma_kms);
}

TEST_CASE("non-circular scatter missing from the error map is recovered", "[kinematics][scatter]") {
  const double injected = 10.0;  // km/s, white, not in the error map
  auto m = test::make_velocity_mock(scatter_spec(22));
  std::mt19937_64 rng(7);
  std::normal_distribution<double> gauss(0.0, injected);
  for (double& v : m.velocity.data)
    if (std::isfinite(v)) v += gauss(rng);
  const KinematicFit fit = fit_kinematics(m.velocity, &m.velocity_error, KinematicOptions{}, &m.intensity);
  REQUIRE(fit.status == "ok");
  INFO("scatter " << fit.scatter.scatter_kms << " km/s, reduced chi2 with the stated errors "
                  << fit.scatter.reduced_chi2_before);
  // ~1000 pixels: the rms of a sample of that size is known to a few per
  // cent; 15% allows for the model's own misfit (our own tolerance).
  CHECK(fit.scatter.scatter_kms == Approx(injected).epsilon(0.15));
  CHECK(fit.scatter.reduced_chi2_before > 3.0);
  // The geometry stays near the truth (spec: PA 60, inclination 55).
  CHECK(std::abs(angle_diff_deg(fit.pa_deg, 60.0)) < 3.0 * fit.pa_err_deg + 1.0);
  CHECK(std::abs(fit.inc_deg - 55.0) < 3.0 * fit.inc_err_deg + 1.0);
}

TEST_CASE("the scatter term can be turned off", "[kinematics][scatter]") {
  auto m = test::make_velocity_mock(scatter_spec(23));
  KinematicOptions opt;
  opt.scatter_term = false;
  const KinematicFit fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m.intensity);
  REQUIRE(fit.status == "ok");
  CHECK_FALSE(fit.scatter.estimated);
  CHECK(fit.scatter.scatter_kms == 0.0);
}

TEST_CASE("with_scatter adds in quadrature", "[kinematics][scatter]") {
  VelocitySamples s;
  s.sigma = {3.0, 0.0};
  s.velocity = {0.0, 0.0};
  const VelocitySamples w = with_scatter(s, 4.0);
  CHECK(w.sigma[0] == Approx(5.0).epsilon(1e-12));  // exact: 3-4-5
  CHECK(w.sigma[1] == Approx(4.0).epsilon(1e-12));
}
