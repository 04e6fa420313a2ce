// Noise of clipped line-map pixels (see the header for the formulae).
#include "fulcrum/split/clipped_noise.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace fulcrum::split {

namespace {
double upper_tail(double a) { return 0.5 * std::erfc(a / std::numbers::sqrt2); }
double density(double a) { return std::exp(-0.5 * a * a) / std::sqrt(2.0 * std::numbers::pi); }
}  // namespace

double clipped_pixel_mean(double s, double sigma, double t) {
  const double a = (t * sigma - s) / sigma;
  return s * upper_tail(a) + sigma * density(a);
}

double clipped_pixel_variance(double s, double sigma, double t) {
  const double a = (t * sigma - s) / sigma;
  const double Q = upper_tail(a);
  const double phi = density(a);
  const double m1 = s * Q + sigma * phi;
  const double m2 = (s * s + sigma * sigma) * Q + sigma * (s + t * sigma) * phi;
  // Never exactly zero: a pixel far below the threshold still carries a
  // vanishing chance of being kept (and zero errors are dropped by the split).
  return std::max(m2 - m1 * m1, 1e-12 * sigma * sigma);
}

double brightness_of_clipped_mean(double mean, double sigma, double t) {
  // E[M] grows monotonically with s (f is non-decreasing); bisection in
  // units of sigma. Above t + 10 sigma the clipping no longer matters.
  double lo = -10.0, hi = std::max(t + 10.0, mean / sigma + 1.0);
  if (!(mean > clipped_pixel_mean(lo * sigma, sigma, t))) return lo * sigma;
  if (mean / sigma >= t + 10.0) return mean;
  for (int it = 0; it < 60 && hi - lo > 1e-6; ++it) {
    const double mid = 0.5 * (lo + hi);
    (clipped_pixel_mean(mid * sigma, sigma, t) < mean ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi) * sigma;
}

std::vector<double> clipped_hermite_coefficients(double s, double sigma, double t, int kmax) {
  const double a = (t * sigma - s) / sigma;
  const double Q = upper_tail(a);
  const double phi = density(a);
  // He_0 .. He_kmax at a: He_{k+1} = a He_k - k He_{k-1}.
  std::vector<double> he(static_cast<std::size_t>(std::max(kmax, 1)) + 1);
  he[0] = 1.0;
  he[1] = a;
  for (int k = 1; k < kmax; ++k) he[k + 1] = a * he[k] - k * he[k - 1];
  std::vector<double> c(static_cast<std::size_t>(std::max(kmax, 0)));
  if (kmax >= 1) c[0] = sigma * (t * phi + Q);
  for (int k = 2; k <= kmax; ++k) c[k - 1] = (s * he[k - 1] + sigma * (he[k] + k * he[k - 2])) * phi;
  return c;
}

}  // namespace fulcrum::split
