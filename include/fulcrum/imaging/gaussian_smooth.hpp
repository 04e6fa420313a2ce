// Convolution of a map with an elliptical Gaussian defined on the sky.
//
// The kernel is given as a Beam (FWHM axes in arcsec, PA north through east)
// and turned into a pixel-space covariance through the grid's Jacobian J =
// d(east, north)/d(x, y): C_pix = J^-1 C_sky J^-T. This way a rotated or
// flipped grid is smoothed correctly. The kernel is sampled at pixel centres,
// truncated to the box of +-`truncate_sigma` (4 by default) standard
// deviations along each pixel axis and, within it, to the ellipse
// q = d^T C^-1 d <= 2 truncate_sigma^2 (which only trims the box corners),
// and normalised to unit sum.
//
// NaN pixels are treated as missing: with `normalise_missing` the result is
// the normalised convolution (sum of w*f over valid / sum of w over valid);
// otherwise missing pixels count as zero. Output pixels that were NaN on
// input stay NaN unless `fill_missing` is set.
#pragma once

#include <Eigen/Core>
#include <vector>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/io/image.hpp"

namespace fulcrum {

struct SmoothOptions {
  bool normalise_missing = true;
  bool fill_missing = false;
  double truncate_sigma = 4.0;  // kernel radius in units of its sigma
  // When the pixel covariance has no x-y term (an axis-aligned kernel, e.g.
  // a round one on square pixels, rotated or not; a term below 1e-14 of the
  // trace, which rounding leaves, counts as none): sum along x on every row, then
  // along y, (2hx + 1) + (2hy + 1) taps per pixel instead of (2hx + 1)(2hy +
  // 1). The same result as the direct sum to round-off (not bit for bit:
  // another order of additions). A rotated kernel always takes the direct
  // sum.
  bool separable = false;
};

// A Gaussian sampled at integer pixel lags (dx, dy) in [-hx, hx] x [-hy, hy]
// (dx fastest), zero beyond the truncation (see above), unit sum.
struct PixelKernel {
  int hx = 0, hy = 0;
  std::vector<double> weight;
  double at(int dx, int dy) const {
    return weight[static_cast<std::size_t>(dx + hx) + static_cast<std::size_t>(2 * hx + 1) * (dy + hy)];
  }
};

// The kernel of a Gaussian with pixel covariance `cov` (pixel^2).
PixelKernel gaussian_kernel(const Eigen::Matrix2d& cov, double truncate_sigma = 4.0);

// Pixel-space covariance (pixel^2) of a Gaussian with sky FWHMs `kernel` on a
// grid with Jacobian `jac` (arcsec/pixel).
Eigen::Matrix2d pixel_covariance(const Beam& kernel, const Eigen::Matrix2d& jac);

// Convolve `data` (nx*ny, x fastest) with a Gaussian of pixel covariance `cov`.
std::vector<double> convolve_gaussian(const std::vector<double>& data, int nx, int ny,
                                      const Eigen::Matrix2d& cov, const SmoothOptions& opt = {});

// Smooth an image with a sky Gaussian kernel (WCS, unit and beam carried over;
// the beam is not changed: callers set the new one).
Image smooth_image(const Image& in, const Beam& kernel, const SmoothOptions& opt = {});

// The kernel that takes `from` to `to` (Gaussian deconvolution of beams):
// throws InputError when `to` is not larger than `from` in every direction.
Beam kernel_between(const Beam& from, const Beam& to);

}  // namespace fulcrum
