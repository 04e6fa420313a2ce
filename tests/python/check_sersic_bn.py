"""Reference check: fulcrum's Sersic b_n and regularised incomplete gamma
function vs scipy.special (python3-scipy, Debian).

b_n solves P(2n, b_n) = 1/2 (Ciotti & Bertin 1999); scipy's gammaincinv(2n,
0.5) is an independent implementation (Cephes). Tolerances: 1e-10 relative
for b_n (both are solved to near machine precision), 1e-12 absolute for P.
Input: a JSON file {"bn": [[n, b], ...], "p": [[a, x, P], ...]}.
"""
import json
import sys

from scipy.special import gammainc, gammaincinv

d = json.load(open(sys.argv[1]))
worst_b = 0.0
for n, b in d["bn"]:
    ref = gammaincinv(2.0 * n, 0.5)
    worst_b = max(worst_b, abs(b - ref) / ref)
worst_p = 0.0
for a, x, p in d["p"]:
    worst_p = max(worst_p, abs(p - gammainc(a, x)))
print(f"b_n: worst relative difference {worst_b:.3e} over {len(d['bn'])} values; "
      f"P(a,x): worst absolute difference {worst_p:.3e} over {len(d['p'])} values")
if worst_b > 1e-10 or worst_p > 1e-12:
    sys.exit("mismatch with scipy.special")
