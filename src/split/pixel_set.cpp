// Collecting the pixels of a split: finite map values inside the aperture
// (membership by pixel centre), with their offsets and noise variances.
#include "fulcrum/split/pixel_set.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum::split {

namespace {
// A tile's centre and bounding radius from its pixels [t.begin, t.end).
void bound_tile(const PixelSet& px, PixelTile& t) {
  double emin = 1e300, emax = -1e300, nmin = 1e300, nmax = -1e300;
  for (std::size_t j = t.begin; j < t.end; ++j) {
    emin = std::min(emin, px.east[j]);
    emax = std::max(emax, px.east[j]);
    nmin = std::min(nmin, px.north[j]);
    nmax = std::max(nmax, px.north[j]);
  }
  t.east = 0.5 * (emin + emax);
  t.north = 0.5 * (nmin + nmax);
  for (std::size_t j = t.begin; j < t.end; ++j)
    t.radius = std::max(t.radius, std::hypot(px.east[j] - t.east, px.north[j] - t.north));
  t.radius = t.radius * (1.0 + 1e-12) + 1e-9;
}
}  // namespace

PixelSet collect_pixels(const Image& map, const PixelOffsets& offsets,
                        const std::optional<SkyEllipse>& aperture, const NoiseSpec& noise) {
  if (offsets.nx() != map.nx || offsets.ny() != map.ny)
    throw InternalError("collect_pixels: offsets grid differs from the map grid");
  if (noise.error_map && (noise.error_map->nx != map.nx || noise.error_map->ny != map.ny))
    throw InputError(noise.error_map->path,
                     "error map is " + std::to_string(noise.error_map->nx) + "x" +
                         std::to_string(noise.error_map->ny) + " pixels but the map is " +
                         std::to_string(map.nx) + "x" + std::to_string(map.ny));
  if (!noise.error_map && noise.rms != 0.0) check_positive("rms", noise.rms, "(map units)");
  PixelSet px;
  px.jacobian = offsets.jacobian();
  const bool has_noise = noise.error_map || noise.rms > 0.0;
  const double rms2 = noise.rms * noise.rms;
  if (has_noise && !noise.error_map) px.uniform_variance = rms2;
  px.east.reserve(map.size());
  px.north.reserve(map.size());
  px.value.reserve(map.size());
  if (noise.error_map) px.variance.reserve(map.size());
  // The aperture test with the PA's sine and cosine taken once.
  const double ap_sin = aperture ? aperture->pa.sin() : 0.0, ap_cos = aperture ? aperture->pa.cos() : 1.0;
  // Pixels are stored tile by tile (32 x 32 pixels of the grid) so that an
  // engine can skip whole tiles far from its window. The offsets of a band of
  // kTile rows: the offsets' own, or computed now for that band only.
  constexpr int kTile = 32;
  const std::size_t nx = static_cast<std::size_t>(map.nx);
  std::vector<double> band_east, band_north;
  for (int ty = 0; ty < map.ny; ty += kTile) {
    const int ty_end = std::min(map.ny, ty + kTile);
    const double* E = nullptr;
    const double* N = nullptr;
    if (offsets.holds_pixels()) {
      E = offsets.east().data() + nx * static_cast<std::size_t>(ty);
      N = offsets.north().data() + nx * static_cast<std::size_t>(ty);
    } else {
      band_east.resize(nx * static_cast<std::size_t>(ty_end - ty));
      band_north.resize(band_east.size());
      grid_row_offsets(map.wcs, offsets.frame(), map.nx, map.ny, ty, ty_end, band_east.data(),
                       band_north.data());
      E = band_east.data();
      N = band_north.data();
    }
    for (int tx = 0; tx < map.nx; tx += kTile) {
      PixelTile t;
      t.begin = px.size();
      for (int y = ty; y < ty_end; ++y)
        for (int x = tx; x < std::min(map.nx, tx + kTile); ++x) {
          const std::size_t i = static_cast<std::size_t>(x) + nx * static_cast<std::size_t>(y);
          const double f = map.data[i];
          if (!std::isfinite(f)) continue;
          const std::size_t b = static_cast<std::size_t>(x) + nx * static_cast<std::size_t>(y - ty);
          const SkyOffset o{E[b], N[b]};
          if (aperture && !aperture->contains(o, ap_sin, ap_cos)) continue;
          double var = 0.0;
          if (noise.error_map) {
            const double e = noise.error_map->data[i];
            if (!std::isfinite(e) || e <= 0.0) continue;
            var = e * e;
            px.variance.push_back(var);
          } else if (has_noise) {
            var = rms2;
          }
          px.max_radius = std::max(px.max_radius, o.norm());
          px.east.push_back(o.east);
          px.north.push_back(o.north);
          px.value.push_back(f);
          t.sum_value += f;
          t.sum_variance += var;
        }
      t.end = px.size();
      if (t.end == t.begin) continue;
      bound_tile(px, t);
      px.tiles.push_back(t);
    }
  }
  if (px.size() == 0)
    throw InputError(map.path, aperture ? "no finite pixel inside the analysis aperture"
                                        : "the map has no finite pixel");
  return px;
}

}  // namespace fulcrum::split
