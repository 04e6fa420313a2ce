// Degenerate tilted-ring fits (fit_health.hpp). Units: arcsec, deg, km/s.
#include "fulcrum/kinematics/fit_health.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <vector>

namespace fulcrum::kinematics {

namespace {
std::string num(double v, int prec = 3) {
  char b[64];
  std::snprintf(b, sizeof b, "%.*g", prec, v);
  return b;
}
constexpr double kMinCorrelationEigenvalue = 1e-8;
constexpr double kLimitMarginDeg = 0.5;
}  // namespace

std::string covariance_problem(const GlobalFitSummary& fit, const GlobalFitOptions& o) {
  if (!fit.covariance_ok)
    return "the covariance is rank deficient (the data do not constrain every geometry "
           "parameter)";
  static const char* names[5] = {"centre east", "centre north", "PA", "inclination", "vsys"};
  const bool fixed[5] = {o.fix_centre, o.fix_centre, o.fix_pa, o.fix_inc, o.fix_vsys};
  std::vector<int> free;
  for (int i = 0; i < 5; ++i)
    if (!fixed[i]) free.push_back(i);
  if (free.empty()) return "";
  const int m = static_cast<int>(free.size());
  Eigen::MatrixXd r(m, m);
  for (int a = 0; a < m; ++a) {
    const double va = fit.covariance(free[a], free[a]);
    if (!(va > 0) || !std::isfinite(va))
      return std::string("the variance of the ") + names[free[a]] + " is " + num(va) +
             " (rank-deficient covariance)";
  }
  for (int a = 0; a < m; ++a)
    for (int b = 0; b < m; ++b)
      r(a, b) = fit.covariance(free[a], free[b]) /
                std::sqrt(fit.covariance(free[a], free[a]) * fit.covariance(free[b], free[b]));
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(r);
  const double lmin = es.eigenvalues()(0);
  if (es.info() != Eigen::Success || !(lmin > kMinCorrelationEigenvalue))
    return "the covariance is near-singular (smallest eigenvalue of the correlation matrix " +
           num(lmin) + ", below " + num(kMinCorrelationEigenvalue) +
           "): parameters the data cannot tell apart";
  return "";
}

std::string limit_problem(const GlobalFitSummary& fit, const GlobalFitOptions& o,
                          SkyOffset first) {
  const double inc = fit.geometry.inc_deg;
  if (!o.fix_inc && inc < o.min_inc_deg + kLimitMarginDeg)
    return "the inclination ran to the lower limit of the fit (" + num(inc) + " deg, limit " +
           num(o.min_inc_deg) + " deg)";
  if (!o.fix_inc && inc > o.max_inc_deg - kLimitMarginDeg)
    return "the inclination ran to the upper limit of the fit (" + num(inc) + " deg, limit " +
           num(o.max_inc_deg) + " deg)";
  const double moved =
      std::hypot(fit.geometry.centre.east - first.east, fit.geometry.centre.north - first.north);
  if (!o.fix_centre && moved > o.max_radius_arcsec)
    return "the centre left the fitted region (" + num(moved) +
           " arcsec from the first guess, beyond the outer radius " + num(o.max_radius_arcsec) +
           " arcsec)";
  return "";
}

std::string smearing_problem(const GlobalFitSummary& fit, double max_abs_correction_kms,
                             double fraction) {
  double vmax = 0.0;
  for (const auto& n : fit.nodes)
    if (n.n_pixels > 0) vmax = std::max(vmax, std::abs(n.vrot_kms));
  const double amplitude = vmax * std::sin(fit.geometry.inc_deg * 3.14159265358979323846 / 180.0);
  if (max_abs_correction_kms > fraction * amplitude)
    return "the beam-smearing correction reaches " + num(max_abs_correction_kms) +
           " km/s, more than " + (fraction == 1.0 ? std::string("the") : num(fraction) + " x the") +
           " projected rotation amplitude (" + num(amplitude) + " km/s): the model it was "
           "computed from cannot be right";
  return "";
}

}  // namespace fulcrum::kinematics
