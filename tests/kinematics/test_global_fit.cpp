// The global tilted-ring fit (kinematics/global_fit.hpp):
//  * its solution against scipy.optimize.least_squares on the same residuals
//    (tests/python/kinematics_lsq_reference.py, 1e-6 in every parameter);
//  * injection-recovery over 200 noise draws of mock discs with inclination
//    30-75 deg, rotated and flipped WCS, beam-smoothed noise and holes: the
//    centre within 0.15 beam FWHM of the truth and inside its own 3-sigma
//    ellipse in >= 95% of draws; PA within 2 deg, inclination within 4 deg,
//    vsys within 2 km/s (thresholds from the issue). The mocks are
//    beam-smeared as moment-1 maps are, and the fit is given their intensity
//    for its beam-smearing correction, as the pipeline gives it the moment-0
//    map.
// Mock fields come from the in-test generator (velocity_field_mock.hpp).
#include <catch2/catch.hpp>

#include <Eigen/Dense>
#include <cstdio>
#include <random>

#include "../support/test_support.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

TEST_CASE("Ceres global fit agrees with scipy least_squares", "[kinematics][python]") {
  test::VelocityMockSpec spec;
  spec.nx = spec.ny = 48;
  spec.disc_radius_arcsec = 10;
  spec.rotation_deg = 140;
  spec.centre_offset = {0.6, 0.3};
  spec.hole_fraction = 0.1;
  spec.seed = 5;
  const auto m = test::make_velocity_mock(spec);
  KinematicOptions opt;
  opt.method = Method::rings;
  opt.ring_by_ring = false;
  opt.record_problem = true;
  const auto fit = fit_kinematics(m.velocity, &m.velocity_error, opt);
  REQUIRE(fit.status == "ok");
  const RecordedProblem& p = fit.global.problem;
  REQUIRE(p.start.size() == p.solution.size());
  nlohmann::json j = {{"east", p.east},         {"north", p.north},
                      {"velocity", p.velocity}, {"scale", p.scale},
                      {"bracket", p.bracket},   {"node_radius", p.node_radius},
                      {"start", p.start},       {"solution", p.solution},
                      {"radial", p.radial}};
  const auto dir = test::temp_dir("kin-lsq");
  const auto path = (dir / "problem.json").string();
  write_text_file(path, j.dump());
  const auto r = test::run_python("kinematics_lsq_reference.py", path);
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  WARN(r.out << "ceres: " << fit.diagnostics.termination << ", passes " << fit.diagnostics.passes);
}

namespace {
struct DrawResult {
  double centre_err_beams, mahalanobis2, pa_err, inc_err, vsys_err;
  bool ok;
  double harm_err_beams = -1, harm_mahalanobis2 = -1;
  int smearing_refits = 0;
  double max_correction_kms = 0;
  int passes = 0;
};

DrawResult one_draw(unsigned seed, bool harmonic, bool smear = true) {
  std::mt19937_64 rng(seed * 7919ULL + 13);
  std::uniform_real_distribution<double> u(0, 1);
  test::VelocityMockSpec s;
  // A disc like synth's default mocks (scale length 6", 18" radius, beam
  // 2" x 1.6", velocity noise 4 km/s at the detection edge falling inwards
  // with the line S/N), on an 80x80 grid of 0.5" pixels.
  s.nx = s.ny = 80;
  s.disc_radius_arcsec = 18;
  s.snr_scaled_noise = true;
  s.noise_kms = 4;
  s.inc_deg = 30 + 45 * u(rng);
  s.pa_deg = 360 * u(rng);
  s.rotation_deg = 360 * u(rng);
  s.flip = u(rng) < 0.3;
  s.centre_offset = {4 * u(rng) - 2, 4 * u(rng) - 2};
  s.hole_fraction = 0.1;
  s.seed = seed;
  s.smear = smear;
  const auto m = test::make_velocity_mock(s);
  KinematicOptions opt;
  opt.method = harmonic ? Method::both : Method::rings;
  opt.ring_by_ring = false;
  opt.correct_beam_smearing = smear;  // nothing to correct in an unsmeared mock
  // The intensity the mock was smeared with, through the pipeline's API.
  const auto fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m.intensity);
  DrawResult d{};
  d.ok = fit.status == "ok";
  if (!d.ok) {
    WARN("draw " << seed << " (inc " << s.inc_deg << "): " << fit.status << ": " << fit.reason);
    return d;
  }
  const double beam = s.beam.fwhm_arcsec();
  auto score = [&](const Centre& c, double& err_beams, double& m2) {
    const SkyOffset truth = fit.frame.to_offset(m.true_centre);
    const SkyOffset at = fit.frame.to_offset(c.position);
    const Eigen::Vector2d dv(at.east - truth.east, at.north - truth.north);
    err_beams = dv.norm() / beam;
    m2 = dv.dot(c.covariance.inverse() * dv);
  };
  score(*fit.centre, d.centre_err_beams, d.mahalanobis2);
  d.smearing_refits = fit.beam_smearing.applied ? fit.beam_smearing.refits : -1;
  d.max_correction_kms = fit.beam_smearing.max_abs_correction_kms;
  d.passes = fit.diagnostics.passes;
  if (harmonic && fit.harmonic_centre) score(*fit.harmonic_centre, d.harm_err_beams, d.harm_mahalanobis2);
  d.pa_err = std::abs(angle_diff_deg(fit.pa_deg, s.pa_deg));
  d.inc_err = std::abs(fit.inc_deg - s.inc_deg);
  d.vsys_err = std::abs(fit.vsys_kms - s.vsys_kms);
  return d;
}
}  // namespace

TEST_CASE("injection-recovery: 200 noisy mock discs", "[kinematics][statistical]") {
  constexpr int kDraws = 200;
  constexpr double kMaxCentreBeams = 0.15;  // from the issue
  constexpr double kChi2_2dof_3sigma = 9.0; // 3-sigma ellipse: Mahalanobis distance 3
  constexpr double kMinFraction = 0.95;     // from the issue
  int ok = 0, within_dist = 0, within_ellipse = 0, pa_ok = 0, inc_ok = 0, vsys_ok = 0;
  int h_ok = 0, h_dist = 0, h_ell = 0;
  double worst_pa = 0, worst_inc = 0, worst_vsys = 0, worst_c = 0, sum_m2 = 0;
  int corrected = 0, refits = 0, passes = 0;
  double max_delta = 0;
  for (int i = 0; i < kDraws; ++i) {
    const DrawResult d = one_draw(1000 + i, true);
    if (!d.ok) continue;
    ++ok;
    within_dist += d.centre_err_beams <= kMaxCentreBeams ? 1 : 0;
    within_ellipse += d.mahalanobis2 <= kChi2_2dof_3sigma ? 1 : 0;
    pa_ok += d.pa_err <= 2.0 ? 1 : 0;
    inc_ok += d.inc_err <= 4.0 ? 1 : 0;
    vsys_ok += d.vsys_err <= 2.0 ? 1 : 0;
    worst_pa = std::max(worst_pa, d.pa_err);
    worst_inc = std::max(worst_inc, d.inc_err);
    worst_vsys = std::max(worst_vsys, d.vsys_err);
    worst_c = std::max(worst_c, d.centre_err_beams);
    sum_m2 += d.mahalanobis2;
    if (d.smearing_refits > 0) {
      ++corrected;
      refits += d.smearing_refits;
      passes += d.passes;
      max_delta = std::max(max_delta, d.max_correction_kms);
    }
    if (d.harm_err_beams >= 0) {
      ++h_ok;
      h_dist += d.harm_err_beams <= kMaxCentreBeams ? 1 : 0;
      h_ell += d.harm_mahalanobis2 <= kChi2_2dof_3sigma ? 1 : 0;
    }
  }
  char buf[1024];
  std::snprintf(buf, sizeof buf,
                "%d/%d fits ok; tilted-ring centre within 0.15 beam: %d (%.1f%%), inside own "
                "3-sigma ellipse: %d (%.1f%%), mean Mahalanobis^2 %.2f (2 expected), worst "
                "%.3f beam; PA<=2deg %d, inc<=4deg %d, vsys<=2km/s %d (worst %.2f deg, %.2f deg, "
                "%.2f km/s); harmonic centre: %d found, within 0.15 beam %d, inside 3-sigma %d",
                ok, kDraws, within_dist, 100.0 * within_dist / kDraws, within_ellipse,
                100.0 * within_ellipse / kDraws, sum_m2 / std::max(ok, 1), worst_c, pa_ok, inc_ok,
                vsys_ok, worst_pa, worst_inc, worst_vsys, h_ok, h_dist, h_ell);
  WARN(buf);
  WARN("beam-smearing correction applied in " << corrected << " fits, mean "
       << double(refits) / std::max(corrected, 1) << " refits, mean "
       << double(passes) / std::max(corrected, 1) << " passes in the last refit, largest |Delta| "
       << max_delta << " km/s");
  CHECK(ok == kDraws);
  CHECK(corrected == ok);  // a beam is known and the intensity is given
  CHECK(within_dist >= kMinFraction * kDraws);
  CHECK(within_ellipse >= kMinFraction * kDraws);
  CHECK(pa_ok >= kMinFraction * kDraws);
  // The fit corrects for beam smearing (kinematics/beam_smearing.hpp) with
  // the mock's own intensity; without the correction the inclination is
  // biased low by 2-5 deg above ~60 deg (189/200 within 4 deg at the last
  // uncorrected run).
  CHECK(inc_ok >= kMinFraction * kDraws);
  CHECK(vsys_ok >= kMinFraction * kDraws);
}

TEST_CASE("injection-recovery without beam smearing: inclination", "[kinematics][statistical]") {
  constexpr int kDraws = 60;
  int ok = 0, inc_ok = 0;
  double worst = 0;
  for (int i = 0; i < kDraws; ++i) {
    const DrawResult d = one_draw(5000 + i, false, false);
    if (!d.ok) continue;
    ++ok;
    inc_ok += d.inc_err <= 4.0 ? 1 : 0;  // from the issue
    worst = std::max(worst, d.inc_err);
  }
  WARN("unsmeared: " << inc_ok << "/" << kDraws << " inclinations within 4 deg, worst " << worst);
  CHECK(ok == kDraws);
  CHECK(inc_ok >= 0.95 * kDraws);
}
