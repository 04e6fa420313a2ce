// Nearest-pixel resampling onto a sky-offset grid (figures only).
#include "fulcrum/pipeline/sky_grid.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::pipeline {

report::Grid sky_grid(const Image& image, WorldCoord centre, double half, int n) {
  report::Grid g;
  g.nx = g.ny = n;
  g.xmin = g.ymin = -half;
  g.xmax = g.ymax = half;
  g.v.assign(static_cast<std::size_t>(n) * n, NAN);
  OffsetFrame frame(centre);
  CelestialWcs wcs = image.wcs;  // a private copy (wcslib scratch space)
  for (int j = 0; j < n; ++j) {
    for (int i = 0; i < n; ++i) {
      SkyOffset o{g.x_of(i), g.y_of(j)};
      try {
        PixelCoord p = wcs.world_to_pixel(frame.to_world(o));
        int x = static_cast<int>(std::lround(p.x)), y = static_cast<int>(std::lround(p.y));
        if (image.contains(x, y)) g.v[static_cast<std::size_t>(i) + static_cast<std::size_t>(n) * j] = image.at(x, y);
      } catch (const InputError&) {
        // off the projection: leave NaN
      }
    }
  }
  return g;
}

double finite_extent_arcsec(const Image& image, WorldCoord centre, double cap) {
  PixelOffsets po(image, centre);
  double r = 0;
  for (int y = 0; y < image.ny; ++y)
    for (int x = 0; x < image.nx; ++x)
      if (std::isfinite(image.at(x, y))) {
        SkyOffset o = po.at(x, y);
        r = std::max({r, std::abs(o.east), std::abs(o.north)});
      }
  r += po.pixel_scale_arcsec();
  if (cap > 0) r = std::min(r, cap);
  return r > 0 ? r : 1.0;
}

}  // namespace fulcrum::pipeline
