"""Reference check: the variance of a clipped pixel M = X 1(X > t sigma),
X ~ N(s, sigma^2) (split/clipped_noise.hpp), recomputed with
scipy.stats.truncnorm (python3-scipy): with P = P(X > t sigma) and the
truncated normal's mean m and variance v,
  E[M] = P m,  E[M^2] = P (v + m^2),  Var[M] = E[M^2] - E[M]^2.
Tolerance: 1e-9 relative plus 1e-12 sigma^2 absolute (closed forms vs
scipy's own evaluation; the floor of 1e-12 sigma^2 in fulcrum)."""
import json
import sys

from scipy.stats import norm, truncnorm

bad = 0
for c in json.load(open(sys.argv[1])):
    s, sig, t, got = c["s"], c["sigma"], c["t"], c["variance"]
    a = (t * sig - s) / sig
    P = norm.sf(a)
    if P > 0:
        tn = truncnorm(a, float("inf"), loc=s, scale=sig)
        m, v = tn.mean(), tn.var()
        want = P * (v + m * m) - (P * m) ** 2
    else:
        want = 0.0
    want = max(want, 1e-12 * sig * sig)
    if abs(got - want) > 1e-9 * abs(want) + 1e-12 * sig * sig:
        print("mismatch", c, want)
        bad += 1
print("clipped-pixel variances checked, mismatches:", bad)
sys.exit(1 if bad else 0)
