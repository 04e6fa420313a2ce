// The re-fit bootstrap of the kinematic centre's covariance
// (calibration::bootstrap_centre_covariance, pipeline::widen_centre_covariance):
// determinism, the only-widens rule, and that velocity scatter beyond the
// error map shows in the re-fits. Its coverage on mocks fulcrum did not make
// is checked in tests/kinematics/test_centre_coverage.cpp.
#include <catch2/catch.hpp>

#include <cmath>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

using namespace fulcrum;

namespace {

synth::MockGalaxy disc(std::uint64_t seed) {
  synth::MockGalaxy g;
  g.seed = seed;
  g.grid.nx = 56;
  g.grid.ny = 56;
  g.grid.pixel_arcsec = 0.8;
  g.disc_radius_arcsec = 18.0;
  g.scale_length_arcsec = 6.0;
  g.bmaj_arcsec = 3.0;
  g.bmin_arcsec = 2.6;
  g.tail_flux_fraction = 0.0;
  g.total_flux_jykms = 4.0;
  g.intensity_rms = 0.01;
  g.optical.enabled = false;
  return g;
}

}  // namespace

TEST_CASE("centre re-fit bootstrap: same seed, same numbers at any thread count, and it only widens",
          "[calibration]") {
  const auto g = disc(11);
  const auto p = synth::make_mock(g);
  kinematics::KinematicFit fit = kinematics::fit_kinematics(p.velocity, &p.velocity_error, {}, &p.intensity);
  REQUIRE(fit.status == "ok");
  const Eigen::Matrix2d before = fit.ring_centre->covariance;
  kinematics::KinematicFit a = fit, b = fit, c = fit;
  const auto ra = pipeline::widen_centre_covariance(a, p.velocity, &p.velocity_error, p.intensity, 5, 16);
#ifdef _OPENMP
  const int nt = omp_get_max_threads();
  omp_set_num_threads(1);
#endif
  const auto rb = pipeline::widen_centre_covariance(b, p.velocity, &p.velocity_error, p.intensity, 5, 16);
#ifdef _OPENMP
  omp_set_num_threads(nt);
#endif
  const auto rc = pipeline::widen_centre_covariance(c, p.velocity, &p.velocity_error, p.intensity, 6, 16);
  INFO(calibration::to_json(ra).dump());
  REQUIRE(ra.applied);
  CHECK(ra.refits + ra.failed == 16);
  CHECK(ra.refits >= 12);
  CHECK(calibration::to_json(ra).dump() == calibration::to_json(rb).dump());
  CHECK(ra.mean_m2 != rc.mean_m2);
  // The re-fits are kept in mock order for the calibration to share: the
  // successful ones are those counted, and their m^2 make mean_m2.
  REQUIRE(ra.outcomes.size() == 16);
  std::size_t ok = 0;
  double sum_m2 = 0.0;
  for (const auto& r : ra.outcomes) {
    if (!r.ok) continue;
    ++ok;
    sum_m2 += r.m2;
    // m^2 is the truth's distance under the re-fit's own covariance.
    const Eigen::Vector2d d(r.offset.east, r.offset.north);
    CHECK(r.m2 == Approx(d.dot(r.covariance.inverse() * d)).epsilon(1e-6));
  }
  CHECK(ok == ra.refits);
  CHECK(sum_m2 / static_cast<double>(ok) == Approx(ra.mean_m2));
  // scale2 = max(1, mean m^2 / 2), applied to the tilted-ring centre only.
  CHECK(ra.scale2 == Approx(std::max(1.0, 0.5 * ra.mean_m2)));
  CHECK((a.ring_centre->covariance - ra.scale2 * before).norm() <= 1e-12 * before.norm());
  CHECK((a.centre->covariance - a.ring_centre->covariance).norm() == 0.0);
  CHECK(a.harmonic_centre->covariance == fit.harmonic_centre->covariance);
  // The PA and inclination errors: widened by sqrt(max(1, mean pull^2)).
  REQUIRE(std::isfinite(ra.mean_pa_pull2));
  REQUIRE(std::isfinite(ra.mean_inc_pull2));
  CHECK(ra.pa_scale2 == Approx(std::max(1.0, ra.mean_pa_pull2)));
  CHECK(ra.inc_scale2 == Approx(std::max(1.0, ra.mean_inc_pull2)));
  CHECK(a.pa_err_deg == Approx(fit.pa_err_deg * std::sqrt(ra.pa_scale2)));
  CHECK(a.inc_err_deg == Approx(fit.inc_err_deg * std::sqrt(ra.inc_scale2)));
}

TEST_CASE("centre re-fit bootstrap: beam-correlated velocity scatter beyond the error map raises m^2",
          "[calibration]") {
  const auto g = disc(12);
  const auto p = synth::make_mock(g);
  const kinematics::KinematicFit fit =
      kinematics::fit_kinematics(p.velocity, &p.velocity_error, {}, &p.intensity);
  REQUIRE(fit.status == "ok");
  calibration::MatchedInputs in;
  in.intensity = &p.intensity;
  in.velocity = &p.velocity;
  in.velocity_error = &p.velocity_error;
  in.centre = *fit.ring_centre;
  in.pa_deg = fit.pa_deg;
  in.inc_deg = fit.inc_deg;
  in.vsys_kms = fit.vsys_kms;
  for (const auto& r : fit.rings) {
    in.ring_radius_arcsec.push_back(r.node.radius_arcsec);
    in.ring_vrot_kms.push_back(r.node.vrot_kms);
  }
  calibration::CentreBootstrapOptions o;
  o.n_refits = 16;
  o.seed = 9;
  const auto quiet = calibration::bootstrap_centre_covariance(in, o);
  in.velocity_scatter_kms = 12.0;  // several times the error map's velocity errors
  const auto loud = calibration::bootstrap_centre_covariance(in, o);
  INFO(calibration::to_json(quiet).dump() << " / " << calibration::to_json(loud).dump());
  REQUIRE(quiet.applied);
  REQUIRE(loud.applied);
  // The re-fits measure the scatter and add it to the pixel errors, but a
  // scatter correlated over the beam moves the centre more than that term
  // says: the re-fits show it.
  CHECK(loud.mean_m2 > quiet.mean_m2);
}
