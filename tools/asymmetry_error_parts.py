#!/usr/bin/env python3
"""Split the realised error of A into its centre part and its map-noise part,
on folders kept by `tools/coverage_study.py --keep` (each holds the
generator's maps, truth.json and analysis/report.json).

For every folder, with the analysis' own pixels (its aperture about the
adopted centre, the detected pixels) and the generator's split
(tests/python/mockgen.py, split_asymmetry):

  centre part  A(adopted centre) - A(true centre), on the noisy map
  noise part   A(true centre) - A_expected
  draws        the spread of A over 60 centre draws from the adopted centre's
               covariance, on the noisy map and on the noise-free map (what the
               bootstrap's centre draws see, with and without the map's noise)

and prints, over the folders: the rms of each part, their correlation, the
centre error along the leading direction in units of its reported error,
the rms half-width of the reported 68% interval, and its coverage.

    /usr/bin/python3 tools/coverage_study.py --presets faint --n 60 --keep --fulcrum build/fulcrum
    /usr/bin/python3 tools/asymmetry_error_parts.py '/tmp/cov_faint_*'
"""
import argparse
import glob
import json
import math
import os
import sys

import numpy as np
from astropy.io import fits

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "python"))
import mockgen  # noqa: E402


def one_folder(d, rng, n_draws):
    try:
        rep = json.load(open(os.path.join(d, "analysis", "report.json")))
        truth = json.load(open(os.path.join(d, "truth.json")))
    except (OSError, ValueError):
        return None
    cs = [c for c in rep.get("centres", []) if c.get("id") == rep.get("adopted_centre")]
    rb = rep.get("robustness") or {}
    if not cs or not rb.get("asymmetry_ci68") or cs[0].get("cov_arcsec2") is None:
        return None
    p = mockgen.preset(truth["preset"])
    w, line0, _, _, _ = mockgen.noise_free(p)
    img = fits.getdata(os.path.join(d, "intensity.fits")).astype(float)
    chat = (cs[0]["ra_deg"], cs[0]["dec_deg"])
    cov = np.array(cs[0]["cov_arcsec2"], dtype=float)
    c0 = (truth["centre"]["ra_deg"], truth["centre"]["dec_deg"])
    ap = rep["split"].get("aperture")
    use = np.isfinite(img)
    if ap:  # the analysis aperture: an ellipse about the adopted centre (pixel centres inside)
        yy, xx = np.mgrid[0:img.shape[0], 0:img.shape[1]].astype(float)
        e, n = mockgen.sky_offsets(w, xx, yy, chat[0], chat[1])
        pa = math.radians(ap["pa_deg"])
        X = e * math.sin(pa) + n * math.cos(pa)
        Y = (e * math.cos(pa) - n * math.sin(pa)) / ap["axis_ratio"]
        use &= X * X + Y * Y <= ap["radius_arcsec"] ** 2
    obs = np.where(np.isfinite(img), img, 0.0)

    def A(im, c):
        return mockgen.split_asymmetry(p, w, im, use, c, n_sub=6)

    L = np.linalg.cholesky(cov)
    on_obs, on_free = [], []
    for _ in range(n_draws):
        z = L @ rng.standard_normal(2)
        c = mockgen.offset_position(w, chat[0], chat[1], z[0], z[1])
        on_obs.append(A(obs, c))
        on_free.append(A(line0, c))
    lp = math.radians(p["lead_pa_deg"])
    lead = np.array([math.sin(lp), math.cos(lp)])
    off = np.array(mockgen.gnomonic_offset(c0[0], c0[1], chat[0], chat[1]))  # adopted - true, arcsec
    return {"seed": truth["seed"], "A_report": rep["split"]["asymmetry"], "A_hat": A(obs, chat), "A_true_centre": A(obs, c0),
            "A_expected": truth["A_expected"], "sd_draws_noisy": float(np.std(on_obs)),
            "sd_draws_noise_free": float(np.std(on_free)), "lead_offset": float(lead @ off),
            "lead_sigma": float(math.sqrt(lead @ cov @ lead)), "sigma_A": rep["split"]["asymmetry_err"],
            "ci68": rb["asymmetry_ci68"]}


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("pattern", help="glob of kept coverage-study folders, e.g. '/tmp/cov_faint_*'")
    ap.add_argument("--draws", type=int, default=60, help="centre draws per folder")
    ap.add_argument("--json", help="write the per-folder rows here")
    a = ap.parse_args(argv)
    rng = np.random.default_rng(7)
    rows = [r for r in (one_folder(d, rng, a.draws) for d in sorted(glob.glob(a.pattern))) if r]
    if len(rows) < 3:
        print(f"asymmetry_error_parts.py: fewer than 3 usable folders match {a.pattern}", file=sys.stderr)
        return 2
    if a.json:
        json.dump(rows, open(a.json, "w"), indent=1)
    g = lambda k: np.array([r[k] for r in rows])  # noqa: E731
    rms = lambda x: float(np.sqrt(np.mean(np.square(x))))  # noqa: E731
    centre, noise = g("A_hat") - g("A_true_centre"), g("A_true_centre") - g("A_expected")
    ci = np.array([r["ci68"] for r in rows])
    print(f"folders                                   {len(rows)}")
    print(f"A recomputed here - A reported (max abs)  {np.max(np.abs(g('A_hat') - g('A_report'))):.4f}")
    print(f"rms of A - A_expected                     {rms(centre + noise):.4f}")
    print(f"  centre part, noise part (rms)           {rms(centre):.4f}, {rms(noise):.4f}")
    print(f"  their correlation                       {np.corrcoef(centre, noise)[0, 1]:+.2f} "
          f"(+- {1 / math.sqrt(len(rows)):.2f})")
    print(f"  mean of the noise part (bias)           {np.mean(noise):+.4f}")
    print(f"centre draws: sd of A, noisy / noise-free {rms(g('sd_draws_noisy')):.4f} / {rms(g('sd_draws_noise_free')):.4f}")
    print(f"reported sigma_A (map noise, rms)         {rms(g('sigma_A')):.4f}")
    print(f"centre offset along the leading direction: mean z^2 {np.mean((g('lead_offset') / g('lead_sigma')) ** 2):.2f}")
    print(f"68% interval: rms half-width              {rms((ci[:, 1] - ci[:, 0]) / 2):.4f}")
    cover = (ci[:, 0] <= g("A_expected")) & (g("A_expected") <= ci[:, 1])
    print(f"68% interval covers A_expected            {np.mean(cover):.3f} "
          f"(+- {math.sqrt(0.68 * 0.32 / len(rows)):.3f})")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
