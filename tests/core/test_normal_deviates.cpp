// The ziggurat normal deviates (core/random.hpp, Random::normal_ziggurat)
// against the standard normal distribution function
//   Phi(x) = erfc(-x / sqrt 2) / 2   (Abramowitz & Stegun 1964, 7.1.2 and 26.2.2),
// by the Kolmogorov-Smirnov distance (critical value 1.95 / sqrt(n) at the
// 0.1% level: Smirnov's asymptotic distribution, common practice), a
// chi-square over 200 bins of equal probability (99.9% point of chi-square
// with 199 degrees of freedom, 266.4: scipy.stats.chi2.ppf(0.999, 199),
// Debian 12's python3-scipy), the moments, the mass beyond the base
// layer's edge r (the tail the method draws separately) and the independence
// of successive deviates (lag-1 correlation within 4/sqrt(n)).
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "fulcrum/core/random.hpp"

using namespace fulcrum;

namespace {
double normal_cdf(double x) { return 0.5 * std::erfc(-x / std::sqrt(2.0)); }
}  // namespace

TEST_CASE("Ziggurat normal deviates follow the standard normal distribution", "[core][random]") {
  const std::size_t n = 1000000;
  Random rng(20261203);
  std::vector<double> z(n);
  for (double& v : z) v = rng.normal_ziggurat();

  double m1 = 0, m2 = 0, m4 = 0, lag = 0;
  std::size_t beyond_r = 0, beyond_2 = 0;
  for (std::size_t i = 0; i < n; ++i) {
    m1 += z[i];
    m2 += z[i] * z[i];
    m4 += z[i] * z[i] * z[i] * z[i];
    if (i > 0) lag += z[i] * z[i - 1];
    if (std::abs(z[i]) > 3.6541528853610088) ++beyond_r;
    if (std::abs(z[i]) > 2.0) ++beyond_2;
  }
  m1 /= n;
  m2 /= n;
  m4 /= n;
  lag /= n - 1;
  const double se = 1.0 / std::sqrt(static_cast<double>(n));
  CHECK(std::abs(m1) < 4 * se);
  CHECK(std::abs(m2 - 1.0) < 4 * std::sqrt(2.0) * se);
  CHECK(std::abs(m4 - 3.0) < 4 * std::sqrt(96.0) * se);  // Var(z^4) = 105 - 9
  CHECK(std::abs(lag) < 4 * se);

  // Tail masses: P(|z| > x) = erfc(x / sqrt 2); binomial errors.
  auto check_tail = [&](std::size_t count, double x) {
    const double p = std::erfc(x / std::sqrt(2.0));
    const double sd = std::sqrt(n * p * (1 - p));
    CHECK(std::abs(static_cast<double>(count) - n * p) < 4 * sd);
  };
  check_tail(beyond_r, 3.6541528853610088);
  check_tail(beyond_2, 2.0);

  std::sort(z.begin(), z.end());
  double d = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double F = normal_cdf(z[i]);
    d = std::max({d, F - static_cast<double>(i) / n, static_cast<double>(i + 1) / n - F});
  }
  CHECK(d < 1.95 * se);

  const int bins = 200;
  std::vector<double> count(bins, 0.0);
  for (double v : z) count[std::min(bins - 1, static_cast<int>(normal_cdf(v) * bins))] += 1.0;
  double chi2 = 0;
  const double expect = static_cast<double>(n) / bins;
  for (double c : count) chi2 += (c - expect) * (c - expect) / expect;
  CHECK(chi2 < 266.4);
}

TEST_CASE("Ziggurat deviates repeat for one seed", "[core][random]") {
  Random a(7), b(7), c(8);
  bool differs = false;
  for (int i = 0; i < 1000; ++i) {
    const double x = a.normal_ziggurat();
    CHECK(x == b.normal_ziggurat());
    differs = differs || x != c.normal_ziggurat();
  }
  CHECK(differs);
}

TEST_CASE("Ziggurat deviates drawn in blocks are those drawn one by one", "[core][random]") {
  // 10^5 deviates: ~1% of the first tries fall in a wedge or the tail, so
  // every path of the block form is taken many times.
  Random a(11), b(11);
  std::vector<double> block(1000);
  for (int r = 0; r < 100; ++r) {
    const std::size_t n = static_cast<std::size_t>(r % 7 == 0 ? 0 : 1000 - r);  // empty and odd sizes
    b.normal_ziggurat(block.data(), n);
    for (std::size_t i = 0; i < n; ++i) REQUIRE(block[i] == a.normal_ziggurat());
  }
  CHECK(a.bits() == b.bits());  // and the engines are left in the same state
}
