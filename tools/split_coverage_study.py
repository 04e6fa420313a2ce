#!/usr/bin/env python3
"""Coverage study of A's error bars, P(A > 0) and the verdict on an
independent generator's mocks (tests/python/mockgen.py), for
docs/uncertainties.md ("Errors of A, P(A > 0) and the verdict").

For each preset, N noise realisations (seeds 1..N) are written by mockgen,
then build/tools/study_split_coverage fits the kinematic centre and runs the
robustness analysis on each (see that file). Reported per preset:
  * the 68% / 95% bootstrap intervals covering A_expected (the truth's A of
    the noise-free map over its expected 3-sigma footprint), with the
    binomial 1-sigma of the fraction;
  * mean z^2, z = (A - A_expected) / sigma_A (sigma_A the bootstrap's
    standard deviation): 1 when the errors are right, f^2 when they are f
    times too small;
  * the mean of A - A_expected (the clipping bias) with its standard error;
  * KS test of P(A > 0) against uniform (scipy.stats.kstest) - meaningful for
    the null preset (A = 0), where a calibrated P is uniform;
  * the verdict counts, and the robust-or-reversed rate.

usage: /usr/bin/python3 tools/split_coverage_study.py [--n 40] [--presets null,bright,faint,centre-trap]
       [--clip-snr 3] [--draws 2000] [--tail-err 0] [--noise-beams 2] [--true-centre] [--build build] [--work DIR]
numpy, scipy, astropy (Debian python3-numpy, -scipy, -astropy)."""
import argparse
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.stats import kstest

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "python"))
import mockgen  # noqa: E402


def run_preset(preset, n, args, work):
    dirs = []
    for seed in range(1, n + 1):
        d = os.path.join(work, f"{preset}-{seed}")
        if not os.path.exists(os.path.join(d, "truth.json")):
            mockgen.generate(preset, seed=seed, out_dir=d)
        dirs.append(d)
    exe = os.path.join(args.build, "tools", "study_split_coverage")
    cmd = [exe, "--clip-snr", str(args.clip_snr), "--draws", str(args.draws), "--tail-err", str(args.tail_err),
           "--noise-beams", str(args.noise_beams)] + (["--true-centre"] if args.true_centre else [])
    out = subprocess.run(cmd + dirs, check=True, capture_output=True, text=True).stdout
    return [json.loads(line) for line in out.splitlines() if line.strip()]


def summarise(preset, rows):
    ok = [r for r in rows if "A" in r]
    res = {"preset": preset, "n": len(rows), "n_ok": len(ok)}
    if not ok:
        return res
    A = np.array([r["A"] for r in ok])
    Ae = np.array([r["A_expected"] for r in ok])
    s = np.array([r["sigma_A_boot"] for r in ok])
    lo68, hi68 = np.array([r["lo68"] for r in ok]), np.array([r["hi68"] for r in ok])
    lo95, hi95 = np.array([r["lo95"] for r in ok]), np.array([r["hi95"] for r in ok])
    P = np.array([r["P"] for r in ok])
    k = len(ok)
    c68 = float(np.mean((lo68 <= Ae) & (Ae <= hi68)))
    c95 = float(np.mean((lo95 <= Ae) & (Ae <= hi95)))
    res.update({
        "cover68": c68, "cover68_err": math.sqrt(0.68 * 0.32 / k),
        "cover95": c95, "cover95_err": math.sqrt(0.95 * 0.05 / k),
        "mean_z2": float(np.mean(((A - Ae) / s) ** 2)),
        "scatter_over_sigma": float(np.std(A - Ae, ddof=1) / np.sqrt(np.mean(s ** 2))),
        "bias": float(np.mean(A - Ae)), "bias_err": float(np.std(A - Ae, ddof=1) / math.sqrt(k)),
        "ks_uniform_p": float(kstest(P, "uniform").pvalue),
        "mean_sigma": float(np.mean(s)), "A_expected": float(np.mean(Ae)),
    })
    verdicts = {}
    for r in ok:
        verdicts[r["verdict"]] = verdicts.get(r["verdict"], 0) + 1
    res["verdicts"] = verdicts
    res["robust_or_reversed"] = (verdicts.get("robust", 0) + verdicts.get("reversed", 0)) / k
    return res


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--n", type=int, default=40)
    ap.add_argument("--presets", default="null,bright,faint,centre-trap")
    ap.add_argument("--clip-snr", type=float, default=3.0)
    ap.add_argument("--draws", type=int, default=2000)
    ap.add_argument("--tail-err", type=float, default=0.0)
    ap.add_argument("--noise-beams", type=float, default=2.0,
                    help="integral of the noise correlation in beam areas (2: mockgen's noise)")
    ap.add_argument("--true-centre", action="store_true",
                    help="split about the true centre (no kinematic fit): the map-noise part only")
    ap.add_argument("--build", default=os.path.join(HERE, "..", "build"))
    ap.add_argument("--work", default=None, help="folder for the mocks (kept; default: a temporary one)")
    args = ap.parse_args()
    work = args.work or tempfile.mkdtemp(prefix="fulcrum-coverage-")
    os.makedirs(work, exist_ok=True)
    for preset in args.presets.split(","):
        res = summarise(preset, run_preset(preset, args.n, args, work))
        print(json.dumps(res))
        sys.stdout.flush()


if __name__ == "__main__":
    main()
