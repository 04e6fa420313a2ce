// Noise fields drawn by FFT (imaging/correlated_noise.hpp):
//  * unit variance and, at several lags, the correlation of white noise
//    smoothed by a Gaussian of pixel covariance C: a Gaussian of covariance
//    2C (the convolution of two Gaussians adds their covariances; a standard
//    result, e.g. Bracewell, The Fourier Transform and its Applications,
//    ch. 8), exp(-d^T (2C)^-1 d / 2); tolerance from the sampling error of
//    the estimates (about 1/sqrt(pixels x draws / correlated area), well
//    under 0.03 here);
//  * the two fields of one draw are independent (their correlation at lag 0
//    is 0 within the same sampling error);
//  * the same generator and seed give the same fields, byte for byte.
#include "fulcrum/imaging/correlated_noise.hpp"

#include <catch2/catch.hpp>

#include <cmath>

using namespace fulcrum;

namespace {
struct Moments {
  double var_a = 0, var_b = 0, cross = 0;
  double lag[3] = {0, 0, 0};
};
}  // namespace

TEST_CASE("correlated noise by FFT: unit variance, Gaussian correlation of covariance 2C, two independent fields",
          "[imaging][noise]") {
  Eigen::Matrix2d C;
  C << 4.0, 1.5, 1.5, 2.5;  // pixel^2: an elliptical, tilted kernel
  const int nx = 60, ny = 50;
  const CorrelatedNoise gen(nx, ny, C);
  CHECK(gen.padded_nx() >= nx + 2 * 8);  // 4 sigma along x: ceil(4 * 2) = 8
  CHECK(gen.padded_ny() >= ny + 2 * 7);  // ceil(4 * sqrt(2.5)) = 7
  const int lags[3][2] = {{1, 0}, {0, 2}, {2, 1}};
  Moments m;
  std::size_t n0 = 0, nl[3] = {0, 0, 0};
  Random g(20261202);
  std::vector<double> a, b;
  for (int draw = 0; draw < 120; ++draw) {
    gen.draw(g, a, &b);
    REQUIRE(a.size() == static_cast<std::size_t>(nx * ny));
    for (int y = 0; y < ny; ++y)
      for (int x = 0; x < nx; ++x) {
        const std::size_t i = static_cast<std::size_t>(x + nx * y);
        m.var_a += a[i] * a[i];
        m.var_b += b[i] * b[i];
        m.cross += a[i] * b[i];
        ++n0;
        for (int k = 0; k < 3; ++k) {
          const int xx = x + lags[k][0], yy = y + lags[k][1];
          if (xx >= nx || yy >= ny) continue;
          m.lag[k] += a[i] * a[static_cast<std::size_t>(xx + nx * yy)];
          ++nl[k];
        }
      }
  }
  const double var_a = m.var_a / n0, var_b = m.var_b / n0;
  CHECK(var_a == Approx(1.0).margin(0.03));
  CHECK(var_b == Approx(1.0).margin(0.03));
  CHECK(m.cross / n0 == Approx(0.0).margin(0.03));
  const Eigen::Matrix2d P = (2.0 * C).inverse();
  for (int k = 0; k < 3; ++k) {
    const Eigen::Vector2d d(lags[k][0], lags[k][1]);
    const double expected = std::exp(-0.5 * d.dot(P * d));
    INFO("lag (" << lags[k][0] << ", " << lags[k][1] << ")");
    CHECK(m.lag[k] / nl[k] == Approx(expected).margin(0.03));
  }

  Random g1(5), g2(5);
  std::vector<double> x1, x2;
  gen.draw(g1, x1, nullptr);
  gen.draw(g2, x2, nullptr);
  CHECK(x1 == x2);
}

TEST_CASE("FFT-friendly sizes have only the factors 2, 3 and 5", "[imaging][noise]") {
  CHECK(fft_friendly_size(1) == 1);
  CHECK(fft_friendly_size(7) == 8);
  CHECK(fft_friendly_size(97) == 100);
  CHECK(fft_friendly_size(241) == 243);
  CHECK(fft_friendly_size(256) == 256);
}
