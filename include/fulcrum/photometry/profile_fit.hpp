// The profile-fit centre: a 2-D elliptical Sérsic profile convolved with a
// Gaussian PSF, plus a constant background, fitted to the image with Ceres.
//
// Model, in counts per pixel at pixel i (0-based centre x_i):
//   m_i = B + [ PSF * S ](x_i),
//   S(x) = I_e exp(-b_n [ (r(x) / r_e)^(1/n) - 1 ])         (Sérsic 1963)
//   r(x)^2 = u^2 + (v / q)^2,  (u, v) = the sky offset J (x - x0) projected
//            on the major axis (PA theta) and the minor axis (PA theta + 90)
// with b_n exact from P(2n, b_n) = 1/2 (sersic_profile.hpp). The shape is
// parameterised by the ellipticity vector
//   e1 = eps cos 2theta,  e2 = eps sin 2theta,  eps = (1 - q) / (1 + q),
// which is defined through q = 1 (where theta is not), so the covariance of
// the centre stays well defined for round galaxies. With r_e along the major
// axis the model is continuous but not smooth in (e1, e2) at eps = 0 (to
// first order the quadratic form is I (1 + 2|e|) - 2 [e1 e2; e2 -e1]); the
// kink is in the shape only and leaves the centre derivatives intact.
//
// Rendering: S is averaged over sub-pixels (9x9 within 2 pixels of the
// starting centre, 5x5 within 4, 3x3 within 8, the pixel centre beyond; the
// scheme is fixed
// during the fit so the model is smooth in the parameters), then convolved
// with the PSF sampled on the pixel grid (its pixel covariance from J, so any
// grid works; separable when the covariance is diagonal). The fit box is the
// galaxy's neighbourhood; the model is rendered on the box plus a 4-sigma PSF
// margin so that every fitted pixel sees the whole kernel.
//
// Fit: residuals (m_i - d_i) / sigma over the usable pixels of the box,
// Levenberg-Marquardt (Ceres) with analytic derivatives: the derivatives of
// the Sersic profile with respect to each parameter are averaged over the
// same sub-samples and convolved with the same PSF as the model itself (the
// formulas are beside the code; checked against central differences in the
// tests). The parameter vector is (x0, y0, ln I_e, ln r_e[arcsec], n, e1, e2, B).
//
// Uncertainty: the covariance of the parameters at the minimum,
// (J_r^T J_r)^-1 for the whitened residuals (ceres::Covariance, dense SVD),
// multiplied by the reduced chi-square (the residual variance sets the noise
// scale, so a sky rms misjudged by the clipping or a model mismatch does not
// mislead the error; common practice for least squares with estimated
// noise), and carried to the sky as
// C_sky = J C_pix J^T (arcsec^2, east-north).
#pragma once

#include <array>
#include <optional>
#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

struct ProfileFitOptions {
  double fit_radius_arcsec = 0.0;  // half size of the fitted box; <= 0: 2.25 segment radii
  double n_min = 0.3;
  double n_max = 10.0;
  double n_start = 2.0;
  int max_iterations = 200;
  bool scale_covariance_by_chi2 = true;
  std::optional<PixelCoord> start;  // default: the segment's first moment
};

// `data`: sky-subtracted image (NaN unusable); `noise_rms`: per-pixel sigma.
PixelEstimate fit_sersic_profile(const PreparedImage& p, const std::vector<double>& data,
                                 double noise_rms, const ProfileFitOptions& options = {});

// The noise-free model image (counts per pixel, no background) of the
// parameters (x0, y0, ln I_e, ln r_e, n, e1, e2) rendered on the whole grid
// of `p` with the same scheme the fit uses (for tests and residual maps).
std::vector<double> render_sersic_model(const PreparedImage& p, const double params[7],
                                        PixelCoord subsample_centre);

// The analytic derivatives of that model image with respect to each of the
// 7 parameters, as the fit uses them (for tests).
std::array<std::vector<double>, 7> render_sersic_derivatives(const PreparedImage& p, const double params[7],
                                                             PixelCoord subsample_centre);

}  // namespace fulcrum::photometry
