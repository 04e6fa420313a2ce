// Harmonic expansion of the velocity along a ring (harmonic_expansion.hpp):
// weighted linear least squares in the basis 1, cos psi, sin psi, ...,
// cos 3psi, sin 3psi. Units: km/s, arcsec, degrees.
#include "fulcrum/kinematics/harmonic_expansion.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <numbers>
#include <vector>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

HarmonicRing expand_ring(const VelocitySamples& s, const DiscGeometry& g, double radius,
                         double width, const HarmonicOptions& opt) {
  HarmonicRing h;
  h.radius_arcsec = radius;
  h.width_arcsec = width;
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  const double cp = pa.cos(), sp = pa.sin(), ci = inc.cos();
  Eigen::Matrix<double, 7, 7> ata = Eigen::Matrix<double, 7, 7>::Zero();
  Eigen::Matrix<double, 7, 1> atb = Eigen::Matrix<double, 7, 1>::Zero();
  std::vector<double> psi_list, v_list, w_list;
  std::vector<Eigen::Matrix<double, 7, 1>> rows;
  for (std::size_t i = 0; i < s.size(); ++i) {
    double X, Y;
    disc_plane(s.east[i], s.north[i], g.centre.east, g.centre.north, cp, sp, ci, &X, &Y);
    const double R = std::hypot(X, Y);
    if (R < radius - 0.5 * width || R >= radius + 0.5 * width || R <= 0) continue;
    const double psi = std::atan2(Y, X);
    Eigen::Matrix<double, 7, 1> a;
    a << 1.0, std::cos(psi), std::sin(psi), std::cos(2 * psi), std::sin(2 * psi), std::cos(3 * psi),
        std::sin(3 * psi);
    const double wt = std::pow(std::abs(a(1)), opt.weight_power) / (s.sigma[i] * s.sigma[i]);
    ata += wt * a * a.transpose();
    atb += wt * s.velocity[i] * a;
    rows.push_back(a);
    v_list.push_back(s.velocity[i]);
    w_list.push_back(wt);
    psi_list.push_back(psi);
  }
  h.n_pixels = static_cast<int>(rows.size());
  if (h.n_pixels < std::max(opt.min_pixels, 8)) {
    h.reason = "too few pixels (" + std::to_string(h.n_pixels) + ")";
    return h;
  }
  std::sort(psi_list.begin(), psi_list.end());
  double gap = psi_list.front() + 2 * std::numbers::pi - psi_list.back();
  for (std::size_t i = 1; i < psi_list.size(); ++i) gap = std::max(gap, psi_list[i] - psi_list[i - 1]);
  h.max_gap_deg = gap * 180.0 / std::numbers::pi;
  if (h.max_gap_deg > opt.max_gap_deg) {
    h.reason = "azimuth gap of " + std::to_string(static_cast<int>(h.max_gap_deg)) + " deg";
    return h;
  }
  Eigen::LDLT<Eigen::Matrix<double, 7, 7>> ldlt(ata);
  if (ldlt.info() != Eigen::Success) {
    h.reason = "singular harmonic system";
    return h;
  }
  const Eigen::Matrix<double, 7, 1> c = ldlt.solve(atb);
  double chi2 = 0;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const double r = v_list[i] - rows[i].dot(c);
    chi2 += w_list[i] * r * r;
  }
  h.reduced_chi2 = chi2 / (h.n_pixels - 7);
  const Eigen::Matrix<double, 7, 7> inv = ldlt.solve(Eigen::Matrix<double, 7, 7>::Identity());
  h.covariance = inv * (h.reduced_chi2 * opt.correlation_factor);
  for (int i = 0; i < 7; ++i) h.coeff[i] = c(i);
  h.ok = c.allFinite() && h.covariance.allFinite();
  if (!h.ok) h.reason = "singular harmonic system";
  return h;
}

}  // namespace fulcrum::kinematics
