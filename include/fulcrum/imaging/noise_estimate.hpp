// The per-pixel noise of a line map (moment 0) estimated from its
// emission-free pixels, for when neither an error map nor an rms is given.
//
// Method (common practice for radio maps; the constants are standard
// statistics):
//   1. Location m and scale s of the finite pixels: the median and
//      1.4826 x the median absolute deviation (MAD; 1.4826 = 1/Phi^-1(3/4)
//      makes it the standard deviation of a Gaussian).
//   2. Emission: pixels above m + `detect_sigma` s, grown by `grow_beams`
//      beam FWHMs (the beam from the map's header; one pixel without one),
//      are left out; so are pixels beyond +-`clip_sigma` s of m. Steps 1-2
//      repeat on the remaining pixels until the set stops changing.
//   3. rms = 1.4826 x MAD of the emission-free pixels. As a check, the
//      negative side alone (emission is positive): the rms of (v - m) over
//      the pixels below m, divided by sqrt(1 - 2 k phi(k) / (2 Phi(k) - 1))
//      for the clip at -k s (the variance of a truncated normal); a ratio
//      outside [0.8, 1.25] is flagged in `check`.
// Refused (ok = false, `reason` says why) when fewer than `min_pixels`
// emission-free pixels remain, or when their spread is zero (a masked
// moment map is exactly 0 outside its mask and carries no noise there).
// Units are the map's (BUNIT). Map noise is correlated over the beam; this
// is the per-pixel rms, as an error map would give it.
#pragma once

#include <cstddef>
#include <string>

#include "fulcrum/io/image.hpp"

namespace fulcrum {

struct NoiseEstimateOptions {
  double detect_sigma = 4.0;
  double grow_beams = 1.0;
  double clip_sigma = 3.0;
  int min_pixels = 100;
  int max_iterations = 20;
};

struct NoiseEstimate {
  bool ok = false;
  std::string reason;            // when !ok
  double rms = 0.0;              // map units
  double location = 0.0;         // median of the emission-free pixels
  double rms_negative_side = 0.0;
  std::size_t pixels_used = 0;   // emission-free pixels
  std::size_t pixels_finite = 0;
  std::string check;             // empty, or what disagrees
  // "noise estimated from N emission-free pixels: rms = X unit"
  std::string sentence(const std::string& unit) const;
};

NoiseEstimate estimate_map_noise(const Image& map, const NoiseEstimateOptions& options = {});

}  // namespace fulcrum
