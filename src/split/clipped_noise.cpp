// Noise of clipped line-map pixels (see the header for the formulae).
#include "fulcrum/split/clipped_noise.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::split {

double clipped_pixel_variance(double s, double sigma, double t) {
  const double a = (t * sigma - s) / sigma;
  const double Q = 0.5 * std::erfc(a / std::numbers::sqrt2);
  const double phi = std::exp(-0.5 * a * a) / std::sqrt(2.0 * std::numbers::pi);
  const double m1 = s * Q + sigma * phi;
  const double m2 = (s * s + sigma * sigma) * Q + sigma * (s + t * sigma) * phi;
  // Never exactly zero: a pixel far below the threshold still carries a
  // vanishing chance of being kept (and zero errors are dropped by the split).
  return std::max(m2 - m1 * m1, 1e-12 * sigma * sigma);
}

Image clipped_error_map(const Image& map, const Image* error_map, double rms, double clip_snr) {
  std::vector<double> plug = map.data;
  if (map.beam && map.wcs.valid()) {
    const Beam k{map.beam->bmaj_arcsec / std::numbers::sqrt2, map.beam->bmin_arcsec / std::numbers::sqrt2,
                 map.beam->bpa_deg};
    const PixelOffsets off(map, map.wcs.pixel_to_world({0.5 * (map.nx - 1), 0.5 * (map.ny - 1)}));
    plug = convolve_gaussian(map.data, map.nx, map.ny, pixel_covariance(k, off.jacobian()));
  }
  Image e = map.like(0.0);
  e.path = "clip-aware errors of " + map.path;
  for (std::size_t i = 0; i < map.size(); ++i) {
    const double sig = error_map ? error_map->data[i] : rms;
    if (!std::isfinite(map.data[i]) || !std::isfinite(sig) || !(sig > 0.0) || !std::isfinite(plug[i])) {
      e.data[i] = std::nan("");
      continue;
    }
    e.data[i] = std::sqrt(clipped_pixel_variance(plug[i], sig, clip_snr));
  }
  return e;
}

}  // namespace fulcrum::split
