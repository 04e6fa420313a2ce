// Gaussian noise fields with the correlation of white noise smoothed by an
// elliptical Gaussian, drawn by FFT: what the calibration mocks add to their
// line and velocity maps, many times over one grid.
//
// The field is white noise convolved with the kernel K of gaussian_smooth.hpp
// (gaussian_kernel: the Gaussian of pixel covariance C sampled at pixel
// lags, truncated at `truncate_sigma` and normalised), divided by
// sqrt(sum K^2), so that each pixel has unit variance and the correlation
// between pixels a lag d apart is sum_x K(x) K(x + d) / sum K^2 (for an
// untruncated, well-sampled kernel a Gaussian of covariance 2C).
//
// How it is drawn. On a periodic grid of Mx x My >= (nx + 2 hx) x (ny + 2 hy)
// cells (hx, hy the kernel's half widths; sizes with factors 2, 3 and 5
// only), a circular convolution of K with white noise equals the linear
// convolution on the nx x ny corner: no wrapped lag reaches it. White noise
// is drawn directly in Fourier space: Z_k = a_k + i b_k with a, b independent
// N(0, 1) (the DFT of complex white noise is complex white noise), and one
// unscaled inverse transform of Khat_k Z_k gives a complex field whose real
// and imaginary parts are two INDEPENDENT real fields with the correlation
// above (Khat is real because K(-d) = K(d); the cross-covariance is a sum of
// Khat^2 sin(k.d), odd in k, hence 0). Each has variance M sum K^2 (Parseval,
// M = Mx My) before the scaling by 1 / sqrt(M sum K^2).
// The FFT is Eigen's (unsupported/Eigen/FFT, the kissfft back end).
//
// Cost per draw: 2 M normal deviates (Random::normal) and one complex 2-D
// FFT of M cells, against nx ny (2 hx + 1)(2 hy + 1)
// multiply-adds for a direct convolution; the kernel's transform is made
// once, in the constructor.
//
// Pixels: 0-based, x fastest, on the nx x ny grid given.
#pragma once

#include <Eigen/Core>
#include <complex>
#include <vector>

#include "fulcrum/core/random.hpp"

namespace fulcrum {

class CorrelatedNoise {
 public:
  // `cov`: pixel covariance of the smoothing kernel (pixel^2), as for
  // convolve_gaussian. Throws InputError for a grid with no pixels.
  CorrelatedNoise(int nx, int ny, const Eigen::Matrix2d& cov, double truncate_sigma = 4.0);

  int nx() const { return nx_; }
  int ny() const { return ny_; }
  int padded_nx() const { return mx_; }
  int padded_ny() const { return my_; }
  const Eigen::Matrix2d& covariance() const { return cov_; }

  // Two independent unit-variance fields (nx * ny each, x fastest) from one
  // transform; `second` may be null when only one is wanted.
  void draw(Random& g, std::vector<double>& first, std::vector<double>* second) const;

 private:
  int nx_ = 0, ny_ = 0, mx_ = 0, my_ = 0;
  Eigen::Matrix2d cov_;
  std::vector<double> filter_;  // Khat / sqrt(M sum K^2), Mx * My, kx fastest
};

// The smallest n' >= n whose only prime factors are 2, 3 and 5.
int fft_friendly_size(int n);

}  // namespace fulcrum
