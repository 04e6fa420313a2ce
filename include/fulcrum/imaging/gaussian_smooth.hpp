// Convolution of a map with an elliptical Gaussian defined on the sky.
//
// The kernel is given as a Beam (FWHM axes in arcsec, PA north through east)
// and turned into a pixel-space covariance through the grid's Jacobian J =
// d(east, north)/d(x, y): C_pix = J^-1 C_sky J^-T. This way a rotated or
// flipped grid is smoothed correctly. The kernel is sampled at pixel centres,
// truncated at 4 sigma along its major axis and normalised to unit sum.
//
// NaN pixels are treated as missing: with `normalise_missing` the result is
// the normalised convolution (sum of w*f over valid / sum of w over valid);
// otherwise missing pixels count as zero. Output pixels that were NaN on
// input stay NaN unless `fill_missing` is set.
#pragma once

#include <Eigen/Core>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/io/image.hpp"

namespace fulcrum {

struct SmoothOptions {
  bool normalise_missing = true;
  bool fill_missing = false;
};

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
