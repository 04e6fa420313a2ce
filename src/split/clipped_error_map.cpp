// Effective errors of a clipped line map (see the header for the derivation).
#include "fulcrum/split/clipped_error_map.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <Eigen/Eigenvalues>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"
#include "fulcrum/split/clipped_noise.hpp"

namespace fulcrum::split {

namespace {

constexpr int kMaxOrder = 8;

// Sum over the pixel lattice of a Gaussian of pixel covariance C with peak 1
// (the unit-sum kernel's centre weight is 1 / that sum).
double lattice_sum(const Eigen::Matrix2d& C) { return 1.0 / gaussian_kernel(C).at(0, 0); }

}  // namespace

Image clipped_error_map(const Image& map, const Image* error_map, double rms, double clip_snr,
                        double noise_correlation_beams, double eta) {
  const std::size_t n = map.size();
  const double nan = std::numeric_limits<double>::quiet_NaN();
  std::vector<double> sig(n, nan);
  for (std::size_t i = 0; i < n; ++i) {
    const double s = error_map ? error_map->data[i] : rms;
    if (std::isfinite(map.data[i]) && std::isfinite(s) && s > 0.0) sig[i] = s;
  }
  const bool correlated = map.beam && map.wcs.valid() && map.beam->bmaj_arcsec > 0.0 && map.beam->bmin_arcsec > 0.0;
  Eigen::Matrix2d jac = Eigen::Matrix2d::Identity();
  std::vector<double> mu = map.data;
  if (correlated) {
    const PixelOffsets off(map, map.wcs.pixel_to_world({0.5 * (map.nx - 1), 0.5 * (map.ny - 1)}),
                           PixelOffsets::Holds::geometry_only);
    jac = off.jacobian();
    mu = convolve_gaussian(map.data, map.nx, map.ny, pixel_covariance(*map.beam, jac));
  }
  // The plug-in brightness and each pixel's clipped variance.
  std::vector<double> S(n, 0.0), var(n, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(sig[i]) || !std::isfinite(mu[i])) continue;
    S[i] = brightness_of_clipped_mean(mu[i], sig[i], clip_snr);
    var[i] = clipped_pixel_variance(S[i], sig[i], clip_snr);
  }
  std::vector<double> v = var;  // independent pixels without a beam
  if (correlated) {
    const double k = noise_correlation_beams;
    std::vector<std::vector<double>> c(kMaxOrder, std::vector<double>(n, 0.0));
    for (std::size_t i = 0; i < n; ++i) {
      if (!(var[i] > 0.0)) continue;
      const auto ck = clipped_hermite_coefficients(S[i], sig[i], clip_snr, kMaxOrder);
      for (int m = 0; m < kMaxOrder; ++m) c[m][i] = ck[m];
    }
    std::fill(v.begin(), v.end(), 0.0);
    std::vector<double> used(n, 0.0);
    SmoothOptions zero_padded;
    zero_padded.normalise_missing = false;
    double factorial = 1.0;
    Eigen::Matrix2d Cm;
    int m = 1;
    for (; m <= kMaxOrder; ++m) {
      // rho^m: a Gaussian of covariance k Sigma_beam / m.
      const double f = std::sqrt(k / m);
      Cm = pixel_covariance(Beam{map.beam->bmaj_arcsec * f, map.beam->bmin_arcsec * f, map.beam->bpa_deg}, jac);
      if (Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d>(Cm).eigenvalues().minCoeff() < 0.25) break;
      factorial *= m;
      const double N = lattice_sum(Cm);
      const std::vector<double> nb = convolve_gaussian(c[m - 1], map.nx, map.ny, Cm, zero_padded);
      for (std::size_t i = 0; i < n; ++i) {
        v[i] += c[m - 1][i] * N * nb[i] / factorial;
        used[i] += c[m - 1][i] * c[m - 1][i] / factorial;
      }
    }
    // The orders not summed: their variance with the neighbour sum of order m.
    const double f = std::sqrt(k / m);
    const double Nrest =
        lattice_sum(pixel_covariance(Beam{map.beam->bmaj_arcsec * f, map.beam->bmin_arcsec * f, map.beam->bpa_deg}, jac));
    for (std::size_t i = 0; i < n; ++i) v[i] += std::max(0.0, var[i] - used[i]) * Nrest;
  }
  Image e = map.like(0.0);
  e.path = "clip-aware errors of " + map.path;
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(sig[i]) || !std::isfinite(mu[i])) {
      e.data[i] = nan;
      continue;
    }
    // Never zero (zero errors drop a pixel from the split); a pixel whose
    // neighbours' clipped noise is anti-correlated with its own can give a
    // slightly negative share, counted as zero.
    e.data[i] = std::sqrt(std::max(v[i], 1e-12 * sig[i] * sig[i]) / std::max(1.0, eta));
  }
  return e;
}

}  // namespace fulcrum::split
