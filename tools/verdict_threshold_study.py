#!/usr/bin/env python3
"""Choose the verdict's significance and "robust" thresholds by simulation
(docs/robustness.md, "Choosing the thresholds").

Model. For one galaxy the analysis reports A_hat, sigma_A (the bootstrap's
standard deviation) and P(A > 0) from B bootstrap draws. If the reported
errors are right, A_hat ~ N(A_true, sigma_A^2). The coverage check of the
68% interval (docs/uncertainties.md) accepts 0.68 +- 0.08, i.e. a true
scatter up to f = 1 / Phi^-1(0.80) = 1.19 times sigma_A: errors that small
an underestimate would not be caught. So we ask, for error underestimates
f in {1.0, 1.1, 1.19, 1.4}: how often does a galaxy with A_true = 0 get
called robust or reversed (the "false secure" rate, target <= 5%), and how
often is a real excess of A_true / (f sigma_A) = 2..5 called robust (power)?

Each trial draws A_hat = f sigma z, then a bootstrap of B draws centred on
A_hat with the (under-)stated sigma, P = fraction of draws > 0, and applies
the rule "robust if P >= p_bar and A_hat / sigma >= z_bar" (reversed
likewise), with z_bar = Phi^-1(p_bar) so the two halves agree for a Gaussian
bootstrap. Prints the table and the smallest p_bar on the grid whose false
secure rate stays <= 5% at f = 1.19.

Usage: /usr/bin/python3 tools/verdict_threshold_study.py [--trials 200000] [--seed 1]
numpy and scipy (Debian python3-numpy, python3-scipy)."""
import argparse

import numpy as np
from scipy.stats import norm


def rates(p_bar, f, snr, trials, B, rng):
    z_bar = norm.ppf(p_bar)
    sigma = 1.0
    a_true = snr * f * sigma
    a_hat = a_true + f * sigma * rng.standard_normal(trials)
    # bootstrap: B Gaussian draws about a_hat with the stated sigma
    k = rng.binomial(B, norm.cdf(a_hat / sigma))
    P = k / B
    z = np.abs(a_hat) / sigma
    robust = (a_hat > 0) & (P >= p_bar) & (z >= z_bar)
    reversed_ = (a_hat < 0) & (P <= 1 - p_bar) & (z >= z_bar)
    return robust.mean(), reversed_.mean()


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--trials", type=int, default=200000)
    ap.add_argument("--draws", type=int, default=2000, help="bootstrap draws per analysis")
    ap.add_argument("--seed", type=int, default=1)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    grid = [0.95, 0.975, 0.98, 0.985, 0.99, 0.995, 0.999]
    fs = [1.0, 1.1, 1.19, 1.4]
    print("false secure rate (robust or reversed) at A_true = 0")
    print("p_bar   " + "  ".join(f"f={f:<5}" for f in fs))
    chosen = None
    for p in grid:
        row = [sum(rates(p, f, 0.0, a.trials, a.draws, rng)) for f in fs]
        print(f"{p:<7} " + "  ".join(f"{r:7.4f}" for r in row))
        if chosen is None and row[fs.index(1.19)] <= 0.05:
            chosen = p
    print(f"\nsmallest p_bar with false secure <= 5% at f = 1.19: {chosen} (z_bar = {norm.ppf(chosen):.2f})")
    print("\npower (called robust) at p_bar =", chosen, "for A_true / true sigma:")
    for snr in [2, 3, 4, 5]:
        row = [rates(chosen, f, snr, a.trials, a.draws, rng)[0] for f in fs]
        print(f"  {snr}:  " + "  ".join(f"f={f}: {r:.3f}" for f, r in zip(fs, row)))
    print("\nfor comparison, the old bar p_bar = 0.95:")
    for snr in [2, 3, 4]:
        print(f"  {snr}:  power {rates(0.95, 1.0, snr, a.trials, a.draws, rng)[0]:.3f}")


if __name__ == "__main__":
    main()
