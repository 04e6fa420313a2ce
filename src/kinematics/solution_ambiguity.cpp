// Two distinct kinematic solutions (solution_ambiguity.hpp).
#include "fulcrum/kinematics/solution_ambiguity.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace fulcrum::kinematics {

double common_chi2(const GlobalFitSummary& fit, const VelocitySamples& s) {
  double c = 0.0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    const double r = (s.velocity[i] - global_model_velocity(fit, s.east[i], s.north[i])) / s.sigma[i];
    c += r * r;
  }
  return c;
}

double scaled_delta_chi2(double chi2_best, double chi2_other, int n, int parameters,
                         double correlation_factor) {
  if (n <= parameters || !(chi2_best > 0)) return std::numeric_limits<double>::infinity();
  const double reduced = chi2_best / (n - parameters);
  return (chi2_other - chi2_best) / reduced / std::max(1.0, correlation_factor);
}

Eigen::Matrix2d add_ambiguity_spread(const Eigen::Matrix2d& covariance, SkyOffset a, SkyOffset b) {
  const Eigen::Vector2d d(b.east - a.east, b.north - a.north);
  return covariance + d * d.transpose();
}

}  // namespace fulcrum::kinematics
