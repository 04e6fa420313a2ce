// Leading and trailing halves of a line map about one centre and one tail
// direction: fluxes with their units and errors, ratio and asymmetry.
//
// Units and conventions (DESIGN.md §2): centre in RA/Dec degrees, offsets
// (east, north) arcsec about it, tail PA north through east in degrees; the
// leading half is the side away from the tail (PA tail + 180). Fluxes are in
// Jy km/s when BUNIT is Jy/beam km/s (pixel sum x pixel area / beam area,
// beam area pi BMAJ BMIN / (4 ln 2)), Jy when BUNIT is Jy/beam, and otherwise
// the plain pixel sum in the map's unit (flux_unit says "<BUNIT> x pixel").
// A = (L - T)/(L + T) > 0 means a leading-side excess.
//
// Errors. With per-pixel 1-sigma errors e_i (an error map, or one rms), the
// white-noise variance of a half is sum_i a_i e_i^2 (a_i the exact fraction of
// pixel i in that half; a cut pixel's noise is shared in proportion to area,
// which keeps the variance linear in a_i and lets it go through the same
// projection engine). Map noise is correlated: with correlation function rho
// (rho(0) = 1), the variance of a sum over a region much larger than the
// correlation length is sum_i e_i^2 x (integral of rho over the sky) /
// Omega_pix. That factor is noise_correlation_beams x N_beam, N_beam =
// Omega_beam/Omega_pix: 1 x N_beam when the noise correlation has the beam's
// shape (interferometric image noise, common practice), 2 x N_beam when the
// noise is white noise convolved with the beam (its correlation is the
// beam's autocorrelation, FWHM sqrt 2 larger); floored at 1. Then, treating
// L and T as independent,
//   sigma_A^2 = 4 (T^2 sigma_L^2 + L^2 sigma_T^2) / (L + T)^4.
// A clipped map (SplitOptions::clip_snr > 0: pixels below clip_snr sigma were
// set to 0 or blanked) is not linear in its noise: each pixel's sigma^2 is
// replaced by its share of the clipped map's correlated variance divided by
// the factor above (clipped_error_map.hpp), so that factor x the channel's
// sum is the variance of a half; blank pixels whose error is known count as
// clipped pixels of value 0 (they could have been kept, so they carry noise
// too).
#pragma once

#include <nlohmann/json.hpp>
#include <optional>
#include <string>

#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/split/pixel_set.hpp"
#include "fulcrum/split/projection_engine.hpp"

namespace fulcrum::split {

// An analysis aperture centred on the split centre (or another position).
struct ApertureSpec {
  double radius_arcsec = 0.0;  // semi-major axis
  double pa_deg = 0.0;         // major-axis PA
  double axis_ratio = 1.0;     // b/a in (0, 1]
  std::optional<WorldCoord> centre;  // default: the split centre
};

// How raw pixel sums become fluxes.
struct FluxScale {
  double factor = 1.0;       // flux = factor x pixel sum
  std::string unit;          // e.g. "Jy km/s"
  bool per_beam = false;     // BUNIT was per beam
};
// Throws InputError (naming the map) when BUNIT is per beam but the map has no beam.
FluxScale flux_scale(const Image& map, double pixel_area_arcsec2);

// Everything a split, a scan, a flip search or a bootstrap needs about one map.
struct SplitProblem {
  PixelSet pixels;            // offsets about `reference`
  WorldCoord reference;       // the frame origin: the nominal centre
  FluxScale scale;
  double pixels_per_beam = 1.0;   // noise-correlation factor (>= 1): noise_correlation_beams x N_beam
  double clip_snr = 0.0;          // > 0: the map was clipped at this S/N (clip-aware variances)
  std::optional<Beam> beam;
  std::optional<SkyEllipse> aperture;  // in the reference frame
  std::string noise_source;   // "error map <path>", "rms X", or "none"
  std::string map_path;
  double max_jacobian_variation = 0.0;

  // The (east, north) offset in arcsec of a sky position in this problem's
  // frame (tangent-plane offsets about `reference`, sky/offset_frame.hpp).
  SkyOffset offset_of(WorldCoord position) const { return OffsetFrame(reference).to_offset(position); }
};

struct SplitOptions {
  WorldCoord centre;
  double tail_pa_deg = 0.0;
  std::optional<ApertureSpec> aperture;
  double rms = 0.0;                   // used when no error map is given
  const Image* error_map = nullptr;   // same grid as the map
  double clip_snr = 0.0;              // > 0: pixels below clip_snr sigma were set to 0 or blanked
  // Integral of the noise correlation in beam areas: 2 (default) for noise
  // white before the beam ("smoothed", the project's one noise model,
  // docs/uncertainties.md), 1 for noise correlated like the beam itself.
  double noise_correlation_beams = 2.0;
};

// Build the problem: offsets about options.centre, aperture, noise, units.
SplitProblem prepare_split(const Image& map, const SplitOptions& options);

struct SplitSummary {
  double leading_flux = 0.0, trailing_flux = 0.0;
  double leading_err = 0.0, trailing_err = 0.0;  // NaN when no noise is known
  double total_flux = 0.0;
  std::string flux_unit;
  double ratio = 0.0;           // L / T
  double asymmetry = 0.0;       // (L - T)/(L + T)
  double asymmetry_err = 0.0;   // NaN when no noise is known
  double tail_pa_deg = 0.0;
  double leading_pa_deg = 0.0;
  SkyOffset centre_offset;      // of the split centre from the reference
  WorldCoord centre;
  std::size_t n_pixels = 0;
  double pixels_per_beam = 1.0;
  std::string noise_source;
};

// Turn engine sums into a summary (units, errors, ratio, A).
SplitSummary summarise_halves(const SplitProblem& problem, const HalfSums& sums, Angle tail_pa,
                              SkyOffset centre_offset);
// One split about centre_offset (default: the reference) through the engine.
SplitSummary split_at(const SplitProblem& problem, Angle tail_pa, SkyOffset centre_offset = {});
// When A of a split is undefined (check_split_defined): fewer pixels than
// kMinSplitPixels or kMinSplitBeams correlation areas, a total that is not
// positive, below kMinTotalFraction of the summed |flux| (cancellation), or
// below kMinTotalSnr times its own noise (when the noise is known).
inline constexpr double kMinSplitPixels = 4.0;
inline constexpr double kMinSplitBeams = 2.0;
inline constexpr double kMinTotalFraction = 1e-6;
inline constexpr double kMinTotalSnr = 3.0;
// Throws InputError naming `path` when A of the summary is undefined (above).
void check_split_defined(const SplitProblem& problem, const SplitSummary& summary, const std::string& path);
// Convenience: prepare + split at the options' centre; refuses an undefined
// A (check_split_defined).
SplitSummary split_halves(const Image& map, const SplitOptions& options);

// sigma_A from L, T and their variances (formula above).
double asymmetry_error(double L, double T, double varL, double varT);

nlohmann::json to_json(const SplitSummary& s);

}  // namespace fulcrum::split
