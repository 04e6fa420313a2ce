// An optical image made ready for the centre estimators.
//
// prepare_image() checks the image, removes the sky (background.hpp), finds
// the galaxy and masks every other source (source_mask.hpp) plus the pixels
// of an optional mask file, and looks for saturation. The estimators then
// all work on the same `data`: image minus sky, NaN where a pixel is unusable
// (NaN on input, set in the mask file, or masked automatically).
//
// What refuses the *whole image* is an InputError (no WCS, too few finite
// pixels, a mask on another grid, a PSF FWHM <= 0). What refuses only the
// *measurement* is a status: `ok` is false and `reason` says why (a flat
// image, no galaxy, a saturated core); every estimator then fails with that
// reason, and the caller still gets a summary rather than an exception.
//
// Saturation: pixels at or above `saturation_level`, or the header keyword
// SATURATE, or -- when neither is known -- a plateau of at least
// `plateau_pixels` connected galaxy pixels all equal to the image maximum
// (a clipped core; a noise-free symmetric image has at most 4 equal maxima).
//
// Geometry: pixels are 0-based; `jacobian` is d(east, north)/d(x, y) in
// arcsec/pixel at the grid centre (sky/pixel_offsets.hpp); the first guess
// of the galaxy's centre, size and shape come from the light-weighted
// moments of its segment.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/photometry/background.hpp"
#include "fulcrum/photometry/source_mask.hpp"

namespace fulcrum::photometry {

struct PreparationOptions {
  double psf_fwhm_arcsec = 0.0;  // required (> 0)
  BackgroundOptions background;
  SourceMaskOptions sources;
  bool automatic_masking = true;
  std::optional<double> saturation_level;  // image units, before sky removal
  int plateau_pixels = 5;
  int min_finite_pixels = 64;
};

struct PreparedImage {
  int nx = 0, ny = 0;
  std::vector<double> data;            // image minus sky; NaN where unusable
  std::vector<std::uint8_t> galaxy;    // 1 on the galaxy's detection segment
  std::vector<std::uint8_t> user_masked;
  std::vector<std::uint8_t> auto_masked;
  Eigen::Matrix2d jacobian = Eigen::Matrix2d::Identity();  // arcsec/pixel
  double pixel_scale_arcsec = 1.0;
  double psf_fwhm_arcsec = 0.0;
  BackgroundSummary background;
  SourceMaskSummary sources;
  bool ok = false;
  std::string reason;
  bool saturated = false;
  int saturated_pixels = 0;
  // First guesses from the segment's moments.
  PixelCoord guess;                 // 0-based
  double radius_arcsec = 0.0;       // sqrt(segment area / pi)
  double axis_ratio = 1.0;
  double pa_deg = 0.0;              // major axis, north through east
  double total_flux = 0.0;          // summed over the segment (image units)

  bool usable(int x, int y) const {
    return x >= 0 && y >= 0 && x < nx && y < ny && std::isfinite(data[x + nx * y]);
  }
  // Sky offset (east, north) arcsec of a pixel-space displacement.
  Eigen::Vector2d to_sky(double dx, double dy) const { return jacobian * Eigen::Vector2d(dx, dy); }
  // Pixel-space displacement of a sky offset.
  Eigen::Vector2d to_pixels(double de, double dn) const {
    return jacobian.inverse() * Eigen::Vector2d(de, dn);
  }
};

PreparedImage prepare_image(const Image& image, const Image* mask, const PreparationOptions& options);

// A box of 0-based pixels, corners inclusive.
struct PixelBox {
  int x0 = 0, y0 = 0, x1 = -1, y1 = -1;
  bool empty() const { return x1 < x0 || y1 < y0; }
};

// The part of `p` inside `b` (not empty, on the image): the per-pixel
// arrays cut to the box, everything else copied; pixel (x, y) of the cut is
// pixel (x + b.x0, y + b.y0) of `p`, and `guess` is moved with it.
PreparedImage cut_out(const PreparedImage& p, const PixelBox& b);

// The values of `data` (p.nx * p.ny) inside `b`, row by row, into `out`.
void cut_values(const std::vector<double>& data, int nx, const PixelBox& b, std::vector<double>& out);

// Bilinear interpolation of `d` (nx*ny, x fastest) at the 0-based point
// (x, y); NaN when any of the four neighbours is NaN or off the grid.
double bilinear(const std::vector<double>& d, int nx, int ny, double x, double y);

}  // namespace fulcrum::photometry
