// The standard normal distribution: its cumulative distribution function and
// its quantile (inverse CDF), for turning per-galaxy probabilities P(A > 0)
// into normal scores and back (sample_statistics.hpp).
//
// normal_cdf(x) = erfc(-x / sqrt 2) / 2 (std::erfc, accurate in both tails).
// normal_quantile(p): the rational approximation of P. J. Acklam (2003,
// "An algorithm for computing the inverse normal cumulative distribution
// function", published on the author's web page; coefficients recalled from
// memory) followed by two Halley refinement steps on normal_cdf, so that the
// result is accurate to ~1e-14 relative whatever the starting approximation's
// error. Checked against scipy.stats.norm.ppf (tests/report/). p must lie in
// (0, 1); p = 0 and 1 give -inf and +inf.
#pragma once

namespace fulcrum::report {

double normal_cdf(double x);
double normal_quantile(double p);

}  // namespace fulcrum::report
