// Finding the galaxy on an optical image and masking everything else.
//
// Detection works on the background-subtracted image smoothed with the PSF
// (a matched filter for unresolved sources): pixels above `detect_sigma`
// times the rms of the smoothed image are grouped into 8-connected segments
// of at least `min_pixels`. The galaxy is the segment that contains
// `galaxy_hint` when one is given, otherwise the extended segment with the
// largest summed flux; extended means an area of at least
// `extended_psf_areas` PSF areas and light-weighted second moments whose
// size sqrt(det M) exceeds `extended_size_ratio` times the PSF's sigma^2 (a
// bright star has a large segment but the PSF's moments). Every
// other segment (foreground stars, neighbours) is masked, grown by
// `grow_fwhm` PSF FWHMs so that its wings go too.
//
// Stars near the galaxy's centre are found first (central_star.hpp: point
// sources off the centre of the outer isophotes); those within
// `core_exclusion_fwhm` FWHMs of that centre are listed (near_centre), their
// core masked (prepare_image subtracts the rest of the star), and left out
// of the search for the core below; farther ones are left to the search for
// stars on the galaxy.
//
// Stars projected on the galaxy itself are found as compact peaks of the
// difference between the image smoothed with the PSF and smoothed with
// `wide_factor` times the PSF (a difference-of-Gaussians band pass that
// keeps structure of the PSF's size): local maxima above `star_sigma` times
// the rms of the band-passed image, carrying at least `star_fraction` of the
// local light, and farther than `core_exclusion_fwhm` FWHMs from the
// galaxy's core (the brightest point after the wide smoothing, where a
// star's peak is diluted; so the galaxy's own nucleus is not masked). Each
// is masked out to the radius where a PSF of its amplitude falls to the
// pixel noise, sigma_psf * sqrt(2 ln(A / rms)).
//
// Pixel indices are 0-based, arrays are nx*ny with x fastest; the PSF is a
// circular Gaussian of FWHM `psf_fwhm_arcsec` on the sky turned into pixel
// space through the Jacobian (arcsec/pixel), so any grid orientation works.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/wcs.hpp"
#include "fulcrum/photometry/central_star.hpp"

namespace fulcrum::photometry {

struct SourceMaskOptions {
  double detect_sigma = 3.0;
  int min_pixels = 5;
  double extended_psf_areas = 3.0;
  double extended_size_ratio = 1.5;  // second-moment size^2 over the PSF's
  double grow_fwhm = 1.0;
  bool mask_stars_on_galaxy = true;
  double wide_factor = 3.0;
  double star_sigma = 8.0;
  double star_fraction = 0.1;
  double core_exclusion_fwhm = 2.5;
  bool mask_central_stars = true;
  CentralStarOptions central;
  std::optional<PixelCoord> galaxy_hint;  // 0-based pixel inside the galaxy
};

struct MaskedSource {
  PixelCoord centre;           // 0-based
  double radius_pixels = 0.0;  // of the masked disc (on-galaxy stars), or 0 (segment)
  int area_pixels = 0;
  bool on_galaxy = false;
  bool near_centre = false;    // a point source near the centre (central_star.hpp)
  double fwhm_arcsec = 0.0;    // fitted, for near-centre stars
  double peak_snr = 0.0;       // fitted amplitude / pixel rms, for near-centre stars
  double offset_arcsec = 0.0;  // from the outer-isophote centre, for near-centre stars
};

struct SourceMaskSummary {
  bool galaxy_found = false;
  std::string reason;                  // why not, when !galaxy_found
  std::vector<std::uint8_t> galaxy;    // 1 on the galaxy's segment
  std::vector<std::uint8_t> masked;    // 1 where another source is masked
  std::vector<MaskedSource> sources;   // what was masked
  int galaxy_area_pixels = 0;
  double smoothed_rms = 0.0;           // rms of the PSF-smoothed image
  double galaxy_peak_snr = 0.0;        // peak of the smoothed galaxy / smoothed rms
  PixelCoord brightest;                // brightest smoothed pixel of the galaxy
  PixelCoord outer_centre;             // centre of the outer isophotes (central_star.hpp)
};

// `data`: background-subtracted image, NaN where unusable. `jacobian`:
// d(east, north)/d(x, y) in arcsec/pixel.
SourceMaskSummary find_and_mask_sources(const std::vector<double>& data, int nx, int ny,
                                        const Eigen::Matrix2d& jacobian, double psf_fwhm_arcsec,
                                        const SourceMaskOptions& options = {});

// Gaussian smoothing of `data` (NaN = missing, normalised convolution) with a
// circular sky Gaussian of FWHM `fwhm_arcsec`; separable (SmoothOptions::
// separable) on square pixels.
std::vector<double> smooth_to_fwhm(const std::vector<double>& data, int nx, int ny,
                                   const Eigen::Matrix2d& jacobian, double fwhm_arcsec);

}  // namespace fulcrum::photometry
