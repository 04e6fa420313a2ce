// Test images of a Sérsic galaxy drawn straight from the published formula,
// independently of the fitter's renderer: the profile
//   I(r) = I_e exp(-b_n [(r/r_e)^(1/n) - 1])      (Sérsic 1963)
// is evaluated on a grid `oversample` times finer than the pixels, convolved
// there with the Gaussian PSF (separable along the fine pixel axes; the test
// grids have square pixels, so the PSF is round in pixel space), and summed
// into pixels. b_n comes from scipy-verified sersic_bn (the b_n test checks
// it against scipy.special.gammaincinv); I_e is set from the total flux with
//   F = 2 pi n q r_e^2 I_e e^b b^(-2n) Gamma(2n)   (Ciotti & Bertin 1999, eq. 4).
// Stars are Gaussian PSFs sampled at pixel centres. The WCS is a TAN
// projection with a CD matrix for a grid whose +y axis points to position
// angle `rotation_deg`, optionally flipped (east to the right), with square
// or rectangular pixels (a round PSF stays diagonal in pixel space for
// those, so the fine-grid convolution is separable).
//
// The truth is the 0-based pixel (x0, y0) and its world position.
#pragma once

#include <Eigen/Dense>
#include <cmath>
#include <numbers>
#include <random>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/photometry/sersic_profile.hpp"

namespace fulcrum::test {

struct TestStar {
  double x = 0, y = 0;  // 0-based pixel
  double flux = 0;      // counts
};

struct TestGalaxy {
  int nx = 48, ny = 48;
  double pixel_arcsec = 0.4;
  double pixel_y_arcsec = 0.0;  // > 0: rectangular pixels (y size)
  double rotation_deg = 0.0;
  bool flip = false;
  double ra_deg = 150.0, dec_deg = 20.0;  // at the grid centre
  double x0 = 23.3, y0 = 24.1;            // galaxy centre, 0-based pixel
  double n = 1.0;
  double re_arcsec = 2.0;
  double q = 0.6;
  double pa_deg = 30.0;
  double total_flux = 2.0e5;
  double sky = 100.0;
  double noise = 1.0;
  double psf_fwhm_arcsec = 1.0;
  std::vector<TestStar> stars;
  int oversample = 5;
  unsigned seed = 1;
};

// d(east, north)/d(x, y) in arcsec/pixel.
inline Eigen::Matrix2d test_jacobian(const TestGalaxy& g) {
  const double r = g.rotation_deg * std::numbers::pi / 180.0, s = g.pixel_arcsec;
  const double sy = g.pixel_y_arcsec > 0 ? g.pixel_y_arcsec : s;
  Eigen::Matrix2d j;
  const double px = g.flip ? 1.0 : -1.0;  // +x towards west in the usual parity
  j << px * s * std::cos(r), sy * std::sin(r), -px * s * std::sin(r), sy * std::cos(r);
  return j;
}

inline CelestialWcs test_wcs(const TestGalaxy& g) {
  const Eigen::Matrix2d j = test_jacobian(g) / 3600.0;
  const double cd[2][2] = {{j(0, 0), j(0, 1)}, {j(1, 0), j(1, 1)}};
  return CelestialWcs::from_cd("TAN", {0.5 * (g.nx - 1), 0.5 * (g.ny - 1)}, {g.ra_deg, g.dec_deg},
                               cd);
}

// Noise-free galaxy (no sky, no stars) in counts per pixel.
inline std::vector<double> test_galaxy_model(const TestGalaxy& g) {
  const int k = g.oversample, fx = g.nx * k, fy = g.ny * k;
  const Eigen::Matrix2d jac = test_jacobian(g);
  const double bn = photometry::sersic_bn(g.n);
  const double area = std::abs(jac.determinant());
  const double ie = g.total_flux /
                    (2.0 * std::numbers::pi * g.n * g.q * g.re_arcsec * g.re_arcsec *
                     std::exp(bn - 2.0 * g.n * std::log(bn) + std::lgamma(2.0 * g.n)));
  const double th = g.pa_deg * std::numbers::pi / 180.0;
  std::vector<double> fine(static_cast<std::size_t>(fx) * fy);
  for (int j = 0; j < fy; ++j)
    for (int i = 0; i < fx; ++i) {
      const double x = (i + 0.5) / k - 0.5, y = (j + 0.5) / k - 0.5;  // pixel coordinates
      const Eigen::Vector2d d = jac * Eigen::Vector2d(x - g.x0, y - g.y0);
      const double u = d(0) * std::sin(th) + d(1) * std::cos(th);
      const double v = d(0) * std::cos(th) - d(1) * std::sin(th);
      const double r = std::sqrt(u * u + v * v / (g.q * g.q));
      fine[i + static_cast<std::size_t>(fx) * j] =
          ie * std::exp(-bn * (std::pow(r / g.re_arcsec, 1.0 / g.n) - 1.0)) * area / (k * k);
    }
  // PSF on the fine grid.
  const double sig_arcsec = g.psf_fwhm_arcsec / (2.0 * std::sqrt(2.0 * std::numbers::ln2));
  auto kernel = [&](double sigma) {
    const int hh = static_cast<int>(std::ceil(5.0 * sigma));
    std::vector<double> kk(2 * hh + 1);
    double ks = 0;
    for (int t = -hh; t <= hh; ++t) ks += kk[t + hh] = std::exp(-0.5 * t * t / (sigma * sigma));
    for (double& v : kk) v /= ks;
    return kk;
  };
  const std::vector<double> kerx = kernel(sig_arcsec / g.pixel_arcsec * k);
  const std::vector<double> kery =
      kernel(sig_arcsec / (g.pixel_y_arcsec > 0 ? g.pixel_y_arcsec : g.pixel_arcsec) * k);
  const int hx = static_cast<int>(kerx.size() / 2), hy = static_cast<int>(kery.size() / 2);
  std::vector<double> tmp(fine.size(), 0.0), conv(fine.size(), 0.0);
  for (int j = 0; j < fy; ++j)
    for (int i = 0; i < fx; ++i) {
      double a = 0;
      for (int t = -hx; t <= hx; ++t) {
        const int ii = i - t;
        if (ii >= 0 && ii < fx) a += kerx[t + hx] * fine[ii + static_cast<std::size_t>(fx) * j];
      }
      tmp[i + static_cast<std::size_t>(fx) * j] = a;
    }
  for (int j = 0; j < fy; ++j)
    for (int i = 0; i < fx; ++i) {
      double a = 0;
      for (int t = -hy; t <= hy; ++t) {
        const int jj = j - t;
        if (jj >= 0 && jj < fy) a += kery[t + hy] * tmp[i + static_cast<std::size_t>(fx) * jj];
      }
      conv[i + static_cast<std::size_t>(fx) * j] = a;
    }
  std::vector<double> out(static_cast<std::size_t>(g.nx) * g.ny, 0.0);
  for (int j = 0; j < fy; ++j)
    for (int i = 0; i < fx; ++i)
      out[(i / k) + static_cast<std::size_t>(g.nx) * (j / k)] += conv[i + static_cast<std::size_t>(fx) * j];
  return out;
}

// The full image: galaxy + stars + sky + Gaussian noise (seeded).
inline Image make_test_image(const TestGalaxy& g, const std::vector<double>* model = nullptr,
                             unsigned seed_override = 0) {
  Image im;
  im.nx = g.nx;
  im.ny = g.ny;
  im.wcs = test_wcs(g);
  im.unit = "adu";
  im.data = model ? *model : test_galaxy_model(g);
  const double sa = g.psf_fwhm_arcsec / (2.0 * std::sqrt(2.0 * std::numbers::ln2));
  const double spx = sa / g.pixel_arcsec, spy = sa / (g.pixel_y_arcsec > 0 ? g.pixel_y_arcsec : g.pixel_arcsec);
  for (const auto& s : g.stars)
    for (int y = 0; y < g.ny; ++y)
      for (int x = 0; x < g.nx; ++x)
        im.at(x, y) += s.flux / (2 * std::numbers::pi * spx * spy) *
                       std::exp(-0.5 * ((x - s.x) * (x - s.x) / (spx * spx) + (y - s.y) * (y - s.y) / (spy * spy)));
  std::mt19937_64 rng(seed_override ? seed_override : g.seed);
  std::normal_distribution<double> nd(0.0, 1.0);
  for (double& v : im.data) v += g.sky + (g.noise > 0 ? g.noise * nd(rng) : 0.0);
  return im;
}

inline WorldCoord test_truth(const TestGalaxy& g, const Image& im) {
  return im.wcs.pixel_to_world({g.x0, g.y0});
}

}  // namespace fulcrum::test
