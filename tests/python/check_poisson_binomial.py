"""Reference check: P(K >= k) for K ~ Binomial(n, p) from fulcrum's
Poisson-binomial recursion vs scipy.stats.binomtest(k, n, p,
alternative='greater').pvalue (python3-scipy).
Tolerance: 1e-12 absolute plus 1e-10 relative (double rounding in a sum of
at most 81 terms)."""
import json
import sys

from scipy.stats import binomtest

bad = 0
for c in json.load(open(sys.argv[1])):
    n, p, k, got = c["n"], c["p"], c["k"], c["tail"]
    want = 1.0 if k == 0 else binomtest(k, n, p, alternative="greater").pvalue
    if abs(got - want) > 1e-12 + 1e-10 * abs(want):
        print("mismatch", c, want)
        bad += 1
print("binomial tails checked, mismatches:", bad)
sys.exit(1 if bad else 0)
