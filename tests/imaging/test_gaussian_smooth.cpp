// Gaussian smoothing: the separable sums (SmoothOptions::separable) against
// the direct 2-D sum over the trimmed kernel, and a smoothed point against
// the sampled Gaussian exp(-d^T C^-1 d / 2) it must reproduce (the
// definition in gaussian_smooth.hpp).
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "fulcrum/imaging/gaussian_smooth.hpp"

using namespace fulcrum;

namespace {

// Largest |a - b| over pixels finite in both; also requires the same NaNs.
double max_difference(const std::vector<double>& a, const std::vector<double>& b) {
  REQUIRE(a.size() == b.size());
  double m = 0;
  for (std::size_t i = 0; i < a.size(); ++i) {
    REQUIRE(std::isfinite(a[i]) == std::isfinite(b[i]));
    if (std::isfinite(a[i])) m = std::max(m, std::abs(a[i] - b[i]));
  }
  return m;
}

}  // namespace

TEST_CASE("separable smoothing agrees with the direct sum", "[imaging][smoothing]") {
  const int nx = 47, ny = 38;
  std::mt19937_64 rng(3);
  std::normal_distribution<double> z(10.0, 4.0);
  std::vector<double> data(static_cast<std::size_t>(nx) * ny);
  for (double& v : data) v = z(rng);
  // Holes: single pixels, a run along x, and a corner.
  for (int i : {5 + nx * 7, 20 + nx * 20, 21 + nx * 20, 22 + nx * 20, 23 + nx * 20, 0, 1, nx}) data[i] = NAN;
  // Sigmas whose box corners lie beyond the kernel's elliptical cut (so the
  // separable sums must take those taps away again) and ones whose do not,
  // a kernel wider than the grid along y, and a 1-pixel one.
  const std::pair<double, double> sigmas[] = {{1.3, 1.3}, {2.0, 2.0}, {2.7, 1.1}, {0.4, 0.6}, {3.3, 12.0}};
  for (const auto& [sx, sy] : sigmas)
    for (int mode = 0; mode < 3; ++mode) {
      Eigen::Matrix2d cov = Eigen::Matrix2d::Zero();
      cov(0, 0) = sx * sx;
      cov(1, 1) = sy * sy;
      SmoothOptions direct;
      direct.normalise_missing = mode != 1;
      direct.fill_missing = mode == 2;
      SmoothOptions sep = direct;
      sep.separable = true;
      const auto a = convolve_gaussian(data, nx, ny, cov, direct);
      const auto b = convolve_gaussian(data, nx, ny, cov, sep);
      CAPTURE(sx, sy, mode);
      // Round-off only: values ~10, so 1e-12 is thousands of ulps.
      CHECK(max_difference(a, b) < 1e-12);
    }
}

TEST_CASE("a rotated kernel takes the direct sum even when separable is asked for", "[imaging][smoothing]") {
  const int nx = 30, ny = 30;
  std::vector<double> data(static_cast<std::size_t>(nx) * ny, 0.0);
  data[15 + nx * 15] = 1.0;
  Eigen::Matrix2d cov;
  cov << 4.0, 1.5, 1.5, 2.0;
  SmoothOptions direct, sep;
  direct.normalise_missing = sep.normalise_missing = false;
  sep.separable = true;
  const auto a = convolve_gaussian(data, nx, ny, cov, direct), b = convolve_gaussian(data, nx, ny, cov, sep);
  CHECK(a == b);  // bit for bit: the same code path
}

TEST_CASE("a smoothed point is the sampled Gaussian with unit sum", "[imaging][smoothing]") {
  // The definition (gaussian_smooth.hpp): w(d) proportional to exp(-q / 2),
  // q = d^T C^-1 d, cut where q > 2 t^2 (t = 4), normalised to unit sum.
  const int nx = 41, ny = 41, c = 20;
  std::vector<double> data(static_cast<std::size_t>(nx) * ny, 0.0);
  data[c + nx * c] = 1.0;
  Eigen::Matrix2d cov = Eigen::Matrix2d::Zero();
  cov(0, 0) = 1.7 * 1.7;
  cov(1, 1) = 2.3 * 2.3;
  SmoothOptions o;
  o.normalise_missing = false;
  o.separable = true;
  const auto s = convolve_gaussian(data, nx, ny, cov, o);
  double sum = 0, expect_sum = 0;
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const double q = (x - c) * (x - c) / cov(0, 0) + (y - c) * (y - c) / cov(1, 1);
      const bool in_box = std::abs(x - c) <= std::ceil(4 * 1.7) && std::abs(y - c) <= std::ceil(4 * 2.3);
      if (in_box && q <= 32.0) expect_sum += std::exp(-0.5 * q);
      sum += s[x + nx * y];
    }
  CHECK(sum == Approx(1.0).epsilon(1e-13));
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const double q = (x - c) * (x - c) / cov(0, 0) + (y - c) * (y - c) / cov(1, 1);
      const bool in_box = std::abs(x - c) <= std::ceil(4 * 1.7) && std::abs(y - c) <= std::ceil(4 * 2.3);
      const double expect = in_box && q <= 32.0 ? std::exp(-0.5 * q) / expect_sum : 0.0;
      CAPTURE(x, y);
      CHECK(std::abs(s[x + nx * y] - expect) < 1e-15);
    }
}

TEST_CASE("a round kernel on a rotated grid is summed separably to round-off", "[imaging][smoothing]") {
  // pixel_covariance of a round sky beam through a rotated square-pixel
  // Jacobian: an x-y term of rounding size only (or exactly 0).
  const int nx = 40, ny = 36;
  std::mt19937_64 rng(5);
  std::normal_distribution<double> z(0.0, 1.0);
  std::vector<double> data(static_cast<std::size_t>(nx) * ny);
  for (double& v : data) v = z(rng);
  data[100] = NAN;
  for (double rot : {25.0, 61.0, 137.0}) {
    const double r = rot * 3.14159265358979323846 / 180.0, s = 0.4;
    Eigen::Matrix2d jac;
    jac << -s * std::cos(r), s * std::sin(r), s * std::sin(r), s * std::cos(r);
    const Eigen::Matrix2d cov = pixel_covariance(Beam{1.1, 1.1, 0.0}, jac);
    CAPTURE(rot, cov(0, 1));
    CHECK(std::abs(cov(0, 1)) <= 1e-14 * cov.trace());
    SmoothOptions direct, sep;
    sep.separable = true;
    CHECK(max_difference(convolve_gaussian(data, nx, ny, cov, direct), convolve_gaussian(data, nx, ny, cov, sep)) <
          1e-12);
  }
}
