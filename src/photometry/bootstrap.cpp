// Noise bootstrap of a centre estimator (see bootstrap.hpp).
#include "fulcrum/photometry/bootstrap.hpp"

#include <cmath>

#include "fulcrum/core/random.hpp"

namespace fulcrum::photometry {

std::uint64_t mix_seed(std::uint64_t seed, const std::string& tag, std::uint64_t k) {
  std::uint64_t h = splitmix64(seed);
  for (unsigned char c : tag) h = splitmix64(h ^ c);
  return splitmix64(h ^ splitmix64(k));
}

BootstrapSummary bootstrap_centre(const PreparedImage& p, const Estimator& estimator,
                                  double noise_rms, const std::string& tag,
                                  const BootstrapOptions& o) {
  BootstrapSummary s;
  s.draws = o.draws;
  if (o.draws < 3) {
    s.reason = "too few bootstrap draws (" + std::to_string(o.draws) + ")";
    return s;
  }
  std::vector<PixelEstimate> results(static_cast<std::size_t>(o.draws));
#pragma omp parallel for schedule(dynamic)
  for (int k = 0; k < o.draws; ++k) {
    // The project's own normal deviates (Box-Muller on mt19937_64), not
    // std::normal_distribution, whose algorithm differs between standard
    // libraries: the same seed gives the same centres everywhere.
    Random rng(mix_seed(o.seed, tag, static_cast<std::uint64_t>(k)));
    std::vector<double> d = p.data;
    for (double& v : d)
      if (std::isfinite(v)) v += noise_rms * rng.normal();
    results[static_cast<std::size_t>(k)] = estimator(d);
  }
  double mx = 0, my = 0;
  for (const auto& r : results)
    if (r.ok) {
      ++s.succeeded;
      mx += r.centre.x;
      my += r.centre.y;
    }
  if (s.succeeded < std::max(3.0, o.min_success_fraction * o.draws)) {
    s.reason = "only " + std::to_string(s.succeeded) + " of " + std::to_string(o.draws) +
               " bootstrap draws succeeded";
    return s;
  }
  mx /= s.succeeded;
  my /= s.succeeded;
  Eigen::Matrix2d c = Eigen::Matrix2d::Zero();
  for (const auto& r : results)
    if (r.ok) {
      const Eigen::Vector2d d(r.centre.x - mx, r.centre.y - my);
      c += d * d.transpose();
    }
  s.cov_pixels = c / (s.succeeded - 1);
  s.ok = true;
  return s;
}

}  // namespace fulcrum::photometry
