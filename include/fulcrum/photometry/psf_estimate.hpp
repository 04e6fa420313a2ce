// The PSF size of an optical image measured from its stars.
//
// Stars are the most compact sources on an image. Candidates are local
// maxima (5x5) of the sky-subtracted image at least `detect_sigma` sky rms
// above the sky (background.hpp gives the level and rms). Each is sized
// first by the area of its connected half-maximum region (FWHM_guess =
// 2 sqrt(area / pi)) and then fitted with a circular sky Gaussian plus a
// constant (point_source_fit.hpp) over a disc of 1.5 FWHM_guess + 2
// pixels. A candidate is kept when it is
//   * not masked (NaN or set in `exclude`) and not within 3 pixels of the edge,
//   * sharper than the grid allows no more: half-maximum area >= 2 pixels
//     (a single hot pixel or cosmic ray is not a star) and a fitted FWHM of
//     at least one pixel,
//   * unsaturated: below SATURATE (header) or `saturation_level`, and not a
//     flat top (3 or more pixels equal to its maximum),
//   * isolated: no other candidate brighter than `neighbour_fraction` of its
//     peak within 2.5 FWHM_guess + 2 pixels,
//   * point-like: its fitted local background below `max_background_fraction`
//     of its amplitude (it does not sit on a galaxy), and the light in the
//     annulus from 1.5 to 3 fitted FWHMs, above that background, below
//     `max_wing_fraction` of the Gaussian's total flux plus 3 noise sigma
//     (a Gaussian leaves < 0.3% there, a star's real wings a few per cent,
//     an exponential or de Vaucouleurs nucleus far more).
// The kept FWHMs are combined robustly: the reference is the median of the
// sharpest group (FWHM <= 1.5 times the smallest), stars farther than
// max(3 x 1.4826 MAD, 10%) from it are dropped, and the estimate is the
// median of the rest. Its error is the standard error of the median,
// sqrt(pi/2) s / sqrt(N), with s the standard deviation of the kept FWHMs
// (N >= 3), or the fit errors combined (N = 2). At least two agreeing
// stars are needed: one compact source alone may be a galaxy's nucleus.
// All sizes in arcsec on the sky; pixel positions 0-based.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"

namespace fulcrum::photometry {

struct PsfEstimateOptions {
  double detect_sigma = 15.0;
  int max_candidates = 200;             // brightest maxima examined
  double neighbour_fraction = 0.05;
  double max_background_fraction = 0.2;
  double max_wing_fraction = 0.25;
  double max_fwhm_pixels = 30.0;
  std::optional<double> saturation_level;  // image units, before sky removal
};

struct PsfStar {
  PixelCoord centre;           // 0-based
  double fwhm_arcsec = 0.0;
  double fwhm_err_arcsec = 0.0;
  double peak_snr = 0.0;       // amplitude / sky rms
  bool used = false;           // in the final median
  std::string rejected;        // why not, when it was fitted but not used
};

struct PsfEstimate {
  bool ok = false;
  std::string reason;          // when !ok
  double fwhm_arcsec = 0.0;
  double fwhm_err_arcsec = 0.0;
  int stars_used = 0;
  int candidates = 0;          // maxima above detect_sigma examined
  std::vector<PsfStar> stars;  // every fitted candidate, used or not
};

// `exclude` may be null or hold one flag per pixel (1 = do not use).
PsfEstimate estimate_psf_from_stars(const Image& image, const std::vector<std::uint8_t>* exclude,
                                    const PsfEstimateOptions& options = {});

}  // namespace fulcrum::photometry
