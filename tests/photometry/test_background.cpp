// Sigma-clipped sky level and rms on Gaussian noise with sources.
#include <catch2/catch.hpp>

#include <random>

#include "fulcrum/photometry/background.hpp"

using namespace fulcrum::photometry;

TEST_CASE("sigma clipping recovers the sky under sources", "[photometry][background]") {
  std::mt19937_64 rng(5);
  std::normal_distribution<double> nd(0.0, 1.0);
  std::vector<double> v(40000);
  for (double& x : v) x = 100.0 + 2.0 * nd(rng);
  // 5% of the pixels hold bright sources, a few are NaN or excluded.
  for (std::size_t i = 0; i < v.size(); i += 20) v[i] += 50.0 + static_cast<double>(i % 300);
  v[7] = std::nan("");
  std::vector<std::uint8_t> ex(v.size(), 0);
  ex[11] = 1;
  const BackgroundSummary s = estimate_background(v, ex);
  // Tolerances: the standard errors of a median (1.25 sigma / sqrt(N)) and
  // of an rms (sigma / sqrt(2N)) for N = 38000 are 0.013 and 0.007; 5 of
  // them, and the truncation correction (Johnson, Kotz & Balakrishnan).
  CHECK(s.level == Approx(100.0).margin(0.07));
  CHECK(s.rms == Approx(2.0).margin(0.04));
  CHECK(s.converged);
  CHECK(s.n_input == v.size() - 2);
  // Without the truncation correction the rms of a 3-sigma clipped normal
  // is sqrt(0.9733) = 0.9866 of the truth (truncated-normal variance).
  BackgroundOptions o;
  o.correct_truncation = false;
  CHECK(estimate_background(v, ex, o).rms == Approx(2.0 * 0.9866).margin(0.04));
}

TEST_CASE("median of even and odd counts", "[photometry][background]") {
  CHECK(median_of({3.0, 1.0, 2.0}) == 2.0);
  CHECK(median_of({4.0, 1.0, 2.0, 3.0}) == 2.5);
  CHECK(median_of({}) == 0.0);
}
