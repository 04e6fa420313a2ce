// The isophote centre: the centre of the ellipse that follows the galaxy's
// outer isophote at a chosen surface-brightness level, found by harmonic
// ellipse fitting in the manner of Jedrzejewski (1987, MNRAS 226, 747).
//
// An ellipse (centre c, semi-major axis a, ellipticity eps = 1 - q, major-axis
// PA theta) is sampled at eccentric anomalies E_k: the sky offset
//   d(E) = a cos E * u_hat + a (1 - eps) sin E * v_hat,
//   u_hat = (sin theta, cos theta), v_hat = (cos theta, -sin theta)  (east, north)
// is mapped to pixels through J^-1 and the sky-subtracted image is read by
// bilinear interpolation. The samples are fitted by
//   I(E) = I0 + A1 sin E + B1 cos E + A2 sin 2E + B2 cos 2E.
//
// Derivation of the corrections. Let the galaxy's isophotes be ellipses with
// intensity I(r), r the elliptical radius, and let our ellipse be displaced
// from the true one by (du, dv) along (u_hat, v_hat). A point of our ellipse
// then has r ~ a + du cos E + dv sin E / (1 - eps), so
//   I(E) ~ I(a) + I'(a) (du cos E + dv sin E / (1 - eps)),
// i.e. B1 = I' du, A1 = I' dv / (1 - eps): the centre moves by
//   du = -B1 / I',   dv = -A1 (1 - eps) / I'
// (Jedrzejewski 1987, eqs. for the centre). An error in the axis ratio,
// (1 - eps)/(1 - eps*) = 1 + delta, gives r ~ a (1 + delta sin^2 E), hence
// B2 = -I' a delta / 2 and
//   d eps = -2 B2 (1 - eps) / (a I').
// A misalignment phi gives r ~ a (1 + (phi/2) sin 2E (1/q - q)), hence
//   d theta = -2 A2 q / (a I' (1 - q^2))        (q = 1 - eps).
// Finally the ellipse is moved to the chosen level L: da = (L - I0) / I'.
// I' = dI0/da is measured from ellipses at a (1 -+ delta). All corrections
// are applied together each iteration until the centre moves by less than
// `tolerance_pixels`.
//
// The level L (image units above the sky) is `level` when given; otherwise
// the mean intensity on the first-guess ellipse at `level_radius_factor`
// half-light radii, raised to `min_level_sigma` times the pixel noise if it
// would fall below (an outer but well detected isophote).
//
// No covariance of its own (samples along the ellipse are correlated by the
// PSF and the interpolation): the uncertainty is the noise bootstrap.
#pragma once

#include <optional>
#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

// An ellipse on the image: centre (0-based pixels), semi-major axis
// (arcsec), ellipticity 1 - b/a and the major axis' PA (rad, north through
// east).
struct IsophoteEllipse {
  PixelCoord centre;
  double semi_major_arcsec = 1.0;
  double ellipticity = 0.0;
  double theta_rad = 0.0;
};

struct IsophoteOptions {
  std::optional<double> level;       // image units above the sky
  double level_radius_factor = 2.0;  // in half-light radii, when level is not given
  double min_level_sigma = 5.0;
  int max_iterations = 200;
  double tolerance_pixels = 1e-6;
  double min_valid_fraction = 0.5;   // of the samples along the ellipse
  std::optional<PixelCoord> start;   // default: the segment's first moment
  // Warm start (the bootstrap's draws about a point estimate): iterate from
  // this ellipse instead of the first guess brought to the level by
  // bisection. `level` should then be set too.
  std::optional<IsophoteEllipse> start_ellipse;
};

// The converged ellipse of a successful estimate (from its details).
IsophoteEllipse isophote_ellipse(const PixelEstimate& e);

// The isophote level that would be used for `p` (image units above the sky).
double isophote_level(const PreparedImage& p, const std::vector<double>& data, double noise_rms,
                      const IsophoteOptions& options);

PixelEstimate estimate_isophote_centre(const PreparedImage& p, const std::vector<double>& data,
                                       double noise_rms, const IsophoteOptions& options = {});

}  // namespace fulcrum::photometry
