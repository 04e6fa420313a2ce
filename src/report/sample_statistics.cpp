// Sample-level statistics (see the header for the nulls and sources).
#include "fulcrum/report/sample_statistics.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "fulcrum/report/normal_distribution.hpp"

namespace fulcrum::report {

// Convolution recursion: after galaxy i, pmf[j] = P(j leading among the
// first i). Adding galaxy i with probability p: pmf'[j] = pmf[j](1-p) +
// pmf[j-1] p. Updated from the top down so one array suffices.
std::vector<double> poisson_binomial_pmf(const std::vector<double>& p) {
  std::vector<double> pmf(p.size() + 1, 0.0);
  pmf[0] = 1.0;
  for (std::size_t i = 0; i < p.size(); ++i) {
    double q = std::clamp(p[i], 0.0, 1.0);
    for (std::size_t j = i + 1; j > 0; --j) pmf[j] = pmf[j] * (1.0 - q) + pmf[j - 1] * q;
    pmf[0] *= (1.0 - q);
  }
  return pmf;
}

double poisson_binomial_tail(const std::vector<double>& p, std::size_t k) {
  if (k == 0) return 1.0;
  if (k > p.size()) return 0.0;
  auto pmf = poisson_binomial_pmf(p);
  double s = 0.0;
  for (std::size_t j = k; j < pmf.size(); ++j) s += pmf[j];  // sum small terms from the tail
  return std::min(1.0, s);
}

double sign_test_tail(std::size_t n, std::size_t k) {
  return poisson_binomial_tail(std::vector<double>(n, 0.5), k);
}

double stouffer_z(const std::vector<double>& p, const std::vector<std::size_t>& draws) {
  if (p.empty()) return 0.0;
  double sum = 0.0;
  for (std::size_t i = 0; i < p.size(); ++i) {
    const std::size_t B = i < draws.size() ? draws[i] : 0;
    // A finite bootstrap cannot say P = 0 or 1: half a draw from either end.
    const double lo = B > 0 ? 0.5 / double(B) : 1e-12;
    sum += normal_quantile(std::clamp(p[i], lo, 1.0 - lo));
  }
  return sum / std::sqrt(double(p.size()));
}

SubsetStatistics subset_statistics(const std::vector<GalaxyOutcome>& galaxies) {
  SubsetStatistics s;
  std::vector<double> p;
  std::vector<std::size_t> draws;
  for (const auto& g : galaxies) {
    if (!g.determined) continue;
    ++s.n;
    if (g.asymmetry > 0) ++s.k;
    p.push_back(g.p_leading);
    draws.push_back(g.n_draws);
    s.expected_leading += g.p_leading;
  }
  s.p_null_sign_test = sign_test_tail(s.n, s.k);
  s.p_at_least_k_given_p = poisson_binomial_tail(p, s.k);
  s.stouffer_z = stouffer_z(p, draws);
  s.p_stouffer = s.n > 0 ? 1.0 - normal_cdf(s.stouffer_z) : 1.0;
  return s;
}

nlohmann::json SubsetStatistics::to_json() const {
  return {{"n", n},
          {"n_leading", k},
          {"expected_leading", expected_leading},
          {"p_null_sign_test", p_null_sign_test},
          {"p_at_least_k_given_p", p_at_least_k_given_p},
          {"stouffer_z", stouffer_z},
          {"p_stouffer", p_stouffer}};
}

SampleSummary summarise_sample(const std::vector<GalaxyOutcome>& galaxies,
                               const std::vector<std::string>& verdicts) {
  SampleSummary s;
  s.n_galaxies = galaxies.size();
  for (const auto& v : verdicts) {
    if (v == "robust") ++s.n_robust;
    else if (v == "reversed") ++s.n_reversed;
    else if (v == "marginal") ++s.n_marginal;
    else if (v == "centre-sensitive") ++s.n_centre_sensitive;
    else ++s.n_undetermined;
  }
  s.determined = subset_statistics(galaxies);
  std::vector<GalaxyOutcome> secure;
  for (const auto& g : galaxies)
    if (g.determined && (g.robust || g.reversed)) secure.push_back(g);
  s.secure = subset_statistics(secure);
  return s;
}

nlohmann::json SampleSummary::to_json() const {
  return {{"n_galaxies", n_galaxies},
          {"verdict_counts",
           {{"robust", n_robust},
            {"marginal", n_marginal},
            {"centre-sensitive", n_centre_sensitive},
            {"reversed", n_reversed},
            {"undetermined", n_undetermined}}},
          {"all_determined", determined.to_json()},
          {"secure_only", secure.to_json()}};
}

}  // namespace fulcrum::report
