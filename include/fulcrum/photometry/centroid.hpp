// The light-weighted centroid: first moments of the sky-subtracted light
// inside a circular aperture on the sky, iterated until the aperture is
// centred on its own centroid.
//
// With aperture A(c) = { pixels i : |J (x_i - c)| <= R } (J the Jacobian,
// so the aperture is a circle of radius R arcsec on the sky whatever the
// grid), one step is
//   c' = sum_{i in A(c)} f_i x_i / sum_{i in A(c)} f_i
// and the estimate is the fixed point c = c'. Pixel values are not clipped
// at zero, so sky noise adds no bias. Masked pixels are handled
// symmetrically: a pixel is used only if its point reflection about c (the
// nearest pixel to 2c - x_i) is usable too, so a star mask or the image edge
// on one side does not pull the centroid to the other. The fixed point of a
// discrete aperture can cycle between two pixel sets; the iteration stops
// after `max_iterations` and says so.
//
// Covariance in closed form (no bootstrap): linear propagation of white sky
// noise of rms sigma (the image's background rms) through c, with the
// aperture's feedback (it moves with c, so light crossing its edge moves c
// further): C = (I - D)^-1 C0 (I - D)^-T, C0 = sigma^2 sum_i (x_i - c)(x_i -
// c)^T / F^2, D the edge term derived in centroid.cpp. Like the bootstrap
// it replaces, it counts sky noise only (docs/photometry.md). Positions are
// 0-based pixels; the covariance is in pixel^2.
#pragma once

#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

struct CentroidOptions {
  double aperture_radius_arcsec = 0.0;  // <= 0: 1.5 times the segment radius
  int max_iterations = 100;
  double tolerance_pixels = 1e-9;
  bool symmetric_masking = true;
};

// The aperture radius actually used for `p` (arcsec).
double centroid_aperture_radius(const PreparedImage& p, const CentroidOptions& options);

// `weights_out` (optional) receives f_i on the final aperture's pixels (0
// elsewhere): the reported centre is exactly their first moment. The
// estimate carries `cov_pixels` when the background rms is > 0.
PixelEstimate estimate_centroid(const PreparedImage& p, const std::vector<double>& data,
                                const CentroidOptions& options = {},
                                std::vector<double>* weights_out = nullptr);

}  // namespace fulcrum::photometry
