// A least-squares fit of one point source: a circular Gaussian on the sky
// on top of a local background (a constant, or a plane).
//
//   m(x, y) = B + gx (x - x0) + gy (y - y0) + A exp(-|d|^2 / (2 s^2)),
//   d = J (x - x0, y - y0)  (east, north arcsec; J = d(east, north)/d(x, y))
//
// over the usable pixels within `radius_pixels` of the starting position
// (pixel centres, 0-based; the Gaussian is sampled at pixel centres, not
// integrated over the pixel -- adequate for a PSF of >= 2 pixels FWHM). The
// Gaussian is circular on the sky whatever the grid, so a rotated, flipped
// or rectangular-pixel grid is handled through J. Parameters: centre (x0,
// y0) in pixels, amplitude A and background B in image units, sigma s in
// arcsec (FWHM = 2 sqrt(2 ln 2) s), gradients gx, gy in image units per
// pixel (held at zero unless `fit_plane`). Residuals are weighted by
// 1 / `noise_rms`; Levenberg-Marquardt (Ceres, automatic derivatives); the
// FWHM error is from the fit covariance scaled by the reduced chi^2 when
// that exceeds 1.
#pragma once

#include <Eigen/Dense>
#include <string>
#include <vector>

#include "fulcrum/io/wcs.hpp"

namespace fulcrum::photometry {

struct PointSourceFitOptions {
  double radius_pixels = 6.0;   // fit disc about the start position
  double start_fwhm_arcsec = 1.0;
  bool fit_plane = false;       // background: plane instead of constant
  int max_iterations = 100;
};

struct PointSourceFit {
  bool ok = false;
  std::string reason;           // when !ok
  PixelCoord centre;            // 0-based
  double amplitude = 0.0;       // image units
  double background = 0.0;      // at the centre, image units
  double fwhm_arcsec = 0.0;
  double fwhm_err_arcsec = 0.0;
  double chi2_reduced = 0.0;
  int pixels = 0;               // used in the fit
};

// `data` nx*ny, x fastest, NaN = unusable; `start` the 0-based start pixel.
PointSourceFit fit_point_source(const std::vector<double>& data, int nx, int ny,
                                const Eigen::Matrix2d& jacobian, PixelCoord start,
                                double noise_rms, const PointSourceFitOptions& options);

}  // namespace fulcrum::photometry
