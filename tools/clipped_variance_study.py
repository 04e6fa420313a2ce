#!/usr/bin/env python3
"""Checks the derivation of split/clipped_error_map.hpp on the independent
generator (tests/python/mockgen.py), in numpy, at the TRUE centre (no centre
or angle error): for each preset, N noise realisations of the 3-sigma
clipped line map give the scatter of A = (L - T)/(L + T) (split by pixel
centre), and each error rule gives a predicted sigma_A from
Var(half) = sum_i v_i, v_i = sum_j Cov(M_i, M_j) by the Hermite expansion
(Mehler), with the brightness S taken as:
  * true      the noise-free map (what the rule would give with S known);
  * plug-in   m^-1(beam-smoothed clipped map) - fulcrum's rule;
and, for comparison, the former rule: eta = 2 N_beam times the clipped
variance at the map smoothed by beam / sqrt 2 (no inverse, no Hermite).
Prints one line per preset: scatter, the three predictions, and their ratios
to the scatter. The scatter of N draws is itself uncertain by 1/sqrt(2N).

usage: /usr/bin/python3 tools/clipped_variance_study.py [--n 200] [--presets null,faint,bright,centre-trap]
numpy, scipy (Debian python3-numpy, python3-scipy)."""
import argparse
import math
import os
import sys

import numpy as np
from scipy.signal import fftconvolve
from scipy.stats import norm

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "python"))
import mockgen  # noqa: E402

T = 3.0
K = 8


def moments(s, sig):
    a = (T * sig - s) / sig
    Q, ph = norm.sf(a), norm.pdf(a)
    m1 = s * Q + sig * ph
    m2 = (s * s + sig * sig) * Q + sig * (s + T * sig) * ph
    return m1, np.maximum(m2 - m1 * m1, 1e-12 * sig * sig), a, Q, ph


def hermite_shares(s, sig, p, jac):
    """v_i = sum_j Cov(M_i, M_j), orders 1..K, the rest with the next order's neighbour sum."""
    _, var, a, Q, ph = moments(s, sig)
    he = [np.ones_like(a), a]
    for k in range(1, K):
        he.append(a * he[k] - k * he[k - 1])
    c = [sig * (T * ph + Q)] + [(s * he[k - 1] + sig * (he[k] + k * he[k - 2])) * ph for k in range(2, K + 1)]
    v, used = np.zeros_like(s), np.zeros_like(s)
    for k in range(1, K + 2):
        q = dict(p)
        f = math.sqrt(2.0 / k)  # rho = beam autocorrelation (covariance 2 Sigma_b); rho^k: 2 Sigma_b / k
        q["bmaj_arcsec"] *= f
        q["bmin_arcsec"] *= f
        rk = mockgen.beam_kernel(q, jac, 16)
        if k == K + 1:
            return v + np.maximum(var - used, 0.0) * rk.sum()
        v += c[k - 1] * fftconvolve(c[k - 1], rk, mode="same") / math.factorial(k)
        used += c[k - 1] ** 2 / math.factorial(k)


def invert_mean(mu, sig):
    u = np.linspace(-10.0, mu.max() / sig + 10.0, 8000)
    m1 = u * norm.sf(T - u) + norm.pdf(T - u)
    return sig * np.interp(mu / sig, m1, u)


def study(name, n, seed0):
    p = mockgen.preset(name)
    w, line0, _, _, truth = mockgen.noise_free(p)
    rms, jac = p["rms"], mockgen.pixel_jacobian(w)
    ys, xs = np.mgrid[0:line0.shape[0], 0:line0.shape[1]]
    e0, n0 = mockgen.sky_offsets(w, xs.astype(float), ys.astype(float), truth["centre"]["ra_deg"],
                                 truth["centre"]["dec_deg"])
    lp = math.radians(p["lead_pa_deg"])
    lead = e0 * math.sin(lp) + n0 * math.cos(lp) > 0
    beam = mockgen.beam_kernel(p, jac, 12)
    beam /= beam.sum()
    q = dict(p)
    q["bmaj_arcsec"] /= math.sqrt(2.0)
    q["bmin_arcsec"] /= math.sqrt(2.0)
    half = mockgen.beam_kernel(q, jac, 12)
    half /= half.sum()
    eta = 2.0 * math.pi * p["bmaj_arcsec"] * p["bmin_arcsec"] / (4.0 * math.log(2.0)) / p["pixel_arcsec"] ** 2
    v_true = hermite_shares(line0, rms, p, jac)
    rng = np.random.default_rng(seed0)
    rows = []
    for _ in range(n):
        line = line0 + rms * mockgen.correlated_noise(p, rng, jac, line0.shape)
        M = np.where(line >= T * rms, line, 0.0)
        v_plug = hermite_shares(invert_mean(fftconvolve(M, beam, mode="same"), rms), rms, p, jac)
        v_old = eta * moments(fftconvolve(M, half, mode="same"), rms)[1]
        rows.append((M[lead].sum(), M[~lead].sum(), v_plug[lead].sum(), v_plug[~lead].sum(),
                     v_old[lead].sum(), v_old[~lead].sum()))
    R = np.array(rows)
    L, Tr = R[:, 0], R[:, 1]
    A = (L - Tr) / (L + Tr)
    Lm, Tm = L.mean(), Tr.mean()

    def sig_a(vl, vt):
        return 2.0 * math.sqrt(Tm ** 2 * vl + Lm ** 2 * vt) / (Lm + Tm) ** 2

    scatter = float(np.std(A, ddof=1))
    s_true = sig_a(v_true[lead].sum(), v_true[~lead].sum())
    s_plug = sig_a(R[:, 2].mean(), R[:, 3].mean())
    s_old = sig_a(R[:, 4].mean(), R[:, 5].mean())
    print(f"| {name} | {n} | {scatter:.4f} | {s_true:.4f} ({s_true / scatter:.2f}) | "
          f"{s_plug:.4f} ({s_plug / scatter:.2f}) | {s_old:.4f} ({s_old / scatter:.2f}) |")
    sys.stdout.flush()


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--n", type=int, default=200)
    ap.add_argument("--presets", default="null,faint,bright,centre-trap")
    ap.add_argument("--seed", type=int, default=777)
    a = ap.parse_args()
    print("| preset | n | scatter of A | true S | plug-in (fulcrum) | former rule |")
    print("|---|---|---|---|---|---|")
    for name in a.presets.split(","):
        study(name, a.n, a.seed)


if __name__ == "__main__":
    main()
