// Foreground stars projected near the centre of a galaxy on an optical
// image: found so that they can be masked before the centre estimators run
// (a bright star a few arcsec from the nucleus otherwise pulls every
// photometric centre onto itself).
//
// Two properties tell such a star from the galaxy's own nucleus:
//   * it is a point source: a circular Gaussian plus a local plane fitted
//     at it (point_source_fit.hpp) has the PSF's FWHM within
//     min(`fwhm_tolerance`, 15%), while a resolved nucleus is broader (an
//     n = 4 cusp seen through the PSF fits 20-25% broader);
//   * it is off the centre of the galaxy's outer isophotes: the centre of
//     the region where the PSF-smoothed galaxy is brighter than the level
//     enclosing half of its detection segment's area (the unweighted
//     centroid of that region's pixels, leaving out a disc of 1.5 FWHM
//     about every point source, so a star does not drag it and a nucleus
//     at the centre leaves a symmetric hole), by at least
//     `min_offset_fwhm` PSF FWHMs.
// Candidates are the local maxima (3x3) of a difference-of-Gaussians band
// pass (the image smoothed with the PSF minus smoothed with `wide_factor`
// times the PSF; structure of the PSF's size survives, the galaxy's smooth
// light mostly cancels) above `band_sigma` times its rms, on the galaxy,
// within `search_radius_fwhm` PSF FWHMs of the outer centre. An unresolved
// nucleus that is itself off-centre by more than `min_offset_fwhm` would be
// taken for a star; every masked star is reported, so the user can see it.
// Each star is subtracted by prepare_image (a Gaussian plus plane refitted
// there) and only its core, max(1 pixel, 0.6 FWHM), is masked: masking it
// out to its noise level would take the nucleus next to it too.
//
// Pixels 0-based, arrays nx*ny with x fastest, NaN = unusable; sizes on the
// sky through the Jacobian J = d(east, north)/d(x, y) (arcsec/pixel).
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <vector>

#include "fulcrum/io/wcs.hpp"

namespace fulcrum::photometry {

struct CentralStarOptions {
  double wide_factor = 3.0;
  double band_sigma = 8.0;
  double search_radius_fwhm = 5.0;
  double min_offset_fwhm = 1.0;
  double fwhm_tolerance = 0.25;
  double min_peak_snr = 10.0;   // fitted amplitude over the pixel noise
};

struct CentralStar {
  PixelCoord centre;            // 0-based, fitted
  double fwhm_arcsec = 0.0;     // fitted
  double peak_snr = 0.0;        // fitted amplitude / pixel rms
  double offset_arcsec = 0.0;   // from the outer-isophote centre
  double mask_radius_pixels = 0.0;
};

struct CentralStars {
  PixelCoord outer_centre;      // 0-based
  std::vector<CentralStar> stars;
};

// `galaxy`: 1 on the galaxy's detection segment. `pixel_rms`: per-pixel noise.
// `smoothed`, `smoothed_wide`: when given, `data` already smoothed to the PSF
// and to wide_factor times it (smooth_to_fwhm), which are then not made again.
CentralStars find_central_stars(const std::vector<double>& data, int nx, int ny, const Eigen::Matrix2d& jacobian,
                                double psf_fwhm_arcsec, const std::vector<std::uint8_t>& galaxy, double pixel_rms,
                                const CentralStarOptions& options = {},
                                const std::vector<double>* smoothed = nullptr,
                                const std::vector<double>* smoothed_wide = nullptr);

}  // namespace fulcrum::photometry
