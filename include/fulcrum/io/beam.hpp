// The restoring beam (or seeing) of an image: an elliptical Gaussian.
//
// Axes are full widths at half maximum in arcsec (FITS BMAJ/BMIN are degrees
// and are converted on reading); the position angle is north through east in
// degrees, as BPA. The solid angle is the standard Gaussian-beam formula
//   Omega = pi * bmaj * bmin / (4 ln 2)
// (common practice; e.g. Wilson, Rohlfs & Huettemeister, "Tools of Radio
// Astronomy", the Gaussian beam solid angle).
#pragma once

#include <cmath>
#include <numbers>

namespace fulcrum {

// FWHM = 2 sqrt(2 ln 2) sigma for a Gaussian.
inline const double kFwhmPerSigma = 2.0 * std::sqrt(2.0 * std::numbers::ln2);

struct Beam {
  double bmaj_arcsec = 0.0;
  double bmin_arcsec = 0.0;
  double bpa_deg = 0.0;

  double solid_angle_arcsec2() const {
    return std::numbers::pi * bmaj_arcsec * bmin_arcsec / (4.0 * std::numbers::ln2);
  }
  // Geometric-mean FWHM, the "beam size" used when a single length is needed.
  double fwhm_arcsec() const { return std::sqrt(bmaj_arcsec * bmin_arcsec); }
  // Beam area in pixels for a pixel of the given area (arcsec^2).
  double pixels_per_beam(double pixel_area_arcsec2) const {
    return solid_angle_arcsec2() / pixel_area_arcsec2;
  }
};

}  // namespace fulcrum
