// The error budget of the dynamical centre: the residual-based covariance of
// the global fit (centre_covariance.hpp) plus the spread between independent
// centre methods (method_spread.hpp), with each term reported so that a
// reader sees which one dominates (docs/uncertainties.md §3-4).
//
//   total centre covariance = statistical + model_misfit + method_spread
//
// statistical    the stated velocity errors under the noise model (noise white
//                before the beam), propagated through the fit (sandwich);
// model_misfit   what the residuals add: reduced chi^2 above 1 and a residual
//                correlation wider than the beam's;
// method_spread  the disagreement of the harmonic and ring-by-ring centres
//                beyond their statistical errors.
// PA, inclination and vsys errors are the sandwich ones (statistical +
// model_misfit). Terms are 2x2 on (east, north) in arcsec^2; the JSON gives
// each as its 1-sigma semi-major axis in arcsec and as the matrix.
#pragma once

#include <Eigen/Core>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/kinematics/centre_covariance.hpp"
#include "fulcrum/kinematics/method_spread.hpp"

namespace fulcrum::kinematics {

struct CentreErrorTerms {
  bool applied = false;             // false: the formal covariance was kept (reason says why)
  std::string reason;
  Eigen::Matrix2d formal = Eigen::Matrix2d::Zero();  // the scaled formal covariance it replaces
  Eigen::Matrix2d statistical = Eigen::Matrix2d::Zero();
  Eigen::Matrix2d model_misfit = Eigen::Matrix2d::Zero();
  Eigen::Matrix2d method_spread = Eigen::Matrix2d::Zero();
  Eigen::Matrix2d total = Eigen::Matrix2d::Zero();
  Matrix5d geometry = Matrix5d::Zero();  // (ce, cn, pa, inc, vsys); centre block = total
  double residual_scale2 = 1.0, residual_scale2_measured = 1.0;
  ResidualCorrelation correlation;
  double model_correlation_scale = 1.0;
  SkyOffset adopted;                // the global fit's centre (arcsec from the reference)
  double effective_dof = 0.0;       // of the residual scale (centre_covariance.hpp)
  double expected_residual_fraction = 0.0;  // effective_dof / pixels used
  bool smeared_jacobian = false;    // the sandwich's bread allows for the beam-smearing correction
  std::vector<MethodCentre> methods;
  std::string dominant;             // "statistical", "model_misfit" or "method_spread"
};

// The terms for the global fit `fit` to `samples`, with the other methods'
// centres (the harmonic one when found; the ring-by-ring fits).
CentreErrorTerms centre_error_terms(const VelocitySamples& samples, const GlobalFitSummary& fit,
                                    const GeometryCovarianceOptions& options,
                                    const std::optional<MethodCentre>& harmonic,
                                    const std::vector<RingFit>& rings);

// 1-sigma semi-major axis of a 2x2 covariance (arcsec).
double semi_major_arcsec(const Eigen::Matrix2d& c);

nlohmann::json to_json(const CentreErrorTerms& t);

}  // namespace fulcrum::kinematics
