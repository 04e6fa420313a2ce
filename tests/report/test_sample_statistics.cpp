// Poisson-binomial tail probabilities against scipy.stats.binomtest (equal
// probabilities) and against brute-force enumeration (unequal ones).
#include <catch2/catch.hpp>

#include <fstream>
#include <random>

#include <nlohmann/json.hpp>

#include "fulcrum/report/sample_statistics.hpp"
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

TEST_CASE("sample summary counts verdicts and computes both nulls", "[report]") {
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
}
