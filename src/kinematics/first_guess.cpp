// First guesses of the disc geometry from the velocity field alone
// (first_guess.hpp). Units: arcsec, degrees, km/s.
#include "fulcrum/kinematics/first_guess.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <numbers>
#include <vector>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {
double quantile(std::vector<double> v, double q) {
  if (v.empty()) return 0.0;
  const std::size_t k = std::min(v.size() - 1, static_cast<std::size_t>(q * (v.size() - 1) + 0.5));
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
  return v[k];
}
}  // namespace

double radius_quantile(const VelocitySamples& s, SkyOffset centre, double pa_deg, double inc_deg,
                       double fraction) {
  const Angle pa = pa_deg * degrees, inc = inc_deg * degrees;
  std::vector<double> r(s.size());
  for (std::size_t i = 0; i < s.size(); ++i) {
    double X, Y;
    disc_plane(s.east[i], s.north[i], centre.east, centre.north, pa.cos(), pa.sin(), inc.cos(), &X,
               &Y);
    r[i] = std::hypot(X, Y);
  }
  return quantile(std::move(r), fraction);
}

FirstGuess first_guess(const VelocitySamples& s) {
  FirstGuess g;
  const std::size_t n = s.size();
  if (n == 0) return g;
  double me = 0, mn = 0;
  for (std::size_t i = 0; i < n; ++i) {
    me += s.east[i];
    mn += s.north[i];
  }
  me /= n;
  mn /= n;
  g.centre = {me, mn};
  g.vsys_kms = quantile(s.velocity, 0.5);

  // Footprint second moments and the velocity plane about the centroid.
  Eigen::Matrix2d m = Eigen::Matrix2d::Zero();
  Eigen::Matrix3d ata = Eigen::Matrix3d::Zero();
  Eigen::Vector3d atb = Eigen::Vector3d::Zero();
  for (std::size_t i = 0; i < n; ++i) {
    const double de = s.east[i] - me, dn = s.north[i] - mn;
    m(0, 0) += de * de;
    m(0, 1) += de * dn;
    m(1, 1) += dn * dn;
    const Eigen::Vector3d a(1.0, de, dn);
    ata += a * a.transpose();
    atb += a * s.velocity[i];
  }
  m(1, 0) = m(0, 1);
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(m);
  const double lmin = std::max(0.0, es.eigenvalues()(0)), lmax = es.eigenvalues()(1);
  g.axis_ratio = lmax > 0 ? std::sqrt(lmin / lmax) : 1.0;
  g.inc_deg = std::clamp(std::acos(std::clamp(g.axis_ratio, 0.0, 1.0)) * 180.0 / std::numbers::pi,
                         20.0, 80.0);

  Eigen::Vector3d coef = Eigen::Vector3d::Zero();
  if (n >= 3) coef = ata.ldlt().solve(atb);
  if (!coef.allFinite()) coef.setZero();
  g.gradient_kms_per_arcsec = std::hypot(coef(1), coef(2));
  if (n > 3 && g.gradient_kms_per_arcsec > 0) {
    double ss = 0;
    for (std::size_t i = 0; i < n; ++i) {
      const double r = s.velocity[i] - (coef(0) + coef(1) * (s.east[i] - me) + coef(2) * (s.north[i] - mn));
      ss += r * r;
    }
    const Eigen::Matrix3d cov = ata.inverse() * (ss / static_cast<double>(n - 3));
    const Eigen::Vector2d dir(coef(1) / g.gradient_kms_per_arcsec, coef(2) / g.gradient_kms_per_arcsec);
    const double var = dir.dot(cov.bottomRightCorner<2, 2>() * dir);
    g.gradient_snr = var > 0 ? g.gradient_kms_per_arcsec / std::sqrt(var) : 0.0;
  }
  if (g.gradient_kms_per_arcsec > 0) {
    g.pa_deg = wrap_pa_deg(std::atan2(coef(1), coef(2)) * 180.0 / std::numbers::pi);
  } else {
    // No gradient: fall back on the footprint's major axis.
    const Eigen::Vector2d major = es.eigenvectors().col(1);
    g.pa_deg = wrap_pa_deg(std::atan2(major(0), major(1)) * 180.0 / std::numbers::pi);
  }
  g.max_radius_arcsec = radius_quantile(s, g.centre, g.pa_deg, g.inc_deg, 0.98);
  return g;
}

}  // namespace fulcrum::kinematics
