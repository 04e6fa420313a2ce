"""Reference check: the covariance of two clipped pixels M = f(X),
f(x) = x 1(x > t sigma), with (X_i, X_j) jointly normal of correlation rho
(split/clipped_noise.hpp computes it from Hermite coefficients, Mehler's
expansion), recomputed here by direct integration with scipy
(python3-scipy): E[f(X_i) f(X_j)] = int f(x) phi_i(x) E[f(X_j) | X_i = x] dx
with the conditional normal X_j | X_i = x ~ N(s_j + rho sigma_j (x - s_i) /
sigma_i, sigma_j^2 (1 - rho^2)), whose clipped mean is scipy.stats.norm's
sf/pdf expression; the outer integral by scipy.integrate.quad. Also checks
fulcrum's clipped mean against scipy.stats.truncnorm (P(X > t sigma) times
the truncated mean) and the inverse of the mean.
Tolerance: 1e-6 relative plus 1e-9 sigma_i sigma_j absolute (the Hermite
series is summed to order 60; quad's own error is below 1e-10)."""
import json
import math
import sys

from scipy.integrate import quad
from scipy.stats import norm, truncnorm


def clipped_mean(s, sig, tau):
    a = (tau - s) / sig
    return s * norm.sf(a) + sig * norm.pdf(a)


bad = 0
for c in json.load(open(sys.argv[1])):
    si, sj, gi, gj, t, rho = c["si"], c["sj"], c["sigi"], c["sigj"], c["t"], c["rho"]
    ti, tj = t * gi, t * gj
    mi, mj = clipped_mean(si, gi, ti), clipped_mean(sj, gj, tj)
    sc = gj * math.sqrt(1.0 - rho * rho)

    def integrand(x):
        mu = sj + rho * gj * (x - si) / gi
        return x * norm.pdf(x, si, gi) * clipped_mean(mu, sc, tj)

    lo, hi = ti, max(ti, si) + 12.0 * gi
    eij, _ = quad(integrand, lo, hi, epsabs=1e-13, epsrel=1e-11, limit=200)
    want = eij - mi * mj
    got = c["covariance"]
    if abs(got - want) > 1e-6 * abs(want) + 1e-9 * gi * gj:
        print("covariance mismatch", c, want)
        bad += 1
    # the mean, against truncnorm
    a = (ti - si) / gi
    tm = norm.sf(a) * truncnorm(a, float("inf"), loc=si, scale=gi).mean() if norm.sf(a) > 0 else 0.0
    if abs(c["mean_i"] - tm) > 1e-9 * abs(tm) + 1e-12 * gi:
        print("mean mismatch", c, tm)
        bad += 1
    if abs(c["inverse_i"] - si) > 1e-4 * gi and si > -8.0 * gi:
        print("inverse mismatch", c)
        bad += 1
print("clipped-pixel covariances checked, mismatches:", bad)
sys.exit(1 if bad else 0)
