// Sample-level statistics: how many galaxies show a leading-side excess, and
// how surprising that count is if no side were preferred.
//
// Each determined galaxy i has a measured sign (A_i > 0: "leading") and its
// bootstrap probability P_i = P(A_i > 0). With n determined galaxies and k of
// them leading:
//
//  * Null of no preferred side (sign test): each galaxy leads with
//    probability 1/2, K ~ Binomial(n, 1/2), and p_null = P(K >= k)
//    (the one-sided sign test; e.g. Conover 1999, "Practical Nonparametric
//    Statistics", 3rd ed., §3.4).
//  * The measured count is itself uncertain: given each galaxy's own P_i the
//    true number of leading galaxies K' is Poisson-binomial (a sum of
//    independent Bernoulli(P_i); Wang 1993, Statistica Sinica 3, 295),
//    computed exactly by the convolution recursion below. We report
//    P(K' >= k) and the null probability averaged over that distribution,
//      p_null_marginal = sum_j P(K' = j) * P(Binomial(n, 1/2) >= j),
//    which is the sign-test p-value with the measurement uncertainty of
//    every galaxy folded in.
//  * The same restricted to the galaxies whose sign is secure (verdict
//    robust or reversed): k = number robust, n = robust + reversed.
//
// When every P_i equals p the Poisson-binomial reduces to Binomial(n, p);
// the tests check that case against scipy.stats.binomtest.
#pragma once

#include <cstddef>
#include <vector>

#include <nlohmann/json.hpp>

namespace fulcrum::report {

// Exact distribution of K = sum of independent Bernoulli(p_i): element j is
// P(K = j), j = 0..n. Dynamic programme over galaxies, O(n^2); only sums of
// non-negative terms, so it is stable for any n.
std::vector<double> poisson_binomial_pmf(const std::vector<double>& p);
// P(K >= k); 1 for k = 0, 0 for k > n.
double poisson_binomial_tail(const std::vector<double>& p, std::size_t k);
// P(Binomial(n, 1/2) >= k).
double sign_test_tail(std::size_t n, std::size_t k);

struct GalaxyOutcome {
  bool determined = false;  // verdict is not "undetermined" and A was measured
  double asymmetry = 0.0;   // A at the adopted centre
  double p_leading = 0.5;   // P(A > 0) from the bootstrap
  bool robust = false;      // verdict "robust"
  bool reversed = false;    // verdict "reversed"
};

struct SubsetStatistics {
  std::size_t n = 0;        // galaxies in the subset
  std::size_t k = 0;        // of which leading
  double expected_leading = 0.0;     // sum of P_i
  double p_null_sign_test = 1.0;     // P(Binomial(n,1/2) >= k)
  double p_at_least_k_given_p = 1.0; // P(K' >= k), K' Poisson-binomial(P_i)
  double p_null_marginal = 1.0;      // sign-test p-value averaged over K'
  nlohmann::json to_json() const;
};

struct SampleSummary {
  std::size_t n_galaxies = 0, n_undetermined = 0;
  std::size_t n_robust = 0, n_reversed = 0, n_marginal = 0, n_centre_sensitive = 0;
  SubsetStatistics determined;  // every galaxy with a measurement
  SubsetStatistics secure;      // robust or reversed galaxies only
  nlohmann::json to_json() const;
};

SubsetStatistics subset_statistics(const std::vector<GalaxyOutcome>& galaxies);
// `verdicts` parallel to `galaxies` (for the counts per verdict).
SampleSummary summarise_sample(const std::vector<GalaxyOutcome>& galaxies,
                               const std::vector<std::string>& verdicts);

}  // namespace fulcrum::report
