// The correlation of a fit's residuals between neighbouring pixels, measured
// on the pixel grid: the "measured extra correlation" of the one noise model
// (imaging/noise_correlation.hpp, docs/uncertainties.md §2).
//
// The normalised residuals z_i = (v_i - model_i) / sigma_i of the used
// samples (mean removed) give, for every pixel lag D within `max_lag_beams`
// beam FWHM, the measured correlation
//     rho_hat(D) = sum_i z_i z_{i+D} / (n_D var(z)).
// The correlation is then modelled as the beam's Gaussian shape widened by a
// factor s, rho(d) = exp(-1/2 d^T (s^2 B)^-1 d) (B the beam's covariance), and
// s is fitted to rho_hat by least squares weighted by the number of pairs
// n_D. Noise white before the beam gives s = sqrt 2; an interferometric
// image s = 1; unmodelled structure in the velocity field (streaming, warps,
// a model that does not fit) gives larger s. The adopted s is never below
// `min_scale`, sqrt 2 by default (the noise model of
// imaging/noise_correlation.hpp): the residuals of a fit are the noise minus
// what the model absorbed, and the model absorbs the smooth, long-lag part,
// so on residuals the correlation of beam-smoothed noise measures about 1.1-
// 1.3 instead of sqrt 2 (docs/uncertainties.md §2). Only a wider measured
// correlation is believed.
//
// Units: arcsec on (east, north); lags are whole pixels, turned into sky lags
// through the grid's local Jacobian d(east, north)/d(x, y) estimated from the
// samples themselves (no assumption that north is up).
#pragma once

#include <Eigen/Core>
#include <optional>
#include <vector>

#include "fulcrum/imaging/noise_correlation.hpp"
#include "fulcrum/kinematics/sample_grid.hpp"
#include "fulcrum/kinematics/velocity_samples.hpp"

namespace fulcrum::kinematics {

struct ResidualCorrelationOptions {
  double max_lag_beams = 1.5;  // lags measured out to this many beam FWHM
  double min_scale = 1.4142135623730951;  // s is never below this (sqrt 2: the noise model)
  double max_scale = 8.0;
};

struct ResidualCorrelation {
  bool measured = false;        // false: no beam or too few pairs (then s = min_scale... see reason)
  std::string reason;
  double fitted_scale = 0.0;    // s fitted to rho_hat
  double scale = 1.0;           // adopted: max(min_scale, fitted)
  int lags = 0;                 // lags used in the fit
  long pairs = 0;               // pixel pairs summed
  NoiseCorrelation correlation; // the adopted correlation, arcsec
};

// Measure the correlation of `residual_over_sigma` (one value per sample,
// used where `use` is set) with `beam`.
ResidualCorrelation measure_residual_correlation(const SampleGrid& grid,
                                                 const std::vector<double>& residual_over_sigma,
                                                 const std::vector<unsigned char>& use,
                                                 const Beam& beam,
                                                 const ResidualCorrelationOptions& options = {});

// The correlation of `beam` widened by `scale` (sigma_corr = scale * sigma_beam).
NoiseCorrelation scaled_beam_correlation(const Beam& beam, double scale);

}  // namespace fulcrum::kinematics
