// From a spectral-line cube to the maps the analysis needs: masked moments
// with their error maps.
//
//   MomentProducts p = make_moment_maps(cube, MomentOptions{});
//   write_moment_maps("out/", p);
//
// Steps:
//  1. Spectral axis -> channel velocities v_k and widths dv_k in km/s
//     (spectral_axis.hpp, through wcslib).
//  2. Noise per channel, sigma_k: the median absolute deviation scaled to a
//     Gaussian sigma (1.4826 MAD; the factor is 1/Phi^-1(3/4), common
//     practice, e.g. Rousseeuw & Croux 1993, JASA 88, 1273), iterated with
//     clipping of |x - median| > clip_sigma * sigma until stable, so that
//     emission does not inflate it. Optionally per pixel, from each spectrum.
//     Once the mask is made (step 3) the noise is measured again from the
//     voxels outside it (emission-free data), where a channel has at least
//     30 of them (8 per spectrum in per-pixel mode).
//  3. Mask (a voxel set; moments use only masked voxels):
//     * SmoothAndMask: smooth each channel to `smooth_factor` times the beam
//       and the spectrum with a boxcar of `smooth_channels`, measure the
//       smoothed cube's own noise the same way, keep voxels above
//       `threshold_sigma` times it, grow the mask by `grow_channels` and
//       `grow_pixels`, apply it to the unsmoothed cube.
//     * MomentMasking (Dame 2011, arXiv:1101.1499): smooth as above, find
//       voxels above `dame_threshold_sigma` in the smoothed cube, and unmask
//       every voxel of the original cube that contributes to them, i.e.
//       within the smoothing kernel (spatially one FWHM of the smoothing
//       kernel, spectrally the boxcar's half-width).
//     * External: a cube of the same shape; finite non-zero voxels are in.
//     * None: every finite voxel.
//  4. Moments over the masked channels of each pixel (S_k in BUNIT):
//       M0 = sum S_k dv_k                                       [BUNIT km/s]
//       M1 = sum S_k v_k dv_k / M0                              [km/s]
//       M2 = sqrt(sum S_k (v_k - M1)^2 dv_k / M0)               [km/s]
//     and their errors by first-order propagation of independent channel
//     noise (derived here; for constant sigma and dv the first is the
//     familiar sigma dv sqrt(N) quoted e.g. by Dame 2011):
//       sigma_M0^2 = sum sigma_k^2 dv_k^2
//       sigma_M1^2 = sum sigma_k^2 dv_k^2 (v_k - M1)^2 / M0^2
//     Outside the mask M0 = 0 and sigma_M0 = sigma dv (one channel: a floor
//     so that weights stay finite); M1 and its error need at least
//     `min_channels_velocity` channels and M0 > 0, M2 `min_channels_dispersion`,
//     else NaN. Peak = largest masked S_k (NaN where none). Pixels whose
//     spectrum is entirely blank are NaN in every map. The channel noise is
//     taken as independent between channels; Hanning-smoothed or otherwise
//     correlated channels make sigma_M0 an underestimate.
//  5. Total flux = sum M0 * pixel_area / beam_area in Jy km/s when BUNIT is
//     Jy/beam (beam area pi bmaj bmin / (4 ln 2)), else sum M0 in BUNIT km/s
//     per pixel, with the unit string beside the number.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/io/image.hpp"
#include "fulcrum/moments/spectral_axis.hpp"

namespace fulcrum {

enum class MaskMethod { SmoothAndMask, MomentMasking, External, None };
const char* mask_method_name(MaskMethod m);  // "smooth-and-mask", "moment-masking", "external", "none"
MaskMethod parse_mask_method(const std::string& s);  // throws InputError

struct NoiseOptions {
  double clip_sigma = 3.0;  // clipping threshold of the iteration
  int max_iterations = 20;
  bool per_pixel = false;   // noise from each pixel's spectrum instead of each channel
};

struct MomentOptions {
  SpectralAxisOptions spectral;
  NoiseOptions noise;
  MaskMethod mask = MaskMethod::SmoothAndMask;
  double smooth_factor = 2.0;      // smoothing beam FWHM = factor * cube beam (> 1)
  int smooth_channels = 3;         // boxcar width in channels (odd, >= 1)
  double threshold_sigma = 4.0;    // smooth-and-mask threshold on the smoothed cube
  int grow_channels = 1;           // grow the smooth-and-mask mask spectrally
  int grow_pixels = 2;             // and spatially (round, radius in pixels)
  double dame_threshold_sigma = 5.0;  // moment-masking threshold on the smoothed cube
  std::optional<Cube> external_mask;  // for MaskMethod::External
  int min_channels_velocity = 2;
  int min_channels_dispersion = 3;
};

struct MomentProducts {
  Image mom0, mom0_err;   // BUNIT km/s
  Image mom1, mom1_err;   // km/s
  Image mom2;             // km/s
  Image peak;             // BUNIT
  Image nchan;            // number of masked channels
  Cube mask;              // 1 in the mask, 0 outside
  std::string spectral_cards;  // spectral axis of the input as axis 3 (for writing the mask)
  SpectralAxis axis;
  std::vector<double> channel_rms;  // per channel, BUNIT (NaN for blank channels)
  std::optional<Image> pixel_rms;   // per pixel, when noise.per_pixel
  double total_flux = 0.0;
  double total_flux_err = 0.0;
  std::string flux_unit;            // "Jy km/s" or "<BUNIT> km/s (summed over pixels)"
  std::size_t mask_voxels = 0;
  nlohmann::json summary;           // what moments.json holds
};

// Robust Gaussian sigma of the finite values (1.4826 MAD with iterative
// clipping, see above); NaN when fewer than 3 finite values. `hit_bound`
// (optional) is set when the clipping was still dropping values after
// options.max_iterations passes (the sigma of the last pass is returned).
double robust_sigma(std::vector<double> values, const NoiseOptions& options, bool* hit_bound = nullptr);

MomentProducts make_moment_maps(const Cube& cube, const MomentOptions& options);

// Write mom0.fits, mom0_err.fits, mom1.fits, mom1_err.fits, mom2.fits,
// peak.fits, mask.fits, nchan.fits and moments.json into `dir`. Returns the
// file names.
std::vector<std::string> write_moment_maps(const std::string& dir, const MomentProducts& products,
                                           const std::string& input_path = "");

}  // namespace fulcrum
