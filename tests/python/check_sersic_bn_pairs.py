#!/usr/bin/env python3
"""Compare fulcrum's Sersic b_n with scipy.special.gammaincinv(2n, 0.5).

Reference: python3-scipy; b_n is defined by P(2n, b_n) = 1/2 (the regularised
lower incomplete gamma function), e.g. Graham & Driver 2005, PASA 22, 118.
Arguments: pairs "n b_n" as computed by fulcrum. Tolerance 1e-6 relative, the
stated accuracy of the Ciotti & Bertin (1999) series for n > 0.36.
"""
import sys
from scipy.special import gammaincinv

REL_TOL = 1e-6

vals = [float(v) for v in sys.argv[1:]]
bad = 0
for n, b in zip(vals[0::2], vals[1::2]):
    ref = gammaincinv(2.0 * n, 0.5)
    rel = abs(b - ref) / ref
    print(f"n={n:g} fulcrum b_n={b:.10f} scipy={ref:.10f} rel={rel:.2e}")
    if rel > REL_TOL:
        bad += 1
sys.exit(1 if bad else 0)
