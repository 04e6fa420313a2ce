// The noise of a pixel in a clipped line map.
//
// Line maps are often clipped: a pixel keeps its value X = S + sigma Z (S the
// true brightness, Z standard normal) where X > t sigma and is set to 0
// elsewhere (t = clip_snr, e.g. 3). The kept value M = X 1(X > t sigma) is not
// linear in the noise: a pixel near the threshold jumps between 0 and ~t sigma,
// so its variance can exceed sigma^2 several times, while a pixel far below
// it is almost always 0 and nearly noiseless. With a = (t sigma - S) / sigma,
// Q the upper normal tail and phi the normal density (moments of the
// truncated normal; e.g. Johnson, Kotz & Balakrishnan 1994, "Continuous
// Univariate Distributions" vol. 1, §10.1):
//   E[M]   = S Q(a) + sigma phi(a)
//   E[M^2] = (S^2 + sigma^2) Q(a) + sigma (S + t sigma) phi(a)
//   Var[M] = E[M^2] - E[M]^2.
// S is not known; we plug in the map smoothed by a Gaussian of the beam's
// shape and FWHM / sqrt 2 (the true S is itself beam-smooth, so this mainly
// averages the noise down, and it fills clipped pixels between detected ones
// with a sensible level). This variance replaces sigma^2 in the split's
// variance channel (half_split.hpp) and so in sigma_A, the bootstrap noise
// and the verdict's S/N. How well that works is measured on an independent
// generator's clipped maps (docs/uncertainties.md).
//
// Units: brightness and sigma in the map's BUNIT; variance in BUNIT^2.
#pragma once

#include "fulcrum/io/image.hpp"

namespace fulcrum::split {

// Var[X 1(X > t sigma)] for X ~ N(s, sigma^2); sigma > 0, t >= 0.
double clipped_pixel_variance(double s, double sigma, double t);

// Per-pixel 1-sigma errors of the clipped map `map` (same grid): sqrt of the
// clipped variance at the smoothed plug-in brightness, from the unclipped
// errors (error_map, or rms when it is null). Blank pixels stay blank. The
// map must have a beam (else the plug-in is the pixel value itself).
Image clipped_error_map(const Image& map, const Image* error_map, double rms, double clip_snr);

}  // namespace fulcrum::split
