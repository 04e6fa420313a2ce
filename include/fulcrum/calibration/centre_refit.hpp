// One re-fit of a mock of the fitted disc: where the kinematic fit of a
// noisy mock velocity map put the centre relative to the truth, and the
// covariance it claimed.
//
// The re-fits of bootstrap_centre_covariance (calibration.hpp) are kept and
// shared with the matched-mock calibration of the same galaxy: the mocks'
// line noise and velocity noise are drawn independently, so a re-fitted
// centre can be paired with any mock line map. A calibration mock then adopts
// one of these outcomes (truth + offset, covariance x the galaxy's scale)
// instead of re-fitting its own velocity map, which costs about 8 times the
// rest of a mock (docs/calibration.md, docs/performance.md).
//
// Units: arcsec (east, north), arcsec^2, degrees.
#pragma once

#include <Eigen/Core>
#include <cmath>
#include <string>

#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::calibration {

struct CentreRefit {
  bool ok = false;
  std::string failure;               // why the re-fit gave no centre (when !ok)
  SkyOffset offset;                  // fitted minus true centre (arcsec east, north)
  Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();  // the re-fit's own, unscaled (arcsec^2)
  double m2 = std::nan("");          // d^T C^-1 d of the truth under `covariance`
  double pa_pull2 = std::nan("");    // ((fit - truth) / error)^2 of the PA (NaN: no error)
  double inc_pull2 = std::nan("");   // the same for the inclination
};

}  // namespace fulcrum::calibration
