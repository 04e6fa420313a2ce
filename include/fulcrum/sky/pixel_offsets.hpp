// The pixel grid of an image seen on the sky, about a reference position.
//
// PixelOffsets precomputes, for every pixel centre, its (east, north) offset
// in arcsec from the reference (OffsetFrame), and the local Jacobian
//   J = d(east, north) / d(x, y)   [arcsec per pixel]
// at the image centre, from which each pixel is the parallelogram spanned by
// the columns of J about its centre. Over a galaxy-sized map the Jacobian of a
// tangent-plane map varies by ~1e-8 relative per arcmin, far below anything
// measured here; `max_jacobian_variation()` reports the actual variation over
// the grid so that a caller can refuse very wide fields.
//
// This is how every later stage works on the sky instead of on pixel axes: a
// rotated, flipped or sheared grid is handled because only offsets and J are
// used. Pixel indices are 0-based.
#pragma once

#include <Eigen/Dense>
#include <cstddef>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum {

class PixelOffsets {
 public:
  // What the object holds: every pixel's offset, or only the grid's geometry
  // (frame, Jacobian, its variation) for a caller that streams the offsets
  // band by band with grid_row_offsets() instead of holding them all (a
  // large map's split: two doubles per pixel fewer at once).
  enum class Holds { every_pixel, geometry_only };

  PixelOffsets() = default;
  PixelOffsets(int nx, int ny, const CelestialWcs& wcs, WorldCoord reference,
               Holds holds = Holds::every_pixel);
  PixelOffsets(const Image& image, WorldCoord reference, Holds holds = Holds::every_pixel)
      : PixelOffsets(image.nx, image.ny, image.wcs, reference, holds) {}

  int nx() const { return nx_; }
  int ny() const { return ny_; }
  const OffsetFrame& frame() const { return frame_; }
  // False for Holds::geometry_only: then at(), east() and north() are empty.
  bool holds_pixels() const { return !east_.empty(); }
  // Offset of pixel (x, y) (0-based) from the reference.
  SkyOffset at(int x, int y) const {
    std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx_) * y;
    return {east_[i], north_[i]};
  }
  const std::vector<double>& east() const { return east_; }
  const std::vector<double>& north() const { return north_; }
  // Local Jacobian d(east, north)/d(x, y) in arcsec/pixel at the grid centre.
  const Eigen::Matrix2d& jacobian() const { return jac_; }
  // Pixel area in arcsec^2 (|det J|).
  double pixel_area_arcsec2() const { return std::abs(jac_.determinant()); }
  // Geometric-mean pixel size in arcsec.
  double pixel_scale_arcsec() const { return std::sqrt(pixel_area_arcsec2()); }
  // Largest relative change of J across the grid (corners vs centre).
  double max_jacobian_variation() const { return jac_variation_; }
  // Offset -> fractional pixel (0-based) through the local linear map about
  // the nearest precomputed point (exact to the Jacobian variation); for exact
  // inversion use wcs.world_to_pixel(frame().to_world(o)).
  PixelCoord offset_to_pixel_linear(SkyOffset o) const;

 private:
  int nx_ = 0, ny_ = 0;
  OffsetFrame frame_;
  std::vector<double> east_, north_;
  Eigen::Matrix2d jac_ = Eigen::Matrix2d::Identity();
  double jac_variation_ = 0.0;
  SkyOffset centre_offset_;  // offset of the grid centre pixel
  double cx_ = 0.0, cy_ = 0.0;
};

// The offsets (arcsec) about `frame` of the pixel centres of rows [y0, y1)
// of an nx x ny grid, row by row: east[x + nx (y - y0)]. The same numbers,
// bit for bit, as PixelOffsets holds (it fills itself with this function).
// TAN and SIN grids are computed as rotations of unit vectors
// (zenithal_offsets.hpp: wcslib's numbers to round-off, without per-pixel
// trigonometry); other projections use the grid's kept world positions when
// the WCS keeps them (CelestialWcs::keep_grid_world), else wcslib in chunks
// of a few thousand pixels, so that the working memory does not grow with
// the grid.
void grid_row_offsets(const CelestialWcs& wcs, const OffsetFrame& frame, int nx, int ny, int y0,
                      int y1, double* east, double* north);

// Jacobian d(east, north)/d(x, y) in arcsec/pixel at pixel p (central
// differences through the WCS) about `frame`.
Eigen::Matrix2d local_jacobian(const CelestialWcs& wcs, const OffsetFrame& frame, PixelCoord p);

// The position angle (north through east, degrees) of the +y pixel axis and
// whether the grid is flipped (east to the right when north is up), for
// `fulcrum inspect`.
struct GridOrientation {
  double north_pa_of_plus_y_deg = 0.0;  // PA on the sky of the +y pixel direction
  double pa_of_plus_x_deg = 0.0;        // PA on the sky of the +x pixel direction
  bool east_left_when_north_up = true;  // the usual astronomical parity
  double pixel_scale_x_arcsec = 0.0;
  double pixel_scale_y_arcsec = 0.0;
  double skew_deg = 0.0;                // departure of the axes from perpendicular
};
GridOrientation grid_orientation(const CelestialWcs& wcs, PixelCoord at);

}  // namespace fulcrum
