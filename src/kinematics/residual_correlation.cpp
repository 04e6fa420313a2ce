// Measured correlation of fit residuals between neighbouring pixels
// (residual_correlation.hpp; docs/uncertainties.md §2).
#include "fulcrum/kinematics/residual_correlation.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <numbers>

namespace fulcrum::kinematics {

namespace {
// The beam's covariance on (east, north), arcsec^2.
Eigen::Matrix2d beam_covariance(const Beam& b) {
  const double pa = b.bpa_deg * std::numbers::pi / 180.0;
  const Eigen::Vector2d maj(std::sin(pa), std::cos(pa)), min(std::cos(pa), -std::sin(pa));
  const double sa = b.bmaj_arcsec / kFwhmPerSigma, sb = b.bmin_arcsec / kFwhmPerSigma;
  return sa * sa * maj * maj.transpose() + sb * sb * min * min.transpose();
}
}  // namespace

NoiseCorrelation scaled_beam_correlation(const Beam& beam, double scale) {
  NoiseCorrelation c;
  c.sigma_major_arcsec = scale * beam.bmaj_arcsec / kFwhmPerSigma;
  c.sigma_minor_arcsec = scale * beam.bmin_arcsec / kFwhmPerSigma;
  c.pa_deg = beam.bpa_deg;
  return c;
}

ResidualCorrelation measure_residual_correlation(const SampleGrid& g, const std::vector<double>& z,
                                                 const std::vector<unsigned char>& use,
                                                 const Beam& beam,
                                                 const ResidualCorrelationOptions& opt) {
  ResidualCorrelation out;
  out.scale = opt.min_scale;
  out.correlation = scaled_beam_correlation(beam, out.scale);
  if (!g.jacobian_ok || !(beam.bmaj_arcsec > 0) || !(beam.bmin_arcsec > 0)) {
    out.reason = "no beam or no pixel grid: the correlation is not measured";
    return out;
  }
  double mean = 0, var = 0;
  long n = 0;
  for (std::size_t i = 0; i < z.size(); ++i)
    if (use[i]) { mean += z[i]; ++n; }
  if (n < 10) { out.reason = "too few residuals"; return out; }
  mean /= n;
  for (std::size_t i = 0; i < z.size(); ++i)
    if (use[i]) var += (z[i] - mean) * (z[i] - mean);
  var /= n;
  if (!(var > 0)) { out.reason = "the residuals are all equal"; return out; }
  // Lags within max_lag_beams FWHM; q = d^T B^-1 d in beam-sigma units.
  const Eigen::Matrix2d Binv = beam_covariance(beam).inverse();
  const double reach = opt.max_lag_beams * beam.bmaj_arcsec;
  const double step = std::sqrt(std::abs(g.jacobian.determinant()));
  const int L = std::max(1, static_cast<int>(std::ceil(reach / step)));
  std::vector<double> qs, rho, wts;
  for (int dy = 0; dy <= L; ++dy)
    for (int dx = -L; dx <= L; ++dx) {
      if (dy == 0 && dx <= 0) continue;  // each unordered pair once
      const Eigen::Vector2d d = g.lag(dx, dy);
      if (d.norm() > reach) continue;
      double sum = 0;
      long np = 0;
      for (int y = g.y0; y < g.y0 + g.ny; ++y)
        for (int x = g.x0; x < g.x0 + g.nx; ++x) {
          const int i = g.at(x, y), j = g.at(x + dx, y + dy);
          if (i < 0 || j < 0) continue;
          sum += (z[i] - mean) * (z[j] - mean);
          ++np;
        }
      if (np < 10) continue;
      qs.push_back(d.dot(Binv * d));
      rho.push_back(sum / (np * var));
      wts.push_back(static_cast<double>(np));
      out.pairs += np;
    }
  out.lags = static_cast<int>(qs.size());
  if (out.lags < 3) { out.reason = "too few pixel pairs at lags within the beam"; return out; }
  // Least squares for s by golden-section search on log s.
  auto cost = [&](double s) {
    double c = 0;
    for (std::size_t k = 0; k < qs.size(); ++k) {
      const double r = rho[k] - std::exp(-0.5 * qs[k] / (s * s));
      c += wts[k] * r * r;
    }
    return c;
  };
  double a = std::log(0.2), b = std::log(opt.max_scale);
  const double gr = (std::sqrt(5.0) - 1.0) / 2.0;
  for (int it = 0; it < 80; ++it) {
    const double c1 = b - gr * (b - a), c2 = a + gr * (b - a);
    if (cost(std::exp(c1)) < cost(std::exp(c2))) b = c2; else a = c1;
  }
  out.fitted_scale = std::exp(0.5 * (a + b));
  out.scale = std::clamp(out.fitted_scale, opt.min_scale, opt.max_scale);
  out.correlation = scaled_beam_correlation(beam, out.scale);
  out.measured = true;
  return out;
}

}  // namespace fulcrum::kinematics
