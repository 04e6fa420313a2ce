// The velocity scatter beyond the error map (velocity_scatter.hpp).
// Units: km/s.
#include "fulcrum/kinematics/velocity_scatter.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

VelocityScatter measure_velocity_scatter(const VelocitySamples& s, const GlobalFitSummary& fit,
                                         double weight_power) {
  VelocityScatter out;
  if (!s.has_errors) {
    out.reason = "no error map: the residual scale is the only error";
    return out;
  }
  if (!fit.converged || fit.used.size() != s.size()) {
    out.reason = "no converged fit";
    return out;
  }
  const auto& g = fit.geometry;
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  std::vector<double> w, r2, var;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (!fit.used[i]) continue;
    double X, Y;
    disc_plane(s.east[i], s.north[i], g.centre.east, g.centre.north, pa.cos(), pa.sin(), inc.cos(),
               &X, &Y);
    const double R = std::hypot(X, Y);
    const double cos_t = R > 0 ? std::abs(X) / R : 1.0;
    const double r = s.velocity[i] - global_model_velocity(fit, s.east[i], s.north[i]);
    w.push_back(std::pow(cos_t, weight_power));
    r2.push_back(r * r);
    var.push_back(s.sigma[i] * s.sigma[i]);
  }
  const int n = static_cast<int>(w.size());
  out.pixels = n;
  if (n <= fit.n_parameters + 1) {
    out.reason = "too few pixels in the fit";
    return out;
  }
  double wsum = 0.0;
  for (double x : w) wsum += x;
  const double target = wsum * static_cast<double>(n - fit.n_parameters) / n;
  auto chi2_at = [&](double s2) {
    double c = 0.0;
    for (int i = 0; i < n; ++i) c += w[i] * r2[i] / (var[i] + s2);
    return c;
  };
  std::vector<double> sig(var.begin(), var.end());
  std::nth_element(sig.begin(), sig.begin() + n / 2, sig.end());
  out.median_sigma_kms = std::sqrt(sig[static_cast<std::size_t>(n / 2)]);
  out.reduced_chi2_before = chi2_at(0.0) / target;
  out.estimated = true;
  if (!(chi2_at(0.0) > target)) return out;
  // Bracket: at s^2 = max r^2 / (target / wsum) the left side is below the target.
  double lo = 0.0, hi = *std::max_element(r2.begin(), r2.end()) * wsum / target;
  for (int it = 0; it < 200 && hi - lo > 1e-10 * hi; ++it) {
    const double mid = 0.5 * (lo + hi);
    (chi2_at(mid) > target ? lo : hi) = mid;
  }
  out.scatter_kms = std::sqrt(0.5 * (lo + hi));
  return out;
}

VelocitySamples with_scatter(const VelocitySamples& samples, double scatter_kms) {
  VelocitySamples out = samples;
  const double s2 = scatter_kms * scatter_kms;
  for (double& sg : out.sigma) sg = std::sqrt(sg * sg + s2);
  return out;
}

}  // namespace fulcrum::kinematics
