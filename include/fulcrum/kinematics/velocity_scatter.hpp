// The velocity scatter that the error map does not describe, and the pixel
// errors that include it.
//
// A per-pixel velocity error from a line fit says how well the line centroid
// is measured, not how far the gas may move from circular rotation. On real
// discs the residuals from a tilted-ring model are dominated by non-circular
// motions (streaming in arms and bars, turbulence, warps): reduced chi^2 of
// 5-30 where the error map is right. Weighting pixels by 1/sigma_i^2 then
// lets the brightest pixels, with the smallest formal errors but the same
// non-circular motions, decide the geometry. The usual remedy adds an
// intrinsic term in quadrature (common practice in rotation-curve and
// scaling-relation fits, e.g. the "velocity dispersion floor"; here the
// term is measured, not assumed):
//
//     sigma_i'^2 = sigma_i^2 + s^2,
//
// with s the solution of
//
//     sum_i w_i r_i^2 / (sigma_i^2 + s^2) = (sum_i w_i) (n - p) / n,
//
// over the pixels the global fit used (r_i the residual, w_i = |cos theta|^k
// the geometric weight, n pixels, p parameters): the weighted reduced chi^2
// of the residuals with the inflated errors is one. The left side falls
// monotonically with s^2, so s is found by bisection; when the plain
// reduced chi^2 is already at most one, s = 0. With s = 0 the errors are
// unchanged, so mocks whose error maps are right keep their weights.
//
// Units: km/s.
#pragma once

#include <string>

#include "fulcrum/kinematics/global_fit.hpp"
#include "fulcrum/kinematics/velocity_samples.hpp"

namespace fulcrum::kinematics {

struct VelocityScatter {
  bool estimated = false;       // false: no error map, or no fit to measure residuals on
  std::string reason;           // why not estimated
  double scatter_kms = 0.0;     // s
  double reduced_chi2_before = 0.0;  // weighted, with the stated errors
  double median_sigma_kms = 0.0;     // median stated error of the used pixels
  int pixels = 0;
};

// s from the residuals of `fit` to `samples` (the pixels it used).
VelocityScatter measure_velocity_scatter(const VelocitySamples& samples, const GlobalFitSummary& fit,
                                         double weight_power);

// `samples` with sigma_i replaced by sqrt(sigma_i^2 + s^2).
VelocitySamples with_scatter(const VelocitySamples& samples, double scatter_kms);

}  // namespace fulcrum::kinematics
