// Iterative sigma-clipped sky level and rms (see background.hpp).
#include "fulcrum/photometry/background.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace fulcrum::photometry {

double median_of(std::vector<double> v) {
  if (v.empty()) return 0.0;
  const std::size_t h = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(h), v.end());
  double m = v[h];
  if (v.size() % 2 == 0) {
    double lo = *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(h));
    m = 0.5 * (m + lo);
  }
  return m;
}

namespace {
// Ratio of the variance of a standard normal truncated to [-k, k] to 1.
double truncated_variance_ratio(double k) {
  const double phi = std::exp(-0.5 * k * k) / std::sqrt(2.0 * std::numbers::pi);
  const double mass = std::erf(k / std::numbers::sqrt2);  // 2 Phi(k) - 1
  return 1.0 - 2.0 * k * phi / mass;
}
}  // namespace

BackgroundSummary estimate_background(const std::vector<double>& values,
                                      const std::vector<std::uint8_t>& exclude,
                                      const BackgroundOptions& options) {
  BackgroundSummary s;
  std::vector<double> kept;
  kept.reserve(values.size());
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (!std::isfinite(values[i])) continue;
    if (!exclude.empty() && exclude[i]) continue;
    kept.push_back(values[i]);
  }
  s.n_input = kept.size();
  if (kept.empty()) return s;
  double med = 0.0, sd = 0.0;
  bool med_current = false;  // med is the median of `kept` as it is now
  for (int it = 0; it < options.max_iterations; ++it) {
    s.iterations = it + 1;
    med = median_of(kept);
    double mean = 0.0;
    for (double v : kept) mean += v;
    mean /= static_cast<double>(kept.size());
    double ss = 0.0;
    for (double v : kept) ss += (v - mean) * (v - mean);
    sd = kept.size() > 1 ? std::sqrt(ss / static_cast<double>(kept.size() - 1)) : 0.0;
    std::vector<double> next;
    next.reserve(kept.size());
    const double cut = options.clip_sigma * sd;
    for (double v : kept)
      if (std::abs(v - med) <= cut) next.push_back(v);
    const bool same = next.size() == kept.size();
    kept.swap(next);
    med_current = same;  // nothing clipped: the same values in the same order
    if (same || kept.size() < 3) {
      s.converged = same;
      break;
    }
  }
  s.level = med_current ? med : median_of(kept);
  double mean = 0.0;
  for (double v : kept) mean += v;
  mean /= static_cast<double>(std::max<std::size_t>(kept.size(), 1));
  double ss = 0.0;
  for (double v : kept) ss += (v - mean) * (v - mean);
  double rms = kept.size() > 1 ? std::sqrt(ss / static_cast<double>(kept.size() - 1)) : 0.0;
  // The survivors lie within +-c of the median, c = k * rms (the cut of the
  // last, unchanged pass). Their variance is sigma^2 r(c / sigma) for a
  // Gaussian of width sigma; solve for sigma by fixed-point iteration.
  if (options.correct_truncation && options.clip_sigma > 0.5 && rms > 0.0) {
    const double c = options.clip_sigma * rms;
    double sigma = rms;
    for (int i = 0; i < 50; ++i) sigma = rms / std::sqrt(truncated_variance_ratio(c / sigma));
    rms = sigma;
  }
  s.rms = rms;
  s.n_used = kept.size();
  return s;
}

}  // namespace fulcrum::photometry
