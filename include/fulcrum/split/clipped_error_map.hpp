// Per-pixel errors of a clipped line map for the split's variance channel:
// what each pixel adds to the variance of a sum over a large region,
// including its correlation with its neighbours through the clipping.
//
// The split (half_split.hpp) takes Var(sum_i a_i M_i) = eta sum_i a_i w_i with
// eta = noise_correlation_beams x N_beam, which is exact for an unclipped map
// (w_i = sigma_i^2) when the weights a_i change slowly over the correlation
// length. For a clipped map the pixels' covariances follow the Hermite
// expansion of clipped_noise.hpp, Cov(M_i, M_j) = sum_k c_k(i) c_k(j)
// rho_ij^k / k!, so the pixel's share of the variance of a large sum is
//   v_i = sum_j Cov(M_i, M_j) = sum_k c_k(i) [sum_j rho_ij^k c_k(j)] / k!,
// and w_i = v_i / eta. rho is the noise correlation of the one noise model
// (docs/uncertainties.md §1): a Gaussian of covariance noise_correlation_beams
// x the beam's, so rho^k is a Gaussian of 1/k of that covariance and each
// inner sum is one Gaussian convolution of the map of c_k. The orders are
// summed while rho^k is wider than half a pixel (at most 8); the rest of the
// variance is counted with the neighbour sum of the next order (an upper
// bound for every higher order). Neighbours across a footprint edge, a blank
// or the map edge are counted as they are, which the plain eta sigma^2 does
// not do: on the independent generator's 3-sigma clipped maps the clipped
// pixels' correlation integrates to ~0.7 eta, not eta.
//
// The true brightness S in c_k is not known. The map smoothed by the beam
// (the matched filter of beam-smooth emission), mu, estimates the local mean
// of the CLIPPED map, E[M] = m(S), which is below S near the threshold; S is
// taken as m^-1(mu) (clipped_noise.hpp), not as mu itself. Measured on the
// generator's four presets, 200 realisations each, at the true centre
// (tools/clipped_variance_study.py, docs/uncertainties.md "Errors of A"):
// the predicted sigma_A is within 4% of the scatter of A with the true S and
// with this plug-in alike; smoothing by beam/sqrt 2 without the inverse (the
// former rule) gave 0.72-0.90 of it. A smaller kernel makes mu noisier and
// the variance, concave in mu, too small; a larger one over-smooths S.
//
// Units: BUNIT of the map; the returned errors are sqrt(w_i) in BUNIT.
#pragma once

#include "fulcrum/io/image.hpp"

namespace fulcrum::split {

// Effective 1-sigma errors sqrt(w_i) of the clipped map `map` (clipped at
// clip_snr x its unclipped errors, given by error_map or by rms when it is
// null; clipped pixels hold 0, blank pixels without an error stay blank).
// `eta` is the split's correlated-pixel factor (>= 1). Without a beam the
// pixels are taken as independent (w_i = Var M_i).
Image clipped_error_map(const Image& map, const Image* error_map, double rms, double clip_snr,
                        double noise_correlation_beams, double eta);

}  // namespace fulcrum::split
