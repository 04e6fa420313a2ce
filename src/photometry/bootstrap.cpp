// Noise bootstrap of a centre estimator (see bootstrap.hpp).
#include "fulcrum/photometry/bootstrap.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/random.hpp"

namespace fulcrum::photometry {

std::uint64_t mix_seed(std::uint64_t seed, const std::string& tag, std::uint64_t k) {
  std::uint64_t h = splitmix64(seed);
  for (unsigned char c : tag) h = splitmix64(h ^ c);
  return splitmix64(h ^ splitmix64(k));
}

PixelBox box_around(const PreparedImage& p, PixelCoord c, double half_x, double half_y) {
  PixelBox b;
  b.x0 = std::max(0, static_cast<int>(std::floor(c.x - half_x)));
  b.x1 = std::min(p.nx - 1, static_cast<int>(std::ceil(c.x + half_x)));
  b.y0 = std::max(0, static_cast<int>(std::floor(c.y - half_y)));
  b.y1 = std::min(p.ny - 1, static_cast<int>(std::ceil(c.y + half_y)));
  return b;
}

PixelBox grown(const PreparedImage& p, const PixelBox& b, int margin) {
  if (b.empty()) return b;
  return {std::max(0, b.x0 - margin), std::max(0, b.y0 - margin), std::min(p.nx - 1, b.x1 + margin),
          std::min(p.ny - 1, b.y1 + margin)};
}

BootstrapSummary bootstrap_centre(const PreparedImage& p, const Estimator& estimator,
                                  double noise_rms, const std::string& tag,
                                  const BootstrapOptions& o, const std::optional<PixelBox>& window) {
  BootstrapSummary s;
  s.draws = o.draws;
  if (o.draws < 3) {
    s.reason = "too few bootstrap draws (" + std::to_string(o.draws) + ")";
    return s;
  }
  const PixelBox w = window ? *window : PixelBox{0, 0, p.nx - 1, p.ny - 1};
  std::vector<PixelEstimate> results(static_cast<std::size_t>(o.draws));
#pragma omp parallel
  {
    std::vector<double> d = p.data;  // this thread's working copy
    std::vector<double> deviates(static_cast<std::size_t>(w.x1 - w.x0 + 1));
#pragma omp for schedule(dynamic)
    for (int k = 0; k < o.draws; ++k) {
      // The project's own normal deviates (the ziggurat on mt19937_64), not
      // std::normal_distribution, whose algorithm differs between standard
      // libraries: the same seed gives the same centres everywhere. One
      // deviate per finite pixel in row order, drawn a row at a time.
      Random rng(mix_seed(o.seed, tag, static_cast<std::uint64_t>(k)));
      for (int y = w.y0; y <= w.y1; ++y) {
        const std::size_t row = static_cast<std::size_t>(p.nx) * y;
        std::size_t finite = 0;
        for (int x = w.x0; x <= w.x1; ++x) finite += std::isfinite(p.data[row + x]) ? 1 : 0;
        rng.normal_ziggurat(deviates.data(), finite);
        std::size_t j = 0;
        for (int x = w.x0; x <= w.x1; ++x) {
          const double v = p.data[row + x];
          d[row + x] = std::isfinite(v) ? v + noise_rms * deviates[j++] : v;
        }
      }
      results[static_cast<std::size_t>(k)] = estimator(d);
    }
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
