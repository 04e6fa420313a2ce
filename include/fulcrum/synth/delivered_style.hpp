// Mock line maps made to look the way real maps are delivered, so that the
// readers and cleaners are tested on many cases rather than a few.
//
// With `enabled`, the velocity, velocity-error, intensity and intensity-error
// maps of a mock are changed as follows (everything else stays as made):
//   * blanking: every missing pixel holds `blank_value` (-999 by default)
//     instead of NaN, and the files carry BLANK = blank_value although they
//     are floating point (BITPIX = -32), where the FITS standard defines
//     BLANK for integer data only;
//   * the observed field: pixels farther than `field_radius_fraction` times
//     the smaller grid half-size from the grid centre are blank in all four
//     maps (a primary-beam cut);
//   * failed fits: a fraction `failed_fit_fraction` of the galaxy's velocity
//     pixels keep their velocity but get an error of +inf (half of them) or
//     1e38 (the other half), and `failed_fit_pixels_outside` pixels of the
//     field outside the galaxy get a velocity of blank_value and an error of
//     +inf or 1e38; the intensity-error map gets 1e38 at the same outside
//     pixels;
//   * scattered pixels: `scattered_pixels` isolated single pixels (no other
//     velocity pixel among their 8 neighbours) outside the galaxy get wild
//     velocities, uniform within vsys +- `scattered_velocity_range_kms`, and
//     ordinary-looking errors (uniform 5-30 km/s);
//   * history: `history_cards` HISTORY cards of invented processing steps.
// Units as in mock_galaxy.hpp (km/s; Jy/beam km/s). The counts of each
// kind are returned for the truth file.
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"

namespace fulcrum::synth {

struct DeliveredSpec {
  bool enabled = false;
  double blank_value = -999.0;
  double field_radius_fraction = 0.95;
  double failed_fit_fraction = 0.01;
  int failed_fit_pixels_outside = 150;
  int scattered_pixels = 300;
  double scattered_velocity_range_kms = 600.0;
  int history_cards = 150;
};

struct DeliveredMaps {
  Image velocity, velocity_error, intensity, intensity_error;  // blank_value where missing
  std::vector<std::string> history;
  nlohmann::json summary;  // counts of blank, +inf, 1e38 and scattered pixels per map
};

// `velocity` NaN outside the galaxy's mask; the others on the same grid.
DeliveredMaps make_delivered(const Image& velocity, const Image& velocity_error, const Image& intensity,
                             const Image& intensity_error, double vsys_kms, const DeliveredSpec& spec,
                             std::uint64_t seed);

// Write `image` as 32-bit floats with its WCS, beam and unit, BLANK =
// `blank_value`, the extra cards (name, value as text, numeric?) and the
// HISTORY lines; atomically (a temporary file renamed into place).
struct TextCard {
  std::string name, value, comment;
  bool numeric = false;
};
void write_delivered_image(const std::string& path, const Image& image, double blank_value,
                           const std::vector<TextCard>& extra, const std::vector<std::string>& history);

}  // namespace fulcrum::synth
