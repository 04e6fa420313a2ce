// The tail direction from an image of the tail, when no tail PA is given.
//
// Units and conventions: PA north through east in degrees; offsets (east,
// north) arcsec about `centre`.
//
// The tail PA is the direction of the light-weighted mean unit vector of the
// emission outside the disc aperture:
//   V = sum_i f_i u_i,  u_i = (pixel offset i) / |offset i|,  PA = atan2(V_e, V_n),
// over pixels outside `disc` with f_i > detection_snr x sigma_i (or f_i > 0
// when no noise is known). Its error comes from a bootstrap over those
// pixels: each resample draws max(2, N / N_beam) pixels with replacement
// (N_beam pixels per beam: the number of independent samples of the light),
// and the error is the circular standard deviation sqrt(-2 ln R) of the
// resampled PAs (R the mean resultant length; Mardia & Jupp 2000, §2.3.4).
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>

#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/ellipse.hpp"

namespace fulcrum::robustness {

struct TailDirectionOptions {
  WorldCoord centre;
  SkyEllipse disc;                 // offsets about `centre`
  const Image* error_map = nullptr;
  double rms = 0.0;
  double detection_snr = 3.0;
  std::size_t n_boot = 2000;
  std::uint64_t seed = 1;
};

struct TailDirectionSummary {
  double tail_pa_deg = 0.0;
  double tail_pa_err_deg = 0.0;
  std::size_t n_pixels = 0;
  double resultant_fraction = 0.0;  // |V| / sum f: 1 = all light in one direction
  double tail_flux_sum = 0.0;       // sum of f over the pixels used (BUNIT x pixel)
};

// Throws InputError when no pixel outside the disc is detected.
TailDirectionSummary tail_direction(const Image& tail_image, const TailDirectionOptions& options);
nlohmann::json to_json(const TailDirectionSummary& t);

}  // namespace fulcrum::robustness
