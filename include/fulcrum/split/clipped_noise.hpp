// The noise of one pixel of a clipped line map: its mean, variance and the
// Hermite coefficients that give its covariance with a neighbour.
//
// Line maps are often clipped: a pixel keeps its value X = S + sigma Z (S the
// true brightness, Z standard normal) where X > t sigma and is set to 0
// elsewhere (t = clip_snr, e.g. 3). The kept value M = f(X) = X 1(X > t sigma)
// is not linear in the noise: a pixel near the threshold jumps between 0 and
// ~t sigma, so its variance can exceed sigma^2 several times, while a pixel far
// below it is almost always 0 and nearly noiseless. With a = (t sigma - S) /
// sigma, Q the upper normal tail and phi the normal density (moments of the
// truncated normal; e.g. Johnson, Kotz & Balakrishnan 1994, "Continuous
// Univariate Distributions" vol. 1, §10.1):
//   E[M]   = S Q(a) + sigma phi(a)
//   E[M^2] = (S^2 + sigma^2) Q(a) + sigma (S + t sigma) phi(a)
//   Var[M] = E[M^2] - E[M]^2.
//
// Covariance of two clipped pixels. When X_i, X_j are jointly Gaussian with
// correlation rho, Mehler's expansion of the bivariate normal density in
// Hermite polynomials (e.g. Kendall & Stuart, "The Advanced Theory of
// Statistics" vol. 1, §6.47) gives
//   Cov(f(X_i), f(X_j)) = sum_{k>=1} c_k(i) c_k(j) rho^k / k!,
//   c_k = E[f(S + sigma Z) He_k(Z)]   (He_k the probabilists' Hermite polynomials),
// and sum_k c_k^2 / k! = Var[M]. For the clipping function, with
// int_a^inf He_k phi = He_{k-1}(a) phi(a) and z He_k = He_{k+1} + k He_{k-1}:
//   c_1 = sigma (t phi(a) + Q(a)),
//   c_k = [S He_{k-1}(a) + sigma (He_k(a) + k He_{k-2}(a))] phi(a)   (k >= 2).
// A pixel far above the threshold has c_1 = sigma and nothing else (linear);
// at the threshold c_1^2 is 76% of the variance; far below, the variance sits
// in high orders, whose correlation rho^k is short-ranged.
//
// Units: brightness and sigma in the map's BUNIT; variance in BUNIT^2.
#pragma once

#include <vector>

namespace fulcrum::split {

// Var[X 1(X > t sigma)] for X ~ N(s, sigma^2); sigma > 0, t >= 0.
double clipped_pixel_variance(double s, double sigma, double t);

// E[X 1(X > t sigma)] for X ~ N(s, sigma^2).
double clipped_pixel_mean(double s, double sigma, double t);

// The brightness s whose clipped mean is `mean` (the inverse of
// clipped_pixel_mean, which increases with s); means at or below that of
// s = -10 sigma give -10 sigma.
double brightness_of_clipped_mean(double mean, double sigma, double t);

// c_1 .. c_kmax of the expansion above (element k-1 is c_k).
std::vector<double> clipped_hermite_coefficients(double s, double sigma, double t, int kmax);

}  // namespace fulcrum::split
