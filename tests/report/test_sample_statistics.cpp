// Poisson-binomial tail probabilities against scipy.stats.binomtest (equal
// probabilities) and against brute-force enumeration (unequal ones).
#include <catch2/catch.hpp>

#include <fstream>
#include <random>

#include <nlohmann/json.hpp>

#include "fulcrum/report/normal_distribution.hpp"
#include "fulcrum/report/sample_statistics.hpp"
#include "fulcrum/core/random.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::report;

TEST_CASE("Poisson-binomial with equal P equals scipy binomtest", "[report][python]") {
  auto dir = test::temp_dir("pbin");
  nlohmann::json cases = nlohmann::json::array();
  for (std::size_t n : {1u, 5u, 12u, 30u, 80u})
    for (double p : {0.5, 0.1, 0.73, 0.999})
      for (std::size_t k : {std::size_t(0), n / 3, n / 2, n})
        cases.push_back({{"n", n}, {"p", p}, {"k", k},
                         {"tail", poisson_binomial_tail(std::vector<double>(n, p), k)}});
  std::ofstream(dir / "cases.json") << cases.dump();
  auto r = test::run_python("check_poisson_binomial.py", (dir / "cases.json").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("Poisson-binomial with unequal P equals enumeration", "[report]") {
  std::mt19937 gen(11);
  std::uniform_real_distribution<double> u(0, 1);
  std::vector<double> p(10);
  for (auto& x : p) x = u(gen);
  std::vector<double> brute(p.size() + 1, 0.0);
  for (unsigned mask = 0; mask < (1u << p.size()); ++mask) {
    double prob = 1;
    int k = 0;
    for (std::size_t i = 0; i < p.size(); ++i) {
      bool on = mask & (1u << i);
      prob *= on ? p[i] : 1 - p[i];
      k += on;
    }
    brute[k] += prob;
  }
  auto pmf = poisson_binomial_pmf(p);
  for (std::size_t k = 0; k <= p.size(); ++k) CHECK(pmf[k] == Approx(brute[k]).epsilon(1e-12));
}

TEST_CASE("sample summary counts verdicts and computes the tests", "[report]") {
  std::vector<GalaxyOutcome> g = {
      {true, 0.2, 0.99, true, false}, {true, 0.1, 0.97, true, false}, {true, -0.05, 0.2, false, false},
      {true, 0.01, 0.6, false, false}, {false, 0.0, 0.5, false, false}};
  auto s = summarise_sample(g, {"robust", "robust", "marginal", "centre-sensitive", "undetermined"});
  CHECK(s.n_galaxies == 5);
  CHECK(s.n_undetermined == 1);
  CHECK(s.determined.n == 4);
  CHECK(s.determined.k == 3);
  CHECK(s.determined.p_null_sign_test == Approx(5.0 / 16.0));  // (4 + 1)/16
  CHECK(s.secure.n == 2);
  CHECK(s.secure.k == 2);
  CHECK(s.secure.p_null_sign_test == Approx(0.25));
  CHECK(s.determined.expected_leading == Approx(0.99 + 0.97 + 0.2 + 0.6));
  // Stouffer's Z by hand from scipy-checked quantiles: (2.3263 + 1.8808 - 0.8416 + 0.2533) / 2.
  const double z = (normal_quantile(0.99) + normal_quantile(0.97) + normal_quantile(0.2) + normal_quantile(0.6)) / 2.0;
  CHECK(s.determined.stouffer_z == Approx(z).epsilon(1e-12));
  CHECK(s.determined.p_stouffer == Approx(1.0 - normal_cdf(z)).epsilon(1e-12));
  CHECK(!s.to_json()["all_determined"].contains("p_null_marginal"));
}

TEST_CASE("normal quantile and CDF equal scipy.stats.norm", "[report][python]") {
  auto dir = test::temp_dir("normq");
  nlohmann::json cases = nlohmann::json::array();
  for (double p : {1e-300, 1e-20, 1e-9, 2.5e-4, 0.02, 0.02425, 0.1, 0.3, 0.5, 0.6, 0.9, 0.975, 0.9999, 1.0 - 1e-12})
    for (double x : {-30.0, -8.0, -1.96, -0.3, 0.0, 0.7, 2.5, 7.0})
      cases.push_back({{"p", p}, {"quantile", normal_quantile(p)}, {"x", x}, {"cdf", normal_cdf(x)}});
  std::ofstream(dir / "cases.json") << cases.dump(1);
  auto r = test::run_python("check_normal_quantile.py", (dir / "cases.json").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(std::isinf(normal_quantile(0.0)));
  CHECK(std::isnan(normal_quantile(1.5)));
}

namespace {
// One simulated sample of n galaxies with true excess `shift` (in units of
// each galaxy's own sigma_A): A_hat ~ N(shift sigma, sigma^2), and P(A > 0)
// as a bootstrap of B draws would give it (B Phi(A_hat / sigma) plus the
// binomial scatter of B draws, rounded to a count). Returns (Stouffer
// rejects, sign test rejects) at alpha.
std::pair<bool, bool> one_sample(Random& g, int n, double shift, double alpha) {
  constexpr std::size_t B = 2000;
  std::vector<GalaxyOutcome> gal;
  for (int i = 0; i < n; ++i) {
    const double sigma = 0.02 + 0.08 * g.uniform();  // heterogeneous errors
    const double a = sigma * (shift + g.normal());
    const double q = normal_cdf(a / sigma);
    const double k = std::clamp(std::round(B * q + std::sqrt(B * q * (1 - q)) * g.normal()), 0.0, double(B));
    GalaxyOutcome o;
    o.determined = true;
    o.asymmetry = a;
    o.p_leading = k / double(B);
    o.n_draws = B;
    gal.push_back(o);
  }
  const SubsetStatistics s = subset_statistics(gal);
  return {s.p_stouffer < alpha, s.p_null_sign_test < alpha};
}
}  // namespace

// Size and power by simulation (the sample-level test of docs/robustness.md).
// Size: under the null every P_i is uniform, so Stouffer's Z is N(0, 1) and
// rejects in alpha of samples; 4000 samples give a binomial 1-sigma of 0.0034,
// the tolerance 0.02 is the issue's. Power for 30 galaxies with a true
// +0.5 sigma excess: analytically 1 - Phi(1.645 - 0.5 sqrt 30) = 0.863 for
// Stouffer (Whitlock 2005) and P(Binomial(30, Phi(0.5)) >= 20) = 0.695 for
// the sign test (its critical count at alpha 0.05 is 20: P(Bin(30, 1/2) >= 20)
// = 0.049); tolerance 0.03 (binomial 1-sigma 0.006 at 4000 samples, plus the
// draw rounding).
TEST_CASE("sample-level test: size under the null and power", "[report][statistics]") {
  Random g(20261202);
  const int n_samples = 4000, n = 30;
  int stouffer0 = 0, sign0 = 0, stouffer1 = 0, sign1 = 0;
  for (int s = 0; s < n_samples; ++s) {
    const auto [a, b] = one_sample(g, n, 0.0, 0.05);
    stouffer0 += a;
    sign0 += b;
  }
  for (int s = 0; s < n_samples; ++s) {
    const auto [a, b] = one_sample(g, n, 0.5, 0.05);
    stouffer1 += a;
    sign1 += b;
  }
  const double size = double(stouffer0) / n_samples, size_sign = double(sign0) / n_samples;
  const double power = double(stouffer1) / n_samples, power_sign = double(sign1) / n_samples;
  INFO("size: Stouffer " << size << ", sign test " << size_sign << "; power: Stouffer " << power
                         << ", sign test " << power_sign);
  CHECK(std::abs(size - 0.05) <= 0.02);
  CHECK(size_sign <= 0.05 + 0.02);
  const double power_expected = 1.0 - normal_cdf(normal_quantile(0.95) - 0.5 * std::sqrt(30.0));
  CHECK(power_expected == Approx(0.863).margin(0.001));
  CHECK(std::abs(power - power_expected) <= 0.03);
  std::vector<double> p(30, normal_cdf(0.5));
  CHECK(std::abs(power_sign - poisson_binomial_tail(p, 20)) <= 0.03);
  CHECK(sign_test_tail(30, 20) < 0.05);
  CHECK(sign_test_tail(30, 19) > 0.05);
}
