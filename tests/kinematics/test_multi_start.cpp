// Several starts (kinematics/multi_start.hpp), the ambiguity of two
// solutions (solution_ambiguity.hpp), degenerate fits (fit_health.hpp),
// priors (global_fit.hpp GeometryPrior) and the named settings
// (kinematic_settings.hpp). Truth from the in-test generator
// (velocity_field_mock.hpp, the published tilted-ring formula); the
// formulas of the headers are re-derived by hand where stated.
#include <catch2/catch.hpp>

#include <Eigen/Dense>

#include "fulcrum/core/error.hpp"
#include "fulcrum/kinematics/fit_health.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/kinematics/kinematic_settings.hpp"
#include "fulcrum/kinematics/multi_start.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

namespace {
// The velocity samples of an in-test mock disc about its true centre.
VelocitySamples mock_samples(const test::VelocityMockSpec& spec) {
  const auto m = test::make_velocity_mock(spec);
  return samples_from_image(m.velocity, &m.velocity_error, m.true_centre);
}
// The rings these tests fit: 0.9 arcsec wide out to 12 arcsec.
GlobalFitOptions test_rings() {
  GlobalFitOptions go;
  go.ring_width_arcsec = 0.9;
  go.max_radius_arcsec = 12.0;
  return go;
}
}  // namespace

TEST_CASE("scouts find the true PA from a first guess pointing the wrong way", "[kinematics][starts]") {
  test::VelocityMockSpec spec;
  spec.pa_deg = 130;
  spec.seed = 3;
  const VelocitySamples s = mock_samples(spec);
  for (double wrong : {spec.pa_deg + 100.0, spec.pa_deg + 180.0, spec.pa_deg - 70.0}) {
    FirstGuess g = first_guess(s);
    g.pa_deg = wrap_pa_deg(wrong);
    const GlobalFitOptions go = test_rings();
    const MultiStartSummary ms = scout_starts(s, g, go, MultiStartOptions{}, spec.beam.fwhm_arcsec());
    INFO("first guess PA " << wrong << ", best scout PA " << ms.best_start.pa_deg);
    CHECK(ms.starts == static_cast<int>(ms.scouts.size()));
    // 8 PA starts over a turn are 4 over half a turn at each centre start:
    // the other 4 are their flips.
    CHECK(ms.starts % 4 == 0);
    CHECK(ms.starts <= 8);
    CHECK(ms.converged > 0);
    // Scouts run 3 passes on a thinned map: within 6 deg (the task's bound).
    CHECK(std::abs(angle_diff_deg(ms.best_start.pa_deg, spec.pa_deg)) < 6.0);
  }
}

TEST_CASE("a scout started at PA + 180 deg reaches the same disc as one started at PA", "[kinematics][starts]") {
  // Why the start grid drops flips: v = vsys + sin i (vrot cos theta + vrad sin theta), and
  // PA + 180 deg turns theta by 180 deg, so with the guessed speeds' signs
  // swapped it is the same model (the tilted-ring formula, Begeman 1989).
  test::VelocityMockSpec spec;
  spec.pa_deg = 40;
  spec.seed = 5;
  const VelocitySamples s = mock_samples(spec);
  const FirstGuess g = first_guess(s);
  GlobalFitOptions go = test_rings();
  go.max_passes = 3;
  const DiscGeometry a{g.centre, g.pa_deg + 30.0, g.inc_deg, g.vsys_kms};
  DiscGeometry b = a;
  b.pa_deg = wrap_pa_deg(a.pa_deg + 180.0);
  const GlobalFitSummary ra = fit_global_rings(s, a, go), rb = fit_global_rings(s, b, go);
  REQUIRE(ra.n_used > 0);
  const double dpa = std::abs(angle_diff_deg(ra.geometry.pa_deg, rb.geometry.pa_deg));
  CHECK(std::min(dpa, 180.0 - dpa) < 1e-4);  // the same line, either way round
  CHECK(rb.geometry.centre.east == Approx(ra.geometry.centre.east).margin(1e-5));
  CHECK(rb.geometry.centre.north == Approx(ra.geometry.centre.north).margin(1e-5));
  CHECK(rb.geometry.inc_deg == Approx(ra.geometry.inc_deg).margin(1e-4));
  CHECK(rb.chi2 == Approx(ra.chi2).epsilon(1e-6));
  // An odd number of PA starts has no flips in its grid: all are run.
  MultiStartOptions five;
  five.pa_starts = 5;
  CHECK(scout_starts(s, g, go, five, spec.beam.fwhm_arcsec()).starts % 5 == 0);
}

TEST_CASE("a user PA is the only PA start", "[kinematics][starts]") {
  const VelocitySamples s = mock_samples(test::VelocityMockSpec{});
  const GlobalFitOptions go = test_rings();
  MultiStartOptions mo;
  mo.pa_given = true;
  mo.centre_given = true;
  const MultiStartSummary ms = scout_starts(s, first_guess(s), go, mo, 1.8);
  CHECK(ms.starts == 1);
}

TEST_CASE("the ambiguity statistic and spread follow their definitions", "[kinematics][ambiguity]") {
  // Hand calculation: reduced = 1000 / (1000 - 10); (1200 - 1000) / reduced / 20 = 9.9.
  CHECK(scaled_delta_chi2(1000.0, 1200.0, 1000, 10, 20.0) == Approx(9.9).epsilon(1e-12));
  CHECK(scaled_delta_chi2(1000.0, 1000.0, 1000, 10, 20.0) == Approx(0.0).margin(1e-12));
  // common_chi2: one node (vrot 50 km/s at 10 arcsec, linear from 0), PA 0,
  // inclination 30 deg (sin i = 0.5); by hand at two major-axis samples:
  // north 5 (receding, R = 5): 100 + 0.5 * 25 = 112.5; north -20
  // (approaching, beyond the node): 100 - 0.5 * 50 = 75.
  GlobalFitSummary f;
  f.geometry = DiscGeometry{{0, 0}, 0.0, 30.0, 100.0};
  f.nodes = {RingNode{10.0, 50.0, 1.0, 0, 0, 1}};
  VelocitySamples s;
  s.east = {0.0, 0.0};
  s.north = {5.0, -20.0};
  s.velocity = {117.5, 65.0};   // residuals 5 (sigma 1) and -10 (sigma 2)
  s.sigma = {1.0, 2.0};
  CHECK(common_chi2(f, s) == Approx(25.0 + 25.0).epsilon(1e-9));
  Eigen::Matrix2d c;
  c << 0.04, 0.01, 0.01, 0.09;
  const Eigen::Matrix2d w = add_ambiguity_spread(c, {1.0, 2.0}, {1.3, 1.6});
  CHECK(w(0, 0) == Approx(0.04 + 0.09).epsilon(1e-12));
  CHECK(w(0, 1) == Approx(0.01 - 0.12).epsilon(1e-12));
  CHECK(w(1, 1) == Approx(0.09 + 0.16).epsilon(1e-12));
}

TEST_CASE("degenerate fits are named", "[kinematics][health]") {
  GlobalFitSummary g;
  GlobalFitOptions o;
  g.covariance_ok = false;
  CHECK(covariance_problem(g, o).find("rank deficient") != std::string::npos);
  g.covariance_ok = true;
  g.covariance.setIdentity();
  CHECK(covariance_problem(g, o).empty());
  // Centre east and PA correlated with r = 1 - 1e-10: near-singular.
  const double r = 1.0 - 1e-10;
  g.covariance(0, 2) = g.covariance(2, 0) = r;
  CHECK(covariance_problem(g, o).find("near-singular") != std::string::npos);
  g.covariance.setIdentity();
  g.geometry.inc_deg = 84.8;
  CHECK(limit_problem(g, o, {0, 0}).find("upper limit") != std::string::npos);
  g.geometry.inc_deg = 60;
  g.geometry.centre = {o.max_radius_arcsec + 1.0, 0.0};
  CHECK(limit_problem(g, o, {0, 0}).find("left the fitted region") != std::string::npos);
  g.geometry.centre = {0, 0};
  CHECK(limit_problem(g, o, {0, 0}).empty());
  // Smearing bound: amplitude = 200 sin 30 = 100 km/s.
  g.geometry.inc_deg = 30;
  g.nodes = {RingNode{1.0, 150.0, 1.0, 0, 0, 10}, RingNode{2.0, 200.0, 1.0, 0, 0, 10}};
  CHECK(smearing_problem(g, 99.0, 1.0).empty());
  CHECK(smearing_problem(g, 101.0, 1.0).find("101 km/s") != std::string::npos);
}

TEST_CASE("priors pull the fit as their widths say", "[kinematics][prior]") {
  test::VelocityMockSpec spec;
  spec.seed = 9;
  auto m = test::make_velocity_mock(spec);
  KinematicOptions opt;
  opt.correct_beam_smearing = false;
  opt.ring_by_ring = false;
  opt.method = Method::rings;
  opt.pa_guess_deg = spec.pa_deg + 15.0;
  SECTION("a prior pulls the PA towards its mean") {
    opt.prior.pa_err_deg = 2.0;
    const auto fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m.intensity);
    INFO(fit.reason);
    REQUIRE(fit.status == "ok");
    // 15 deg from the data's PA: the fit lies between the two, moved by more
    // than 1 deg from the data's PA.
    const double moved = angle_diff_deg(fit.pa_deg, spec.pa_deg);
    CHECK(moved > 1.0);
    CHECK(moved < 15.0);
  }
  SECTION("a wide prior leaves the data to decide") {
    opt.prior.pa_err_deg = 1000.0;
    const auto fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m.intensity);
    REQUIRE(fit.status == "ok");
    CHECK(std::abs(angle_diff_deg(fit.pa_deg, spec.pa_deg)) < 3.0);
  }
}

TEST_CASE("kinematic settings: names, checks and their effect on the options", "[kinematics][settings]") {
  auto n = [](const std::string& k) { return "'" + k + "'"; };
  KinematicSettings s;
  s.pa = 36.0;
  s.pa_err = 5.0;
  s.fix = "inc, vsys";
  s.inc = 50.0;
  s.max_radius = 30.0;
  s.smearing_correction = false;
  s.noise_correlation = 10.0;
  KinematicOptions o;
  apply_kinematic_settings(s, o, n);
  CHECK(*o.pa_guess_deg == 36.0);
  CHECK(*o.prior.pa_err_deg == 5.0);
  CHECK(o.fix_inc);
  CHECK(o.fix_vsys);
  CHECK(!o.fix_pa);
  CHECK(*o.max_radius_arcsec == 30.0);
  CHECK(!o.correct_beam_smearing);
  CHECK(o.noise_correlation == 10.0);
  CHECK(to_json(s)["smearing_correction"] == false);
  KinematicSettings bad;
  bad.inc_err = 3.0;
  CHECK(kinematic_settings_problem(bad, n) == "'inc_err' needs 'inc' (the prior's centre)");
  bad = {};
  bad.centre_ra = 10.0;
  CHECK(kinematic_settings_problem(bad, n).find("must be given together") != std::string::npos);
  bad = {};
  bad.fix = "pa,spin";
  CHECK(kinematic_settings_problem(bad, n).find("'spin'") != std::string::npos);
}

TEST_CASE("a fit stopped by its iteration limit is carried on by a fit started where it stopped", "[kinematics][smearing]") {
  // What the beam-smearing refits rely on (kinematic_fit.cpp,
  // correct_smearing): a refit that ran out of iterations is usable, says so,
  // and the next refit from its solution reaches the disc a single converged
  // fit reaches (Levenberg-Marquardt from a nearer start).
  test::VelocityMockSpec spec;
  spec.pa_deg = 70;
  spec.seed = 9;
  const VelocitySamples s = mock_samples(spec);
  const FirstGuess g = first_guess(s);
  const GlobalFitOptions go = test_rings();  // passes until the selection settles (one pass keeps its start's pixels)
  const DiscGeometry start{g.centre, g.pa_deg + 15.0, g.inc_deg - 8.0, g.vsys_kms};
  const GlobalFitSummary full = fit_global_rings(s, start, go);
  REQUIRE(full.converged);
  CHECK_FALSE(full.stopped_at_iteration_limit);
  GlobalFitOptions short_run = go;
  short_run.max_iterations = 2;
  const GlobalFitSummary stopped = fit_global_rings(s, start, short_run);
  CHECK_FALSE(stopped.converged);
  REQUIRE(stopped.stopped_at_iteration_limit);
  GlobalFitOptions carry = go;
  for (const auto& node : stopped.nodes) carry.start_vrot.push_back(node.vrot_kms);
  const GlobalFitSummary carried = fit_global_rings(s, stopped.geometry, carry);
  REQUIRE(carried.converged);
  // The same disc to a fraction of its errors: the passes re-select the
  // pixels under each geometry, so two paths can end a few pixels apart
  // (measured here: 0.15 sigma in inclination, less elsewhere; bound 0.25).
  REQUIRE(full.covariance_ok);
  const auto& c = full.covariance;
  CHECK(std::abs(carried.geometry.centre.east - full.geometry.centre.east) < 0.25 * std::sqrt(c(0, 0)));
  CHECK(std::abs(carried.geometry.centre.north - full.geometry.centre.north) < 0.25 * std::sqrt(c(1, 1)));
  CHECK(std::abs(angle_diff_deg(carried.geometry.pa_deg, full.geometry.pa_deg)) < 0.25 * std::sqrt(c(2, 2)));
  CHECK(std::abs(carried.geometry.inc_deg - full.geometry.inc_deg) < 0.25 * std::sqrt(c(3, 3)));
}
