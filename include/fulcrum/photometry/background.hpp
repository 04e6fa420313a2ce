// The sky level and noise of an optical image by iterative sigma clipping.
//
// The sky is the location of the pixel values once sources are removed:
// starting from every usable pixel, the median m and the standard deviation
// s of the kept values are computed and values with |v - m| > k s are
// dropped; this repeats until no value is dropped (or `max_iterations`).
// The level is the median of the survivors (robust to the faint source
// wings that clipping leaves in) and the rms their standard deviation,
// corrected for the truncation of a Gaussian at +-k s:
//   var_trunc / var = 1 - 2 k phi(k) / (2 Phi(k) - 1)
// (the variance of a doubly truncated normal; e.g. Johnson, Kotz &
// Balakrishnan, "Continuous Univariate Distributions", vol. 1, ch. 13).
// This is the standard sigma-clipped sky estimate (common practice).
//
// Units are those of the image (counts, "adu"). Pixels that are NaN or set
// in `exclude` are not used.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace fulcrum::photometry {

struct BackgroundOptions {
  double clip_sigma = 3.0;    // k
  int max_iterations = 30;
  bool correct_truncation = true;
};

struct BackgroundSummary {
  double level = 0.0;       // sky level (image units)
  double rms = 0.0;         // per-pixel noise (image units)
  std::size_t n_used = 0;   // pixels that survived the clipping
  std::size_t n_input = 0;  // usable pixels offered
  int iterations = 0;
  bool converged = false;
};

// `exclude` may be empty (nothing excluded) or have one entry per value.
BackgroundSummary estimate_background(const std::vector<double>& values,
                                      const std::vector<std::uint8_t>& exclude,
                                      const BackgroundOptions& options = {});

// Median of a copy of `v` (NaN-free input); 0 for an empty vector.
double median_of(std::vector<double> v);

}  // namespace fulcrum::photometry
