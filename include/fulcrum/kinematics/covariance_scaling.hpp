// How far the formal least-squares covariance must be inflated for a
// velocity map whose pixels are neither independent nor of known error.
//
// A least-squares fit to N pixels returns C = (J^T W J)^-1, which is the
// parameter covariance only if the pixel errors are the weights' sigmas and
// the pixels are independent. Two corrections (docs/kinematics.md):
//
//  1. Reduced chi^2: C is multiplied by chi^2 / (N - p), so that the pixel
//     error is the one the residuals show (exact when there is no error map,
//     a check of the map when there is one). Common practice.
//  2. Correlated pixels: a map made with a beam has neighbouring pixels
//     sharing noise. For noise that is white before the beam B (Gaussian,
//     sigma_b per axis), the pixel-noise correlation is the autocorrelation of
//     B, a Gaussian with sigma^2 = 2 sigma_b^2 per axis, whose integral is
//         A_corr = 4 pi sigma_bmaj sigma_bmin = 2 Omega_beam.
//     For an estimator whose weights vary slowly on the beam scale (a centre
//     or a geometry fitted over the whole disc) the variance grows by the sum
//     of the correlation over neighbours,
//         eta = A_corr / A_pixel = 2 * (pixels per beam).
//     With a 0.25" grid and a 1.2" beam, eta = 52: the map holds ~50 times
//     fewer independent points than pixels. eta is an option: set it to the
//     plain pixels-per-beam count, or to 1 for independent pixels.
#pragma once

#include <optional>

#include "fulcrum/io/beam.hpp"

namespace fulcrum::kinematics {

struct CovarianceScaling {
  double pixels_per_beam = 1.0;     // Omega_beam / A_pixel (1 without a beam)
  double correlation_factor = 1.0;  // eta, multiplies the covariance
  double reduced_chi2 = 1.0;        // chi^2 / (N - p)
  // Total factor applied to the formal covariance.
  double factor() const { return correlation_factor * reduced_chi2; }
};

// eta for a map with `beam` and pixels of `pixel_area_arcsec2`: the option
// value when it is > 0, otherwise 2 * pixels-per-beam (at least 1); 1 when no
// beam is known.
double correlation_factor(const std::optional<Beam>& beam, double pixel_area_arcsec2,
                          double option_value);

// The number of pixels in one beam (Omega_beam / A_pixel), 1 without a beam.
double pixels_per_beam(const std::optional<Beam>& beam, double pixel_area_arcsec2);

}  // namespace fulcrum::kinematics
