// The photometric peak: the brightest point of the galaxy after smoothing
// the image to the seeing, refined to sub-pixel precision.
//
// The sky-subtracted, masked image is convolved with a circular Gaussian of
// the PSF's FWHM (the matched filter for the PSF-blurred nucleus; masked
// pixels are left out by normalised convolution). The brightest smoothed
// pixel S_max of the galaxy's segment is found; the sub-pixel position is the
// first moment of the "cap" above the level t = cap_fraction * S_max:
//   x_peak = sum_i w_i x_i / sum_i w_i,   w_i = S_i - t,
// over the 4-connected pixels with S_i > t that reach the brightest pixel.
// Because w goes continuously to zero at the cap's edge, the pixel sum
// approximates the integral of a smooth window and the estimate is free of
// the pull towards the central pixel that a fixed 3x3 box has; for a
// symmetric peak it is unbiased.
//
// The estimator has no covariance of its own: its uncertainty comes from the
// noise bootstrap (bootstrap.hpp). Positions are 0-based pixels.
#pragma once

#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

struct PeakOptions {
  double cap_fraction = 0.5;
};

// `data`: sky-subtracted image, NaN where unusable (p.data or a noisy copy).
// `weights_out` (optional) receives the cap weights w_i (0 elsewhere).
PixelEstimate estimate_peak(const PreparedImage& p, const std::vector<double>& data,
                            const PeakOptions& options = {},
                            std::vector<double>* weights_out = nullptr);

}  // namespace fulcrum::photometry
