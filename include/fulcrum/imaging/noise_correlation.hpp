// The one noise model of fulcrum: how a beam correlates the noise of
// neighbouring pixels, in the line map and in the velocity map alike
// (derivation and numerical check: docs/uncertainties.md).
//
// Pixel noise is modelled as a stationary Gaussian field whose correlation
// between two pixels a sky lag d apart is an elliptical Gaussian,
//     rho(d) = exp(-1/2 d^T C^-1 d),
// with C the correlation covariance (arcsec^2, on (east, north)). Two models
// give C from the beam (B = the beam's covariance, sigma = FWHM / 2.3548):
//   smoothed:      noise white before the beam (an image smoothed by the
//                  beam, the moments of a cube whose noise is beam-smoothed):
//                  rho is the beam's autocorrelation, C = 2 B;
//   interferometric: the image noise is correlated like the beam itself
//                  (the noise power follows the uv weights, whose transform
//                  is the beam): C = B.
// A measured correlation (from the residuals of a fit, or blank sky) can
// replace either: make a NoiseCorrelation from its sigmas directly.
//
// What callers need is the correlated-pixel factor eta: the variance of a
// weighted sum sum_i w_i n_i of pixel noise (sigma per pixel) with weights
// that vary slowly over the correlation length is
//     sigma^2 sum_ij w_i w_j rho_ij  ~=  eta sigma^2 sum_i w_i^2,
//     eta = sum_j rho(d_ij) = (integral of rho) / A_pixel
//         = 2 pi sqrt(det C) / A_pixel,
// which is 2 x pixels-per-beam for the smoothed model and 1 x for the
// interferometric one (Omega_beam = 2 pi sigma_maj sigma_min). A least-squares
// fit's covariance, a sum of fluxes, a bootstrap's noise scale all take eta
// from here. Never below 1 (a correlation narrower than a pixel leaves the
// pixels independent).
//
// Units: arcsec, arcsec^2, PA north through east in degrees.
#pragma once

#include <optional>
#include <string>

#include "fulcrum/io/beam.hpp"

namespace fulcrum {

enum class NoiseModel { smoothed, interferometric };
NoiseModel parse_noise_model(const std::string& name);  // throws InputError
std::string noise_model_name(NoiseModel m);

struct NoiseCorrelation {
  double sigma_major_arcsec = 0.0;  // Gaussian sigma of rho along its major axis
  double sigma_minor_arcsec = 0.0;
  double pa_deg = 0.0;              // major axis, north through east

  // rho at a sky lag (east, north) in arcsec; 1 at zero lag.
  double at(double d_east, double d_north) const;
  // Integral of rho over the sky, arcsec^2.
  double area_arcsec2() const;
  // eta = area / pixel area, at least 1.
  double correlated_pixels(double pixel_area_arcsec2) const;
};

// The correlation implied by `beam` under `model`.
NoiseCorrelation noise_correlation_of_beam(const Beam& beam, NoiseModel model = NoiseModel::smoothed);

// eta for a map with `beam` (none: 1) and pixels of `pixel_area_arcsec2`.
double correlated_pixel_factor(const std::optional<Beam>& beam, double pixel_area_arcsec2,
                               NoiseModel model = NoiseModel::smoothed);

}  // namespace fulcrum
