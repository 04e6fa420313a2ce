// The galaxy's footprint on a velocity map: which velocity pixels belong to
// the disc, before any fit sees them.
//
// Delivered velocity fields hold, besides the disc, pixels where a per-pixel
// line fit latched on to noise: single pixels and small clumps scattered over
// the field, and single velocities far from their neighbours inside the disc.
// They spread the footprint, move the first-guess centre and PA, and dilute
// the velocity gradient. Two robust cuts remove them, in this order:
//
//  1. Velocity outliers: for a pixel with at least `min_neighbours` usable
//     neighbours in the (2 r + 1)^2 box about it (r = `neighbour_radius`,
//     2: a 5 x 5 box), d = v - median(neighbours). The pixel is rejected when
//         |d| > k * max(sigma_map, sigma_local),
//     with sigma_map = 1.4826 * MAD of d over the map and sigma_local =
//     1.4826 * MAD of the neighbours' velocities (so a steep but smooth
//     gradient near the centre is not cut). k = `outlier_sigma`, 5 by
//     default: for Gaussian scatter 5 sigma rejects about 6e-7 of the pixels.
//     (MAD-based sigma: Hampel 1974, JASA 69, 383; 1.4826 = 1/Phi^-1(3/4).)
//  2. Islands: 8-connected groups of the remaining pixels smaller than
//     `min_island_beams` beam areas (one by default: a real feature of a
//     beam-convolved map covers at least one beam) are rejected. Groups of
//     one pixel are counted as isolated pixels. Without a beam the limit is
//     `min_island_pixels_no_beam` pixels.
//
// Units: the samples' (km/s, 0-based pixels). The thresholds are our own
// choices, stated here and in docs/kinematics.md.
#pragma once

#include <vector>

#include "fulcrum/kinematics/velocity_samples.hpp"

namespace fulcrum::kinematics {

struct FootprintOptions {
  bool enabled = true;
  int neighbour_radius = 2;          // pixels: a 5 x 5 box
  int min_neighbours = 3;
  double outlier_sigma = 5.0;        // k
  double min_island_beams = 1.0;     // in beam areas (Omega_beam / pixel area)
  int min_island_pixels_no_beam = 9;
};

struct FootprintSummary {
  bool enabled = true;
  int pixels_bad_error = 0;          // finite velocities left out for a missing/non-positive error
  int pixels_in = 0;                 // finite velocity pixels with a usable error
  int velocity_outliers = 0;         // cut 1
  int isolated_pixels = 0;           // cut 2, groups of one pixel
  int small_island_pixels = 0;       // cut 2, groups of 2 .. limit - 1 pixels
  int small_islands = 0;             // how many such groups
  int islands_kept = 0;
  int min_island_pixels = 0;         // the limit used
  double outlier_threshold_kms = 0;  // k * sigma_map
  int pixels_kept = 0;
  // 0-based pixels of every rejected sample and why: 'o' outlier, 'i'
  // isolated, 's' small island (for figures).
  std::vector<int> rejected_x, rejected_y;
  std::vector<char> rejected_why;
};

// Remove the rejected samples from `samples` (in place) and say what went.
FootprintSummary clean_footprint(VelocitySamples& samples, const FootprintOptions& options);

}  // namespace fulcrum::kinematics
