// The spectral axis of a cube as velocities, through wcslib.
//
// The axis may be frequency (FREQ), radio or optical velocity (VRAD, VOPT,
// or the older VELO-xxx / FELO-xxx forms, which wcslib's spcfix translates),
// in any channel order and any unit wcslib knows (m/s, km/s, Hz, GHz, ...).
// The velocity of every channel is computed by wcslib (wcssptr translates the
// axis to VRAD or VOPT, wcsp2s evaluates it), so non-linear cases such as
// optical velocity on a frequency axis are exact.
//
// Conventions (the standard definitions, Greisen et al. 2006, A&A 446, 747,
// table 1), with c = 299792.458 km/s and nu0 the rest frequency:
//   radio    v = c (1 - nu / nu0)
//   optical  v = c (nu0 / nu - 1)
// The convention follows the axis (VRAD: radio, VOPT/FELO: optical) unless
// the options ask for the other one; a frequency axis gives radio velocities
// by default (common practice for mm and radio line cubes). The rest
// frequency comes from RESTFRQ (or the older RESTFREQ), or the override
// option, which wins. Velocities are in km/s; channel k is plane k of the
// cube (0-based), whatever the sign of the channel step.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"

namespace fulcrum {

enum class VelocityConvention { Radio, Optical };

const char* convention_name(VelocityConvention c);  // "radio" / "optical"

struct SpectralAxisOptions {
  std::optional<double> rest_frequency_hz;       // overrides RESTFRQ/RESTFREQ
  std::optional<VelocityConvention> convention;  // default: from the axis
};

struct SpectralAxis {
  std::vector<double> velocity_kms;  // channel centres
  std::vector<double> width_kms;     // |v(k + 1/2) - v(k - 1/2)| per channel
  VelocityConvention convention = VelocityConvention::Radio;
  std::string axis_ctype;            // CTYPE of the axis as in the header
  std::string velocity_ctype;        // what it was translated to (e.g. VOPT-F2W)
  double rest_frequency_hz = 0.0;    // 0 when unknown and not needed
  bool increasing() const { return velocity_kms.size() < 2 || velocity_kms[1] > velocity_kms[0]; }
};

// The spectral axis of a header (80-char cards) whose spectral axis is FITS
// axis `spectral_axis` (1-based) of length `nz`. Throws InputError naming
// `source` when there is no spectral axis, when a needed rest frequency is
// missing, or when wcslib cannot evaluate the axis.
SpectralAxis spectral_axis_from_header(const std::string& header, int spectral_axis, int nz,
                                       const SpectralAxisOptions& options, const std::string& source);
SpectralAxis spectral_axis_of(const Cube& cube, const SpectralAxisOptions& options);

// Header cards (80-char records) that describe the spectral axis of `header`
// as FITS axis 3 (CTYPE3, CRVAL3, CDELT3, CRPIX3, CUNIT3, RESTFRQ, SPECSYS,
// ...), for writing a cube (e.g. a mask) on the same spectral grid.
std::string spectral_cards_as_axis3(const std::string& header, int spectral_axis);

// The Doppler conventions, exactly as defined above (km/s, Hz).
double radio_velocity_kms(double freq_hz, double rest_hz);
double optical_velocity_kms(double freq_hz, double rest_hz);
double frequency_from_radio_kms(double v_kms, double rest_hz);
double frequency_from_optical_kms(double v_kms, double rest_hz);

}  // namespace fulcrum
