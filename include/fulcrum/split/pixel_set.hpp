// The pixels that take part in a split: where they are on the sky, what they
// hold, and how noisy they are.
//
// A PixelSet is the map reduced to what the split needs: for every finite
// pixel inside the optional analysis aperture, its centre offset (east,
// north) in arcsec from the frame reference (normally the adopted centre), its
// value in the map's BUNIT and its noise variance (BUNIT^2), plus the common
// pixel shape J = d(east, north)/d(x, y) in arcsec per pixel.
//
// Aperture rule: a pixel belongs to the aperture when its centre does
// (SkyEllipse::contains on the centre offset). The aperture is an analysis
// choice fixed before any split, so a pixel is either wholly in or wholly out;
// only the split line is treated exactly (fractional areas). This keeps the
// total L + T independent of the centre, which is what makes the projection
// engine exact for a fixed aperture.
#pragma once

#include <Eigen/Core>
#include <Eigen/LU>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::split {

// A block of pixels that are contiguous in the PixelSet (a square of the
// image grid): its centre, the radius that bounds its pixel centres, and its
// sums. An engine whose window lies wholly to one side of a tile's projected
// extent takes the tile's sums without reading its pixels.
struct PixelTile {
  std::size_t begin = 0, end = 0;
  double east = 0.0, north = 0.0, radius = 0.0;  // arcsec
  double sum_value = 0.0, sum_variance = 0.0;
};

struct PixelSet {
  std::vector<double> east;      // arcsec
  std::vector<double> north;     // arcsec
  std::vector<double> value;     // BUNIT
  // BUNIT^2 per pixel; empty when no noise is known or when every pixel has
  // the same variance (uniform_variance, one rms for the map).
  std::vector<double> variance;
  double uniform_variance = 0.0;  // BUNIT^2, used when `variance` is empty; 0: none
  Eigen::Matrix2d jacobian = Eigen::Matrix2d::Identity();  // arcsec per pixel
  // max |offset| over the pixels (arcsec): bounds n.x for every angle.
  // collect_pixels fills it; 0 means "unknown" (engines then compute it).
  double max_radius = 0.0;
  // Tiles in pixel order (collect_pixels makes 32 x 32 pixel tiles); empty
  // means one tile holding everything.
  std::vector<PixelTile> tiles;
  std::size_t size() const { return value.size(); }
  // Whether the pixels' noise is known (per pixel or uniform), and pixel i's variance.
  bool has_variance() const {
    return size() > 0 && (variance.size() == size() || (variance.empty() && uniform_variance > 0.0));
  }
  double variance_at(std::size_t i) const { return variance.empty() ? uniform_variance : variance[i]; }
  double pixel_area_arcsec2() const { return std::abs(jacobian.determinant()); }
  double pixel_scale_arcsec() const { return std::sqrt(pixel_area_arcsec2()); }
};

// Where the noise comes from: a per-pixel error map (1-sigma, BUNIT), or one
// rms for every pixel, or neither.
struct NoiseSpec {
  const Image* error_map = nullptr;  // same grid as the map
  double rms = 0.0;                  // used when error_map is null and rms > 0
};

// Collect the finite pixels of `map` (inside `aperture` when given, centres
// relative to `offsets.frame()`). Pixels whose error is not finite or <= 0 are
// dropped; with one rms the set's variance is uniform_variance. When
// `offsets` holds only the geometry (PixelOffsets::Holds::geometry_only) the
// offsets are computed from map.wcs a band of rows at a time
// (grid_row_offsets: the same numbers), so that a large map's offsets are
// never all held at once. Throws InputError when the error map's grid differs
// from the map's or when no pixel is left.
PixelSet collect_pixels(const Image& map, const PixelOffsets& offsets,
                        const std::optional<SkyEllipse>& aperture, const NoiseSpec& noise = {});

}  // namespace fulcrum::split
