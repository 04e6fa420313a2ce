// Systematic centre term from the spread between methods (method_spread.hpp;
// docs/uncertainties.md §4).
#include "fulcrum/kinematics/method_spread.hpp"

#include <Eigen/Dense>
#include <cmath>
#include <optional>

namespace fulcrum::kinematics {

std::optional<MethodCentre> ring_by_ring_centre(const std::vector<RingFit>& rings, int min_rings) {
  double we = 0, wn = 0, se = 0, sn = 0;
  int used = 0;
  for (const auto& r : rings) {
    if (!r.ok || !(r.centre_east_err > 0) || !(r.centre_north_err > 0) ||
        !std::isfinite(r.centre_east_err) || !std::isfinite(r.centre_north_err))
      continue;
    const double a = 1.0 / (r.centre_east_err * r.centre_east_err);
    const double b = 1.0 / (r.centre_north_err * r.centre_north_err);
    we += a;
    wn += b;
    se += a * r.geometry.centre.east;
    sn += b * r.geometry.centre.north;
    ++used;
  }
  if (used < min_rings) return std::nullopt;
  MethodCentre m;
  m.method = "ring-by-ring";
  m.centre = {se / we, sn / wn};
  m.covariance << 1.0 / we, 0.0, 0.0, 1.0 / wn;
  return m;
}

Eigen::Matrix2d method_spread(SkyOffset adopted, const Eigen::Matrix2d& c0,
                              std::vector<MethodCentre>& others) {
  Eigen::Matrix2d sum = Eigen::Matrix2d::Zero();
  int n = 0;
  for (auto& m : others) {
    const Eigen::Vector2d d(m.centre.east - adopted.east, m.centre.north - adopted.north);
    const double len2 = d.squaredNorm();
    m.excess_arcsec2 = 0.0;
    if (!std::isfinite(len2) || !m.covariance.allFinite()) continue;
    ++n;
    if (len2 <= 0) continue;
    const Eigen::Vector2d u = d / std::sqrt(len2);
    const double expected = std::max(0.0, u.dot((m.covariance - c0) * u));
    m.excess_arcsec2 = std::max(0.0, len2 - expected);
    sum += m.excess_arcsec2 * u * u.transpose();
  }
  return n > 0 ? Eigen::Matrix2d(sum / n) : Eigen::Matrix2d(Eigen::Matrix2d::Zero());
}

}  // namespace fulcrum::kinematics
