// Two distinct kinematic solutions that fit almost equally well, and how that
// enters the centre uncertainty.
//
// After the multi-start scouts (multi_start.hpp), the best start and the best
// distinct one are both fitted on the full map. The fits' own chi^2 use
// different pixels (the rings and the minor-axis wedge follow the geometry;
// a wrong geometry can drop the pixels that disagree with it), so both
// models are judged on one common set: every sample of the footprint, with
// weight 1/sigma^2 (common_chi2; beyond the outer ring the outer rotation
// speed). Then
//
//     dchi2 = (C_2 - C_1) / (C_1 / (N - p_1)) / eta,
//
// the difference of the common chi^2, scaled by the best model's reduced
// common chi^2 (the pixel errors as the residuals show them) and divided by
// eta, the correlated-pixel factor of covariance_scaling.hpp (a beam holds
// ~eta/2 pixels of one measurement).
// The solution is "ambiguous" when dchi2 < `threshold` (4 by default: the
// chi^2 step of a 2-sigma interval for one parameter; our choice).
//
// An ambiguous solution keeps the better fit and widens its centre
// covariance by the outer product of the separation d between the two
// centres, C' = C + d d^T: the other centre then lies 1 sigma away along d.
// This is the one place where ambiguity enters the centre uncertainty.
//
// Units: arcsec (east, north), arcsec^2, degrees, km/s.
#pragma once

#include <Eigen/Core>
#include <string>

#include "fulcrum/kinematics/global_fit.hpp"

namespace fulcrum::kinematics {

struct SolutionAmbiguity {
  bool checked = false;          // a distinct second solution was fitted
  bool ambiguous = false;
  double delta_chi2 = 0.0;       // dchi2 above (second minus best)
  double threshold = 4.0;
  DiscGeometry second;           // the other solution
  double centre_separation_arcsec = 0.0;
  std::string note;              // plain sentence for the summary
};

// sum ((v - model) / sigma)^2 over every sample (the common set above).
double common_chi2(const GlobalFitSummary& fit, const VelocitySamples& samples);

// dchi2 above from the two common chi^2 values, N samples, p_1 parameters.
double scaled_delta_chi2(double chi2_best, double chi2_other, int n, int parameters,
                         double correlation_factor);

// C + d d^T with d = b - a (east, north arcsec).
Eigen::Matrix2d add_ambiguity_spread(const Eigen::Matrix2d& covariance, SkyOffset a, SkyOffset b);

}  // namespace fulcrum::kinematics
