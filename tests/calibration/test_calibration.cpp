// Tests of the matched-mock calibration (calibration/calibration.hpp) against
// mocks made independently by the synth generator (synth/mock_galaxy.hpp):
// the false-robust rate, the bias of A, determinism. Small 48x48 maps, no
// centre re-fit in the statistical checks (the re-fit has its own smaller check).
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

using namespace fulcrum;

namespace {

// Agreement of two independent binomial / mean estimates: within this many
// combined standard errors (2 sigma, common practice for a single check).
constexpr double kSigmaTolerance = 2.0;

synth::MockGalaxy small_galaxy(double excess, std::uint64_t seed) {
  synth::MockGalaxy g;
  g.seed = seed;
  g.grid.nx = 48;
  g.grid.ny = 48;
  g.grid.pixel_arcsec = 0.8;
  g.grid.centre_east_arcsec = 0.3;
  g.grid.centre_north_arcsec = -0.2;
  g.disc_radius_arcsec = 16.0;
  g.scale_length_arcsec = 6.0;
  g.bmaj_arcsec = 3.0;
  g.bmin_arcsec = 2.6;
  g.tail_flux_fraction = 0.0;
  g.leading_excess = excess;
  g.total_flux_jykms = 2.0;
  g.intensity_rms = 0.02;
  g.optical.enabled = false;
  return g;
}

// Matched inputs from the truth of a synth mock (a fixed mask `mask` applied).
calibration::MatchedInputs inputs_for(const synth::MockGalaxy& g, const synth::MockProducts& p,
                                      const Image& map, double measured_a) {
  calibration::MatchedInputs in;
  in.galaxy = "calibration test disc";
  in.intensity = &map;
  in.intensity_error = &p.intensity_error;
  in.velocity = &p.velocity;
  in.velocity_error = &p.velocity_error;
  Eigen::Matrix2d cov;
  cov << 0.16, 0.0, 0.0, 0.16;  // (0.4 arcsec)^2: a plausible fitted-centre error
  in.centre = measured_centre(CentreMethod::kinematic_rings, {g.ra_deg, g.dec_deg}, cov, "velocity map");
  in.pa_deg = g.pa_deg;
  in.inc_deg = g.inc_deg;
  in.vsys_kms = g.vsys_kms;
  for (double r = 1.0; r <= 16.0; r += 1.5) {
    in.ring_radius_arcsec.push_back(r);
    in.ring_vrot_kms.push_back(g.vflat_kms * 2.0 / std::numbers::pi * std::atan(r / g.r_turn_arcsec));
  }
  in.tail_pa_deg = g.tail_pa_deg;
  in.tail_pa_err_deg = g.tail_pa_err_deg;
  in.measured_asymmetry = measured_a;
  split::ApertureSpec ap;
  ap.radius_arcsec = 16.0;
  ap.pa_deg = g.pa_deg;
  ap.axis_ratio = std::cos(g.inc_deg * std::numbers::pi / 180.0);
  in.aperture = ap;
  return in;
}

robustness::AnalysisOptions direct_options(const calibration::MatchedInputs& in, const Image* err,
                                           std::uint64_t seed, std::size_t draws) {
  robustness::AnalysisOptions ao;
  ao.adopted = in.centre;
  ao.adopted.method = CentreMethod::external;
  ao.adopted.label = "truth";
  ao.tail_pa_deg = in.tail_pa_deg;
  ao.tail_pa_err_deg = in.tail_pa_err_deg;
  ao.aperture = in.aperture;
  ao.error_map = err;
  ao.settings.seed = seed;
  ao.settings.n_draws = draws;
  return ao;
}

// Options of the small checks: n mocks per set, seed 3, `draws` draws per
// mock, no progress line.
calibration::CalibrationOptions quick_options(std::size_t n, std::size_t draws = 200) {
  calibration::CalibrationOptions co;
  co.n_mocks = n;
  co.seed = 3;
  co.n_draws = draws;
  co.progress = false;
  return co;
}

// A fixed mask: blank a disc of 3 arcsec radius on the receding major axis
// plus the corner pixels, the same for every mock.
Image masked(const Image& m) {
  Image o = m;
  for (int y = 0; y < o.ny; ++y)
    for (int x = 0; x < o.nx; ++x) {
      if ((x - 33) * (x - 33) + (y - 30) * (y - 30) < 16) o.at(x, y) = std::nan("");
      if (x + y < 8) o.at(x, y) = std::nan("");
    }
  return o;
}

}  // namespace

TEST_CASE("calibration false-robust rate matches independent synth mocks", "[calibration]") {
  const auto g = small_galaxy(0.0, 11);
  const auto p = synth::make_mock(g);
  const Image map = p.intensity;
  auto in = inputs_for(g, p, map, 0.0);
  calibration::CalibrationOptions co;
  co.n_mocks = 200;
  co.seed = 5;
  co.n_draws = 400;
  co.refit_centre = false;
  co.progress = false;
  auto s = calibration::calibrate(in, co);
  INFO(calibration::to_json(s).dump());
  CHECK(s.false_robust.n == 200);

  // Independent set: 200 synth mocks with other seeds, analysed directly.
  std::size_t k = 0;
  const std::size_t n = 200;
  for (std::size_t i = 0; i < n; ++i) {
    auto q = synth::make_mock(small_galaxy(0.0, 1000 + i));
    auto a = robustness::analyse(q.intensity, direct_options(in, &q.intensity_error, 77 + i, 400));
    const auto v = robustness::verdict_name(a.verdict.verdict);
    if (v == "robust" || v == "reversed") ++k;
  }
  const double r = static_cast<double>(k) / n;
  // Binomial error of each rate; with a zero count use the rate 1/n (rule of thumb).
  const double pr = std::max(r, 1.0 / n), ps = std::max(s.false_robust.rate, 1.0 / n);
  const double err = std::sqrt(pr * (1 - pr) / n + ps * (1 - ps) / s.false_robust.n);
  INFO("direct rate " << r << " calibration rate " << s.false_robust.rate << " err " << err);
  CHECK(std::abs(r - s.false_robust.rate) <= kSigmaTolerance * err);
}

TEST_CASE("calibration bias of A matches the directly measured bias on a masked noisy mock",
          "[calibration]") {
  const auto g = small_galaxy(0.35, 21);
  const auto p = synth::make_mock(g);
  const Image map = masked(p.intensity);
  auto in0 = inputs_for(g, p, map, 0.0);
  // True A: the noise-free model with the same mask, at the true centre.
  split::SplitOptions so;
  so.centre = in0.centre.position;
  so.tail_pa_deg = g.tail_pa_deg;
  so.aperture = in0.aperture;
  const double a_model = split::split_halves(masked(p.intensity_model), so).asymmetry;
  const double a_meas = split::split_halves(map, so).asymmetry;
  auto in = inputs_for(g, p, map, a_meas);

  calibration::CalibrationOptions co;
  co.n_mocks = 150;
  co.seed = 9;
  co.n_draws = 200;
  co.refit_centre = false;
  co.progress = false;
  auto s = calibration::calibrate(in, co);
  INFO(calibration::to_json(s).dump());
  CHECK(std::abs(s.achieved_asymmetry - a_meas) < 1e-6);

  double sum = 0, sum2 = 0;
  const std::size_t n = 150;
  for (std::size_t i = 0; i < n; ++i) {
    auto q = synth::make_mock(small_galaxy(0.35, 3000 + i));
    auto a = robustness::analyse(masked(q.intensity), direct_options(in, &q.intensity_error, 5 + i, 200));
    const double d = a.split.asymmetry - a_model;
    sum += d, sum2 += d * d;
  }
  const double mean = sum / n;
  const double err = std::sqrt((sum2 / n - mean * mean) / (n - 1));
  INFO("direct bias " << mean << " +- " << err << ", calibration " << s.bias << " +- " << s.bias_err);
  CHECK(std::abs(mean - s.bias) <= kSigmaTolerance * std::hypot(err, s.bias_err));
  // Without a centre re-fit the mocks sit at the true centre while the
  // bootstrap still draws centres from the 0.4 arcsec covariance, so the
  // intervals can only over-cover: at least nominal within 3 binomial sigma.
  CHECK(s.coverage68.rate >= 0.68 - 3 * 0.027);
  CHECK(s.coverage95.rate >= s.coverage68.rate);
}

TEST_CASE("calibration: same seed gives the same numbers, any thread count, and the centre re-fit runs",
          "[calibration]") {
  const auto g = small_galaxy(0.2, 31);
  const auto p = synth::make_mock(g);
  const Image map = p.intensity;
  auto in = inputs_for(g, p, map, 0.1);
  auto co = quick_options(12);
  co.refit_centre = true;
  co.refit_every = 1;  // every mock (the default re-fits every 4th)
  auto a = calibration::calibrate(in, co);
#ifdef _OPENMP
  const int nt = omp_get_max_threads();
  omp_set_num_threads(1);
#endif
  auto b = calibration::calibrate(in, co);
#ifdef _OPENMP
  omp_set_num_threads(nt);
#endif
  CHECK(calibration::to_json(a, true).dump() == calibration::to_json(b, true).dump());
  co.seed = 4;
  auto c = calibration::calibrate(in, co);
  CHECK(calibration::to_json(a, true).dump() != calibration::to_json(c, true).dump());
  INFO(calibration::to_json(a).dump());
  CHECK(a.centre_coverage.n + a.centre_fit_failures == 24);
  CHECK(a.centre_coverage.n >= 20);
}

TEST_CASE("calibration with shared re-fits: the mocks adopt the successful ones in turn",
          "[calibration]") {
  const auto g = small_galaxy(0.2, 31);
  const auto p = synth::make_mock(g);
  const Image map = p.intensity;
  auto in = inputs_for(g, p, map, 0.1);
  auto co = quick_options(5);
  co.centre_covariance_scale2 = 1.5;
  // Three re-fits as a centre bootstrap would leave them: m^2 = d^T C^-1 d
  // of the truth, 0.5^2 / 0.04 = 6.25 and 0.3^2 / 0.09 = 1, one failed.
  calibration::CentreRefit r0, r1, r2;
  r0.ok = true, r0.offset = {0.5, 0.0}, r0.covariance = 0.04 * Eigen::Matrix2d::Identity(), r0.m2 = 6.25;
  r1.failure = "the kinematic fit failed (test)";
  r2.ok = true, r2.offset = {0.0, -0.3}, r2.covariance = 0.09 * Eigen::Matrix2d::Identity(), r2.m2 = 1.0;
  co.shared_refits = {r0, r1, r2};
  const auto s = calibration::calibrate(in, co);
  INFO(calibration::to_json(s).dump());
  CHECK(s.centre_refits_shared);
  CHECK(s.centre_fit_failures == 1);
  CHECK(s.symmetric_failures + s.lopsided_failures == 0);
  // Coverage over the shared re-fits, each once, under C x scale2: 6.25 / 1.5
  // is outside the 2-sigma ellipse (m^2 <= 4), 1 / 1.5 inside.
  CHECK(s.centre_coverage.n == 2);
  CHECK(s.centre_coverage.k == 1);
  for (const auto* set : {&s.symmetric, &s.lopsided})
    for (std::size_t k = 0; k < set->size(); ++k) {
      const auto& o = (*set)[k];
      CHECK(o.centre_refitted);
      CHECK(o.centre_fit_ok);
      const double m2 = k % 2 == 0 ? r0.m2 : r2.m2;  // the successful ones in turn
      CHECK(o.centre_mahalanobis == Approx(std::sqrt(m2 / 1.5)));
    }
  // Without a velocity map there is nothing to re-fit: the shared re-fits
  // are not used either, and every mock adopts the truth.
  auto no_vel = in;
  no_vel.velocity = nullptr;
  no_vel.velocity_error = nullptr;
  const auto t = calibration::calibrate(no_vel, co);
  CHECK_FALSE(t.centre_refits_shared);
  for (const auto& o : t.symmetric) CHECK_FALSE(o.centre_refitted);
}

TEST_CASE("calibration says so when the amplitude tuning cannot reach the measured A",
          "[calibration][bounds]") {
  // A = 0.95 is out of reach: the lopsided term e cos(theta) is clamped to
  // |e| < 1, which gives at most A ~ 2/pi for a pure cos term on a half.
  const auto g = small_galaxy(0.0, 23);
  const auto p = synth::make_mock(g);
  auto in = inputs_for(g, p, p.intensity, 0.95);
  auto co = quick_options(2, 100);
  co.refit_centre = false;
  const auto s = calibration::calibrate(in, co);
  INFO(s.statement);
  CHECK_FALSE(s.tuning_converged);
  CHECK(s.tuning_steps <= co.secant_steps);
  CHECK(s.achieved_asymmetry < 0.9);
  CHECK(s.statement.find("warning: the lopsided mocks reach A =") != std::string::npos);
  CHECK(calibration::to_json(s, false)["tuning_converged"] == false);
}

TEST_CASE("a map blanked by clipping: the symmetric mock model does not inherit the data's asymmetric mask",
          "[calibration]") {
  // A strongly lopsided disc, clipped at 3 sigma with blanks: the bright side
  // keeps pixels further out, so the data's blank mask is itself lopsided.
  // The symmetric model must still split into equal halves (A = 0 up to the
  // pixel grid), because clipped pixels inside the field are evaluated.
  const auto g = small_galaxy(0.6, 21);
  const auto p = synth::make_mock(g);
  Image map = p.intensity;
  std::size_t blanked = 0;
  for (std::size_t i = 0; i < map.size(); ++i)
    if (map.data[i] < 3.0 * p.intensity_error.data[i]) {
      map.data[i] = std::nan("");
      ++blanked;
    }
  REQUIRE(blanked > 100);
  auto in = inputs_for(g, p, map, 0.3);
  in.clip_snr = 3.0;
  const auto profile = calibration::gas_profile(map, in.centre.position, in.pa_deg, in.inc_deg, 1.0);
  split::SplitOptions so;
  so.centre = in.centre.position;
  so.tail_pa_deg = in.tail_pa_deg;
  so.aperture = in.aperture;
  // Inheriting the clip mask (what the calibration did before): the
  // "symmetric" model is lopsided.
  in.clip_blank = false;
  const double inherited = split::split_halves(calibration::mock_intensity_model(in, profile, 0.0), so).asymmetry;
  in.clip_blank = true;
  const double evaluated = split::split_halves(calibration::mock_intensity_model(in, profile, 0.0), so).asymmetry;
  // The same model on the unclipped map (no blanks at all): what is left is
  // the pixel grid's and the map edge's own asymmetry.
  const Image whole = p.intensity;
  auto in_whole = inputs_for(g, p, whole, 0.3);
  const double grid_only = split::split_halves(calibration::mock_intensity_model(in_whole, profile, 0.0), so).asymmetry;
  INFO("A of the symmetric model: " << inherited << " with the data's clip mask, " << evaluated << " without, "
                                    << grid_only << " on the unblanked map");
  CHECK(std::abs(inherited) > 0.1);
  CHECK(evaluated == Approx(grid_only).margin(1e-12));
  CHECK(std::abs(evaluated) < 0.01);
}
