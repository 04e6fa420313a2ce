// Per-pixel noise of a line map from its emission-free pixels (see
// noise_estimate.hpp).
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/imaging/noise_estimate.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <numbers>
#include <tuple>
#include <vector>

#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum {

namespace {

double median_in_place(std::vector<double>& v) {
  if (v.empty()) return 0.0;
  const std::size_t h = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + h, v.end());
  const double hi = v[h];
  if (v.size() % 2) return hi;
  return 0.5 * (hi + *std::max_element(v.begin(), v.begin() + h));
}

// Median and 1.4826 MAD of the pixels with keep[i].
std::pair<double, double> location_scale(const std::vector<double>& d, const std::vector<std::uint8_t>& keep) {
  std::vector<double> v;
  for (std::size_t i = 0; i < d.size(); ++i)
    if (keep[i]) v.push_back(d[i]);
  const double m = median_in_place(v);
  for (double& x : v) x = std::abs(x - m);
  return {m, 1.4826 * median_in_place(v)};
}

// Pixels above `thr`, grown into discs of radius r pixels.
std::vector<std::uint8_t> emission(const Image& map, double thr, double r) {
  std::vector<std::uint8_t> e(map.size(), 0);
  const int g = static_cast<int>(std::ceil(r));
  for (int y = 0; y < map.ny; ++y)
    for (int x = 0; x < map.nx; ++x) {
      if (!(map.at(x, y) > thr)) continue;
      for (int dy = -g; dy <= g; ++dy)
        for (int dx = -g; dx <= g; ++dx)
          if (map.contains(x + dx, y + dy) && dx * dx + dy * dy <= r * r) e[(x + dx) + map.nx * (y + dy)] = 1;
    }
  return e;
}

double grow_radius_pixels(const Image& map, double beams) {
  if (!map.beam || !(map.beam->bmaj_arcsec > 0) || !map.wcs.valid()) return 1.0;
  const PixelOffsets off(map, map.wcs.pixel_to_world({0.5 * (map.nx - 1), 0.5 * (map.ny - 1)}));
  return std::max(1.0, beams * map.beam->bmaj_arcsec / off.pixel_scale_arcsec());
}

}  // namespace

std::string NoiseEstimate::sentence(const std::string& unit) const {
  return "noise estimated from " + std::to_string(pixels_used) + " emission-free pixels: rms = " + significant_text(rms, 4) +
         (unit.empty() ? "" : " " + unit);
}

NoiseEstimate estimate_map_noise(const Image& map, const NoiseEstimateOptions& o) {
  NoiseEstimate r;
  const std::size_t n = map.size();
  std::vector<std::uint8_t> keep(n, 0);
  for (std::size_t i = 0; i < n; ++i) keep[i] = std::isfinite(map.data[i]) ? 1 : 0;
  r.pixels_finite = static_cast<std::size_t>(std::count(keep.begin(), keep.end(), 1));
  const double grow = grow_radius_pixels(map, o.grow_beams);
  auto [m, s] = location_scale(map.data, keep);
  for (int it = 0; it < o.max_iterations && s > 0.0; ++it) {
    const std::vector<std::uint8_t> em = emission(map, m + o.detect_sigma * s, grow);
    std::vector<std::uint8_t> next(n, 0);
    for (std::size_t i = 0; i < n; ++i)
      next[i] = std::isfinite(map.data[i]) && !em[i] && std::abs(map.data[i] - m) <= o.clip_sigma * s;
    const bool same = next == keep;
    keep = std::move(next);
    std::tie(m, s) = location_scale(map.data, keep);
    if (same) break;
  }
  r.pixels_used = static_cast<std::size_t>(std::count(keep.begin(), keep.end(), 1));
  r.location = m;
  if (static_cast<int>(r.pixels_used) < o.min_pixels) {
    r.reason = "only " + std::to_string(r.pixels_used) + " emission-free pixels (at least " +
               std::to_string(o.min_pixels) + " are needed to estimate the noise)";
    return r;
  }
  if (!(s > 0.0)) {
    r.reason = "the emission-free pixels are all equal (" + significant_text(m, 4) +
               "): the map carries no noise outside its emission (a masked moment map?)";
    return r;
  }
  r.rms = s;
  // The negative side, corrected for the clip at -k s.
  const double k = o.clip_sigma;
  const double phi = std::exp(-0.5 * k * k) / std::sqrt(2.0 * std::numbers::pi);
  const double cdf2 = std::erf(k / std::numbers::sqrt2);  // 2 Phi(k) - 1
  double ss = 0.0;
  std::size_t nn = 0;
  for (std::size_t i = 0; i < n; ++i)
    if (keep[i] && map.data[i] < m) {
      ss += (map.data[i] - m) * (map.data[i] - m);
      ++nn;
    }
  r.rms_negative_side = nn ? std::sqrt(ss / nn / (1.0 - 2.0 * k * phi / cdf2)) : 0.0;
  const double ratio = r.rms_negative_side / r.rms;
  if (!(ratio >= 0.8 && ratio <= 1.25))
    r.check = "the negative-side rms (" + significant_text(r.rms_negative_side, 4) + ") differs from the MAD rms (" + significant_text(r.rms, 4) +
              "): the noise is not Gaussian or emission remains";
  r.ok = true;
  return r;
}

}  // namespace fulcrum
