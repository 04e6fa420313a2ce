// The beam-smearing correction (kinematics/beam_smearing.hpp):
//  * the moment-1 smearing operator B * (I v) / B * I against scipy.ndimage
//    on the same arrays (tests/python/check_moment1_smearing.py): a beam
//    along the pixel axes (gaussian_filter) and an elliptical beam on a
//    rotated, flipped grid (the kernel built in numpy from the beam and the
//    CD matrix, scipy.ndimage.convolve);
//  * on a noise-free smeared mock disc (invented data) the corrected fit
//    recovers the true inclination where the uncorrected one is biased, with
//    the intensity map on the velocity grid or on another grid, and the JSON
//    records what was done.
#include "fulcrum/kinematics/beam_smearing.hpp"

#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

namespace {

// A velocity field and an intensity on an nx x ny grid (invented): a
// rotating-disc-like pattern with a gradient, NaN holes in the velocity, and
// an intensity with zero, negative and NaN pixels.
void test_arrays(int nx, int ny, std::vector<double>& v, std::vector<double>& I) {
  std::mt19937_64 rng(4242);
  std::uniform_real_distribution<double> u(0, 1);
  v.assign(static_cast<std::size_t>(nx) * ny, 0.0);
  I = v;
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y;
      const double dx = x - 0.45 * nx, dy = y - 0.55 * ny, r = std::hypot(dx, 1.6 * dy);
      v[i] = 5000.0 + 250.0 * std::atan(r / 4.0) * (r > 0 ? dx / r : 0.0) + 2.0 * dy;
      I[i] = std::exp(-r / 15.0) * (0.8 + 0.4 * u(rng));
      if (u(rng) < 0.05) v[i] = std::nan("");
      const double w = u(rng);
      if (w < 0.03) I[i] = 0.0;
      else if (w < 0.05) I[i] = -0.2;
      else if (w < 0.06) I[i] = std::nan("");
    }
}

nlohmann::json case_json(const std::string& name, int nx, int ny, const std::vector<double>& v,
                         const std::vector<double>& I, const std::vector<double>& out) {
  return {{"case", name}, {"nx", nx}, {"ny", ny}, {"velocity", v}, {"intensity", I}, {"smeared", out}};
}

}  // namespace

TEST_CASE("moment-1 smearing operator agrees with scipy.ndimage", "[kinematics][python]") {
  const auto dir = test::temp_dir("kin-smear");
  constexpr double kTruncate = 8.0;  // see check_moment1_smearing.py for the tolerance
  SECTION("beam along the pixel axes: scipy.ndimage.gaussian_filter") {
    const int nx = 61, ny = 47;
    std::vector<double> v, I;
    test_arrays(nx, ny, v, I);
    const double sx = 2.3, sy = 1.6;  // pixel sigmas
    Eigen::Matrix2d cov;
    cov << sx * sx, 0.0, 0.0, sy * sy;
    const auto out = smear_moment1(v, I, nx, ny, cov, {}, kTruncate);
    auto j = case_json("axes", nx, ny, v, I, out);
    j["sigma_x_pix"] = sx;
    j["sigma_y_pix"] = sy;
    const auto path = (dir / "axes.json").string();
    write_text_file(path, j.dump());
    const auto r = test::run_python("check_moment1_smearing.py", path);
    INFO(r.out << r.err);
    CHECK(r.exit_code == 0);
    WARN(r.out);
  }
  SECTION("elliptical beam on a rotated, flipped grid: scipy.ndimage.convolve") {
    test::VelocityMockSpec spec;  // only its grid: 0.5" pixels, +y at PA 35 deg, flipped
    spec.nx = 58;
    spec.ny = 52;
    spec.rotation_deg = 35;
    spec.flip = true;
    Image grid;
    grid.nx = spec.nx;
    grid.ny = spec.ny;
    grid.wcs = test::mock_wcs(spec);
    const PixelOffsets off(grid, spec.grid_centre);
    const Beam beam{3.1, 1.7, 62.0};
    const Eigen::Matrix2d cov = pixel_covariance(beam, off.jacobian());
    std::vector<double> v, I;
    test_arrays(grid.nx, grid.ny, v, I);
    const auto out = smear_moment1(v, I, grid.nx, grid.ny, cov, {}, kTruncate);
    auto j = case_json("rotated", grid.nx, grid.ny, v, I, out);
    const Eigen::Matrix2d& J = off.jacobian();
    j["jacobian"] = {{J(0, 0), J(0, 1)}, {J(1, 0), J(1, 1)}};
    j["bmaj_arcsec"] = beam.bmaj_arcsec;
    j["bmin_arcsec"] = beam.bmin_arcsec;
    j["bpa_deg"] = beam.bpa_deg;
    const auto path = (dir / "rotated.json").string();
    write_text_file(path, j.dump());
    const auto r = test::run_python("check_moment1_smearing.py", path);
    INFO(r.out << r.err);
    CHECK(r.exit_code == 0);
    WARN(r.out);
  }
}

TEST_CASE("smear_moment1 computes only where asked and leaves empty pixels NaN", "[kinematics]") {
  const int nx = 30, ny = 20;
  std::vector<double> v(static_cast<std::size_t>(nx) * ny, 100.0), I(v.size(), 0.0);
  I[5 + nx * 5] = 1.0;  // one emitting pixel
  std::vector<unsigned char> where(v.size(), 0);
  where[6 + nx * 5] = 1;
  where[29 + nx * 19] = 1;  // far beyond the kernel's reach
  const auto out = smear_moment1(v, I, nx, ny, Eigen::Matrix2d::Identity(), where);
  CHECK(out[6 + nx * 5] == Approx(100.0).epsilon(1e-12));  // exact: one emitter, v = 100
  CHECK(std::isnan(out[29 + nx * 19]));
  CHECK(std::isnan(out[5 + nx * 5]));  // not asked for
}

TEST_CASE("smear_moment1_fields equals smear_moment1 field by field and bit for bit", "[kinematics]") {
  // The batched form shares B * I; its sums run in the same order, so the
  // results must be identical, not merely close.
  const int nx = 41, ny = 33;
  const std::size_t n = static_cast<std::size_t>(nx) * ny;
  std::vector<double> I(n, 0.0);
  std::vector<std::vector<double>> fields(5, std::vector<double>(n, 0.0));
  std::vector<unsigned char> where(n, 0);
  for (std::size_t i = 0; i < n; ++i) {
    const double x = double(i % nx) - 20.0, y = double(i / nx) - 16.0;
    I[i] = (x * x + y * y < 150.0) ? std::exp(-0.01 * (x * x + 2 * y * y)) : 0.0;
    for (std::size_t c = 0; c < fields.size(); ++c) fields[c][i] = std::sin(0.3 * x * (c + 1)) + 0.1 * y * c;
    where[i] = (i % 3) != 0;
  }
  Eigen::Matrix2d cov;
  cov << 4.0, 1.2, 1.2, 2.5;
  const auto many = smear_moment1_fields(fields, I, nx, ny, cov, where);
  REQUIRE(many.size() == fields.size());
  for (std::size_t c = 0; c < fields.size(); ++c) {
    const auto one = smear_moment1(fields[c], I, nx, ny, cov, where);
    for (std::size_t i = 0; i < n; ++i) {
      INFO("field " << c << " pixel " << i);
      if (std::isnan(one[i]))
        CHECK(std::isnan(many[c][i]));
      else
        CHECK(many[c][i] == one[i]);
    }
  }
}

namespace {
// B * (I v) / B * I by the plain loop over output pixels and their taps
// (dy, then dx, ascending; pixels without emission and beyond the grid
// skipped): the order the blocked implementation must reproduce.
std::vector<double> smear_pixel_by_pixel(const std::vector<double>& v, const std::vector<double>& I, int nx,
                                         int ny, const Eigen::Matrix2d& cov,
                                         const std::vector<unsigned char>& where) {
  const PixelKernel k = gaussian_kernel(cov, 4.0);
  const std::size_t n = static_cast<std::size_t>(nx) * ny;
  std::vector<double> out(n, std::nan(""));
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y;
      if (!where.empty() && !where[i]) continue;
      double num = 0.0, den = 0.0;
      for (int dy = std::max(-k.hy, y - (ny - 1)); dy <= std::min(k.hy, y); ++dy)
        for (int dx = std::max(-k.hx, x - (nx - 1)); dx <= std::min(k.hx, x); ++dx) {
          const std::size_t j = static_cast<std::size_t>(x - dx) + static_cast<std::size_t>(nx) * (y - dy);
          if (!(std::isfinite(I[j]) && I[j] > 0) || !std::isfinite(v[j])) continue;
          den += k.at(dx, dy) * I[j];
          num += k.at(dx, dy) * (I[j] * v[j]);
        }
      if (den > 0) out[i] = num / den;
    }
  return out;
}
}  // namespace

TEST_CASE("smear_moment1 equals the pixel-by-pixel loop bit for bit", "[kinematics]") {
  // The implementation advances blocks of output pixels tap by tap over
  // zero-padded planes, leaving out taps that read only zeros; every pixel's
  // sum must still run in the plain loop's order. Grid widths that are not a
  // multiple of the block, a kernel wider than the grid, an elliptical tilted
  // kernel, holes, negative and NaN intensities, a velocity that is non-zero
  // in an annulus only, and a sparse `where` (invented arrays).
  struct Case { int nx, ny; double cxx, cxy, cyy; };
  for (const Case& cs : {Case{41, 33, 4.0, 1.2, 2.5}, Case{7, 5, 9.0, -2.0, 3.0}, Case{64, 17, 1.0, 0.0, 1.0},
                         Case{3, 40, 2.0, 0.5, 6.0}}) {
    std::vector<double> v, I;
    test_arrays(cs.nx, cs.ny, v, I);
    std::vector<double> ring(v.size(), 0.0);  // non-zero for 4 <= r < 7 pixels only
    for (std::size_t i = 0; i < v.size(); ++i) {
      const double r = std::hypot(double(i % cs.nx) - 0.5 * cs.nx, double(i / cs.nx) - 0.5 * cs.ny);
      if (r >= 4.0 && r < 7.0) ring[i] = v[i];
    }
    Eigen::Matrix2d cov;
    cov << cs.cxx, cs.cxy, cs.cxy, cs.cyy;
    std::vector<unsigned char> where(v.size(), 0);
    for (std::size_t i = 0; i < where.size(); ++i) where[i] = (i * 7) % 5 < 2;
    for (const auto& w : {std::vector<unsigned char>{}, where}) {
      const auto got_ring = smear_moment1(ring, I, cs.nx, cs.ny, cov, w);
      const auto ref_ring = smear_pixel_by_pixel(ring, I, cs.nx, cs.ny, cov, w);
      for (std::size_t i = 0; i < v.size(); ++i) {
        INFO(cs.nx << " x " << cs.ny << " annulus, pixel " << i);
        if (std::isnan(ref_ring[i]))
          CHECK(std::isnan(got_ring[i]));
        else
          CHECK(got_ring[i] == ref_ring[i]);
      }
      const auto got = smear_moment1(v, I, cs.nx, cs.ny, cov, w);
      const auto ref = smear_pixel_by_pixel(v, I, cs.nx, cs.ny, cov, w);
      for (std::size_t i = 0; i < v.size(); ++i) {
        INFO(cs.nx << " x " << cs.ny << " pixel " << i);
        if (std::isnan(ref[i]))
          CHECK(std::isnan(got[i]));
        else
          CHECK(got[i] == ref[i]);
      }
    }
  }
}

namespace {
test::VelocityMockSpec smeared_disc() {
  // A steep inner rotation curve under a large beam at high inclination:
  // where beam smearing biases an uncorrected fit most (invented disc).
  test::VelocityMockSpec s;
  s.nx = s.ny = 72;
  s.disc_radius_arcsec = 16;
  s.inc_deg = 70;
  s.pa_deg = 125;
  s.rotation_deg = 30;
  s.centre_offset = {0.7, -0.4};
  s.r_turn_arcsec = 2.0;
  s.beam = Beam{2.6, 2.2, 40.0};
  s.noise_kms = 0;
  return s;
}
}  // namespace

TEST_CASE("beam-smearing correction removes the inclination bias of a smeared disc",
          "[kinematics]") {
  const auto spec = smeared_disc();
  const auto m = test::make_velocity_mock(spec);
  KinematicOptions opt;
  opt.method = Method::rings;
  opt.ring_by_ring = false;
  // Noise-free map: the 0.1-sigma stopping rule would never be met (sigma
  // ~0), so the refits run to their bound.
  KinematicOptions off = opt;
  off.correct_beam_smearing = false;
  const auto raw = fit_kinematics(m.velocity, nullptr, off, &m.intensity);
  const auto cor = fit_kinematics(m.velocity, nullptr, opt, &m.intensity);
  REQUIRE(raw.status == "ok");
  REQUIRE(cor.status == "ok");
  INFO("uncorrected inc " << raw.inc_deg << ", corrected " << cor.inc_deg << ", true "
                          << spec.inc_deg << "; max |Delta| "
                          << cor.beam_smearing.max_abs_correction_kms << " km/s");
  CHECK_FALSE(raw.beam_smearing.applied);
  CHECK(raw.beam_smearing.reason == "turned off");
  CHECK(cor.beam_smearing.applied);
  CHECK(cor.beam_smearing.refits >= 1);
  // The uncorrected fit is biased by more than a degree (the reason for the
  // correction); the corrected one is within 0.3 deg (noise-free data, model
  // error only: piecewise-linear rotation curve vs the mock's arctangent).
  CHECK(std::abs(raw.inc_deg - spec.inc_deg) > 1.0);
  CHECK(std::abs(cor.inc_deg - spec.inc_deg) < 0.3);
  CHECK(cor.beam_smearing.max_abs_correction_kms > 5.0);
  CHECK(cor.beam_smearing.uncorrected.inc_deg == Approx(raw.inc_deg).margin(1e-6));
  const double sep = separation_arcsec(cor.centre->position, m.true_centre);
  CHECK(sep < 0.05);

  const auto j = to_json(cor);
  REQUIRE(j.contains("beam_smearing"));
  CHECK(j["beam_smearing"]["applied"] == true);
  CHECK(j["beam_smearing"]["max_abs_correction_kms"].get<double>() > 5.0);
  CHECK(j["beam_smearing"]["weighting"].get<std::string>().find("intensity") != std::string::npos);

  SECTION("residual map is observed minus the smeared model") {
    const Image model = model_velocity_map(cor, m.velocity);
    const Image resid = residual_velocity_map(cor, m.velocity, model);
    double worst = 0.0, worst_raw = 0.0;
    const Image model_raw = model_velocity_map(raw, m.velocity);
    const Image resid_raw = residual_velocity_map(raw, m.velocity, model_raw);
    for (std::size_t i = 0; i < resid.size(); ++i) {
      if (std::isfinite(resid.data[i])) worst = std::max(worst, std::abs(resid.data[i]));
      if (std::isfinite(resid_raw.data[i])) worst_raw = std::max(worst_raw, std::abs(resid_raw.data[i]));
    }
    INFO("largest residual corrected " << worst << " km/s, uncorrected " << worst_raw);
    CHECK(worst < 0.5 * worst_raw);
  }
  SECTION("without an intensity map: uniform weight over the footprint, and said so") {
    const auto fp = fit_kinematics(m.velocity, nullptr, opt);
    REQUIRE(fp.status == "ok");
    CHECK(fp.beam_smearing.applied);
    CHECK(fp.beam_smearing.weighting.find("footprint") != std::string::npos);
    // Less exact than with the intensity (the disc is not uniform), but
    // still much closer than without a correction.
    CHECK(std::abs(fp.inc_deg - spec.inc_deg) < std::abs(raw.inc_deg - spec.inc_deg));
  }
  SECTION("intensity map on another grid: looked up through the WCS") {
    // The same exponential disc sampled on a finer grid rotated by 70 deg.
    test::VelocityMockSpec g = spec;
    g.nx = g.ny = 150;
    g.pixel_arcsec = 0.25;
    g.rotation_deg = 100;
    g.smear = false;
    const auto fine = test::make_velocity_mock(g);
    const auto other = fit_kinematics(m.velocity, nullptr, opt, &fine.intensity);
    REQUIRE(other.status == "ok");
    CHECK(other.beam_smearing.applied);
    bool noted = false;
    for (const auto& n : other.notes) noted = noted || n.find("another grid") != std::string::npos;
    CHECK(noted);
    CHECK(other.inc_deg == Approx(cor.inc_deg).margin(0.1));
  }
  SECTION("no beam: not applied, and the reason is recorded") {
    Image nobeam = m.velocity;
    nobeam.beam.reset();
    Image inten = m.intensity;
    inten.beam.reset();
    const auto nb = fit_kinematics(nobeam, nullptr, opt, &inten);
    CHECK_FALSE(nb.beam_smearing.applied);
    CHECK(nb.beam_smearing.reason.find("no beam") != std::string::npos);
  }
  SECTION("an intensity map with nothing under the footprint is refused") {
    Image empty = m.intensity;
    for (double& x : empty.data) x = 0.0;
    empty.path = "empty_mom0.fits";
    CHECK_THROWS_AS(fit_kinematics(m.velocity, nullptr, opt, &empty), InputError);
  }
}
