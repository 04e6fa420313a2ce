// The systematic term of the dynamical centre: how far independent centre
// methods on the same velocity map disagree beyond what their statistical
// errors allow (docs/uncertainties.md §4).
//
// For the adopted centre c0 (covariance C0, the residual sandwich of
// centre_covariance.hpp) and another method's centre cm (covariance Cm) on the
// same data, the difference d = cm - c0 has, if both are unbiased and c0 is
// the more efficient, Var(d) = Cm - C0 (Hausman 1978, Econometrica 46, 1251).
// Whatever d shows beyond that is systematic: along u = d/|d| the excess
//     v_m = max(0, |d|^2 - u^T (Cm - C0) u)      (negative Cm - C0 -> 0)
// and the method's term is v_m u u^T. The method-spread term is the mean of
// these over the methods available (the harmonic centre, the weighted mean of
// the ring-by-ring centres). It is added to C0 in quadrature. With two
// methods whose systematic errors are independent, E|d|^2 counts both, so
// the term errs on the side of larger errors.
//
// Units: arcsec, (east, north), arcsec^2.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "fulcrum/kinematics/ring_fit.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::kinematics {

struct MethodCentre {
  std::string method;               // "harmonic", "ring-by-ring"
  SkyOffset centre;                 // arcsec from the reference
  Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();
  double excess_arcsec2 = 0.0;      // v_m (filled by method_spread)
};

// Inverse-variance weighted mean of the ring-by-ring centres (per axis),
// over rings that are ok; nullopt with fewer than `min_rings`.
std::optional<MethodCentre> ring_by_ring_centre(const std::vector<RingFit>& rings, int min_rings = 3);

// The method-spread covariance (2x2, arcsec^2) of `adopted` against
// `others`; fills each one's excess.
Eigen::Matrix2d method_spread(SkyOffset adopted, const Eigen::Matrix2d& adopted_covariance,
                              std::vector<MethodCentre>& others);

}  // namespace fulcrum::kinematics
