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
//  * Null of no excess in any galaxy (every true A_i = 0), with each
//    galaxy's calibrated P_i (uniform on (0, 1) under A_i = 0,
//    docs/uncertainties.md): Stouffer's Z (Stouffer et al. 1949, "The
//    American Soldier", vol. 1; Whitlock 2005, J. Evol. Biol. 18, 1368),
//      z_i = Phi^-1(P_i),  Z = sum_i z_i / sqrt(n),  p_stouffer = 1 - Phi(Z),
//    one-sided (a leading excess gives P_i near 1). P_i from B bootstrap
//    draws is first moved into [1/(2B), 1 - 1/(2B)] so that 0 and 1 give
//    finite scores. Its size (0.05 at alpha 0.05) and its power against the
//    sign test are checked by simulation in tests/report/ and reported in
//    docs/robustness.md.
//  * The measured count is itself uncertain: given each galaxy's own P_i the
//    true number of leading galaxies K' is Poisson-binomial (a sum of
//    independent Bernoulli(P_i); Wang 1993, Statistica Sinica 3, 295),
//    computed exactly by the convolution recursion below; P(K' >= k) is
//    reported as a description, not as a test.
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
  std::size_t n_draws = 0;  // bootstrap draws behind p_leading (0: unknown, no clamping)
};

struct SubsetStatistics {
  std::size_t n = 0;        // galaxies in the subset
  std::size_t k = 0;        // of which leading
  double expected_leading = 0.0;     // sum of P_i
  double p_null_sign_test = 1.0;     // P(Binomial(n,1/2) >= k)
  double p_at_least_k_given_p = 1.0; // P(K' >= k), K' Poisson-binomial(P_i)
  double stouffer_z = 0.0;           // sum of Phi^-1(P_i) / sqrt(n)
  double p_stouffer = 1.0;           // 1 - Phi(Z), one-sided
  nlohmann::json to_json() const;
};

struct SampleSummary {
  std::size_t n_galaxies = 0, n_undetermined = 0;
  std::size_t n_robust = 0, n_reversed = 0, n_marginal = 0, n_centre_sensitive = 0;
  SubsetStatistics determined;  // every galaxy with a measurement
  SubsetStatistics secure;      // robust or reversed galaxies only
  nlohmann::json to_json() const;
};

// Stouffer's Z of probabilities P(A > 0) (each clamped to [1/(2B), 1-1/(2B)]
// for its B draws when B > 0); 0 for an empty list.
double stouffer_z(const std::vector<double>& p_leading, const std::vector<std::size_t>& n_draws);

SubsetStatistics subset_statistics(const std::vector<GalaxyOutcome>& galaxies);
// `verdicts` parallel to `galaxies` (for the counts per verdict).
SampleSummary summarise_sample(const std::vector<GalaxyOutcome>& galaxies,
                               const std::vector<std::string>& verdicts);

}  // namespace fulcrum::report
