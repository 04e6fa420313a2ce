"""Reference check: fulcrum's standard normal quantile and CDF
(report/normal_distribution.hpp) vs scipy.stats.norm.ppf / norm.cdf
(python3-scipy). Tolerance: 1e-12 absolute plus 1e-12 relative (the Halley
refinement converges to double rounding)."""
import json
import sys

from scipy.stats import norm

bad = 0
for c in json.load(open(sys.argv[1])):
    q_want = norm.ppf(c["p"])
    c_want = norm.cdf(c["x"])
    if abs(c["quantile"] - q_want) > 1e-12 + 1e-12 * abs(q_want):
        print("quantile mismatch", c, q_want)
        bad += 1
    if abs(c["cdf"] - c_want) > 1e-15 + 1e-12 * c_want:
        print("cdf mismatch", c, c_want)
        bad += 1
print("normal quantiles and CDFs checked, mismatches:", bad)
sys.exit(1 if bad else 0)
