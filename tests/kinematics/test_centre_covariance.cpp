// The residual-based centre covariance (kinematics/centre_covariance.hpp,
// residual_correlation.hpp, method_spread.hpp, centre_error_terms.hpp):
//  * the normal matrix built here reproduces the global fit's formal
//    covariance (from the Jacobian Ceres evaluates for its problem, scaled by
//    the same reduced chi^2 and eta) - two independent evaluations of
//    (J^T W J)^-1 (the Jacobian covariance itself is checked against Ceres's
//    own covariance in tests/core/test_jacobian_covariance.cpp);
//  * the neighbour sum equals a brute-force double loop over all pairs;
//  * the residual correlation of noise white before a beam is measured as the
//    beam's autocorrelation (scale sqrt 2: docs/uncertainties.md §1, checked
//    by simulation in tests/python/check_noise_correlation.py);
//  * the method-spread term is zero when methods agree within their errors
//    and the squared excess when they do not (Hausman 1978 difference).
// Mocks: tests/kinematics/velocity_field_mock.hpp (invented disc).
#include "fulcrum/kinematics/centre_covariance.hpp"

#include <catch2/catch.hpp>

#include <Eigen/Dense>
#include <cmath>
#include <random>

#include "fulcrum/kinematics/centre_error_terms.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/kinematics/method_spread.hpp"
#include "fulcrum/kinematics/residual_correlation.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

namespace {
test::VelocityMock mock(unsigned seed, bool smear) {
  test::VelocityMockSpec s;
  s.nx = s.ny = 64;
  s.rotation_deg = 25;
  s.centre_offset = {0.7, -0.4};
  s.noise_kms = 4.0;
  s.smear = smear;
  s.seed = seed;
  return test::make_velocity_mock(s);
}

// The global tilted-ring fit alone (no ring-by-ring fit, no smearing correction).
KinematicFit global_fit_only(const test::VelocityMock& m, double weight_power = 1.0) {
  KinematicOptions opt;
  opt.method = Method::rings;
  opt.ring_by_ring = false;
  opt.correct_beam_smearing = false;
  opt.weight_power = weight_power;
  return fit_kinematics(m.velocity, &m.velocity_error, opt);
}
}  // namespace

TEST_CASE("sandwich: the formal part equals Ceres' covariance", "[kinematics][covariance]") {
  const auto m = mock(3, false);
  const KinematicFit fit = global_fit_only(m);
  REQUIRE(fit.status == "ok");
  const VelocitySamples s = samples_from_image(m.velocity, &m.velocity_error, fit.reference);
  GeometryCovarianceOptions go;
  const GeometryCovariance gc = geometry_covariance(s, fit.global, go);
  REQUIRE(gc.ok);
  const Matrix5d formal = gc.formal * fit.global.scaling.factor();
  // 1%: the weights here are those of the final geometry, Ceres' those of the
  // start of the last pass (which moved the geometry by < 1e-3 arcsec/deg).
  for (int i = 0; i < 5; ++i) {
    INFO("parameter " << i << ": here " << formal(i, i) << ", Ceres " << fit.global.covariance(i, i));
    CHECK(formal(i, i) == Approx(fit.global.covariance(i, i)).epsilon(0.01));
  }
}

TEST_CASE("sandwich: expected residual sum is N - p for independent pixels", "[kinematics][covariance]") {
  // Weighted least squares with W = S^-1 on independent pixels leaves
  // E sum ((v - m) / sigma)^2 = N - p (e.g. Seber & Lee 2003, Linear
  // Regression Analysis, 2nd ed., Thm 3.3; the textbook result for a linear
  // model, which the linearised fit is): the trace formula of
  // expected_residual_sum must reduce to it exactly.
  const auto m = mock(3, false);
  const KinematicFit fit = global_fit_only(m, 0.0);
  REQUIRE(fit.status == "ok");
  VelocitySamples s = samples_from_image(m.velocity, &m.velocity_error, fit.reference);
  s.beam.reset();  // independent pixels
  GeometryCovarianceOptions go;
  go.weight_power = 0.0;
  const GeometryCovariance gc = geometry_covariance(s, fit.global, go);
  REQUIRE(gc.ok);
  CHECK(gc.effective_dof == Approx(double(gc.n_used - gc.n_parameters)).epsilon(1e-9));
}

TEST_CASE("sandwich: neighbour sum equals the brute-force double sum", "[kinematics][covariance]") {
  const auto m = mock(4, true);
  const VelocitySamples s = samples_from_image(m.velocity, &m.velocity_error, {150.0, 20.0});
  std::vector<unsigned char> use(s.size(), 0);
  std::mt19937_64 rng(5);
  std::normal_distribution<double> g;
  std::vector<Eigen::Matrix<double, 5, 1>> u(s.size(), Eigen::Matrix<double, 5, 1>::Zero());
  for (std::size_t i = 0; i < s.size(); ++i)
    if (i % 3 != 0) {
      use[i] = 1;
      for (int q = 0; q < 5; ++q) u[i](q) = g(rng);
    }
  const SampleGrid grid = make_sample_grid(s, use);
  REQUIRE(grid.jacobian_ok);
  const NoiseCorrelation c = noise_correlation_of_beam(Beam{2.0, 1.6, 20.0});
  const Matrix5d fast = correlated_outer_sum(grid, u, c, 8.0);
  Matrix5d brute = Matrix5d::Zero();
  for (std::size_t i = 0; i < s.size(); ++i)
    for (std::size_t j = 0; j < s.size(); ++j)
      if (use[i] && use[j]) brute += c.at(s.east[j] - s.east[i], s.north[j] - s.north[i]) * u[i] * u[j].transpose();
  // exact up to the 8-sigma cut (rho < 1.3e-14) and the grid's curvature
  // (SIN projection over 32": lags differ by < 1e-7 relative)
  CHECK((fast - brute).norm() <= 1e-6 * brute.norm());
}

TEST_CASE("residual correlation of beam-smoothed noise is the beam autocorrelation", "[kinematics][covariance]") {
  test::VelocityMockSpec spec;
  spec.nx = spec.ny = 96;
  spec.disc_radius_arcsec = 30;
  spec.noise_kms = 5.0;
  spec.vflat_kms = 0.0;   // the field is noise about vsys
  spec.smear = false;
  spec.seed = 11;
  const auto m = test::make_velocity_mock(spec);
  const VelocitySamples s = samples_from_image(m.velocity, &m.velocity_error, {150.0, 20.0});
  std::vector<unsigned char> use(s.size(), 1);
  std::vector<double> z(s.size());
  for (std::size_t i = 0; i < s.size(); ++i) z[i] = (s.velocity[i] - spec.vsys_kms) / spec.noise_kms;
  const SampleGrid grid = make_sample_grid(s, use);
  const ResidualCorrelation rc = measure_residual_correlation(grid, z, use, spec.beam);
  INFO("fitted scale " << rc.fitted_scale << " over " << rc.lags << " lags");
  REQUIRE(rc.measured);
  // sqrt 2 (exact for noise white before the beam); 8%: sampling error of the
  // correlation over ~9000 pixels of ~15 pixels per beam.
  CHECK(rc.fitted_scale == Approx(std::sqrt(2.0)).epsilon(0.08));
}

TEST_CASE("method spread: only the excess over the statistical difference", "[kinematics][covariance]") {
  const Eigen::Matrix2d c0 = Eigen::Matrix2d::Identity() * 0.01;  // 0.1" each axis
  std::vector<MethodCentre> agree{{"harmonic", {0.05, 0.0}, Eigen::Matrix2d::Identity() * 0.02, 0}};
  CHECK(method_spread({0, 0}, c0, agree).norm() == 0.0);  // 0.05^2 < 0.02 - 0.01
  std::vector<MethodCentre> off{{"harmonic", {1.0, 0.0}, Eigen::Matrix2d::Identity() * 0.02, 0}};
  const Eigen::Matrix2d s = method_spread({0, 0}, c0, off);
  CHECK(s(0, 0) == Approx(1.0 - 0.01).epsilon(1e-12));  // exact: |d|^2 - (Cm - C0) along d
  CHECK(s(1, 1) == Approx(0.0).margin(1e-15));
  CHECK(off[0].excess_arcsec2 == Approx(0.99).epsilon(1e-12));
}

TEST_CASE("centre error terms: reported and adopted by the kinematic fit", "[kinematics][covariance]") {
  const auto m = mock(6, true);
  KinematicOptions opt;
  const KinematicFit fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m.intensity);
  REQUIRE(fit.status == "ok");
  const CentreErrorTerms& t = fit.centre_errors;
  REQUIRE(t.applied);
  CHECK((fit.centre->covariance - t.total).norm() == 0.0);
  CHECK(fit.pa_err_deg == Approx(std::sqrt(t.geometry(2, 2))));
  const nlohmann::json j = to_json(fit);
  REQUIRE(j.contains("centre_error_terms"));
  for (const char* k : {"statistical_arcsec", "model_misfit_arcsec", "method_spread_arcsec", "total_arcsec", "dominant"})
    CHECK(j["centre_error_terms"].contains(k));
  CHECK(j["centre_error_terms"]["total_arcsec"].get<double>() >=
        j["centre_error_terms"]["statistical_arcsec"].get<double>());
}
