"""Coverage study of fulcrum's error bars on independent mocks
(docs/uncertainties.md). For each preset of tests/python/mockgen.py it draws
N noise realisations of the same galaxy, runs the built `fulcrum kinematics`
(and, unless --kinematics-only, `fulcrum analyse`) on each in its own
temporary folder, and prints one table row per preset:

  n ok        fits with status ok / realisations
  in 1s, in 2s  fraction of runs whose true centre lies inside the reported
              1-sigma / 2-sigma ellipse (Mahalanobis^2 <= 1 / <= 4; for a
              correct 2-D Gaussian covariance 1 - exp(-m2/2) = 0.393 / 0.865)
  <m2>        mean Mahalanobis^2 of the true centre (2 for a correct covariance)
  PA pull, inc pull  mean and rms of (fit - truth) / error (0 and 1 expected)
  A68         fraction of runs whose 68% interval of A covers A_expected
  A pull      rms of (A - A_expected) / asymmetry_err
  KS p        Kolmogorov-Smirnov p-value of P(A>0) against uniform (null preset)
  robust|rev  fraction of runs with verdict robust or reversed
  verdicts    counts of each verdict
  calibration the calibration's symmetric mocks called robust or reversed,
              pooled over the runs (its prediction of the rate above, before
              its own gate), and its centre coverage (truth in 2 sigma)

usage:
  /usr/bin/python3 tools/coverage_study.py --fulcrum build/fulcrum --n 40 --jobs 2 \
      [--presets bright,faint,null,centre-trap] [--kinematics-only] [--clip-snr 3] [--set scatter_kms=8]
      [--no-velocity-error] [--json OUT.json]

The mocks are made by tests/python/mockgen.py (numpy/scipy/astropy), not by
fulcrum. Nothing here is timed; it is a benchmark-sized study (minutes), and
tests/python/check_coverage_ci.py runs a reduced version for CI.
"""
import argparse
import concurrent.futures as cf
import json
import math
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "python"))
import mockgen  # noqa: E402
from mockgen import gnomonic_offset  # noqa: E402

VERDICTS = ["robust", "marginal", "centre-sensitive", "reversed", "undetermined"]


def angle_diff(a, b, period=360.0):
    return (a - b + 0.5 * period) % period - 0.5 * period


def run(cmd, log):
    r = subprocess.run(cmd, capture_output=True, text=True)
    with open(log, "a") as f:
        f.write(" ".join(cmd) + f"\nexit {r.returncode}\n{r.stdout}\n{r.stderr}\n")
    return r.returncode


def kinematics_result(k, truth):
    """Mahalanobis^2 of the true centre and the PA/inclination pulls."""
    out = {"status": k.get("status"), "reason": k.get("reason")}
    if k.get("status") != "ok":
        return out
    c = k["centre"]
    de, dn = gnomonic_offset(c["ra_deg"], c["dec_deg"], truth["centre"]["ra_deg"], truth["centre"]["dec_deg"])
    cov = np.array(c["cov_arcsec2"], dtype=float)
    d = np.array([de, dn])
    out["m2"] = float(d @ np.linalg.solve(cov, d))
    out["offset_arcsec"] = float(math.hypot(de, dn))
    out["truth_minus_fit_arcsec"] = [de, dn]
    out["cov_arcsec2"] = cov.tolist()
    out["pa_pull"] = angle_diff(k["pa_deg"], truth["pa_deg"]) / k["pa_err_deg"]
    out["inc_pull"] = (k["inc_deg"] - truth["inc_deg"]) / k["inc_err_deg"]
    out["reduced_chi2"] = k["diagnostics"].get("reduced_chi2")
    terms = c.get("error_terms") or k.get("centre_error_terms")
    if terms:
        out["error_terms"] = terms
    return out


def analyse_result(rep, truth):
    out = {"verdict": rep.get("verdict")}
    sp, rb = rep.get("split") or {}, rep.get("robustness") or {}
    a, err = sp.get("asymmetry"), sp.get("asymmetry_err")
    ci = rb.get("asymmetry_ci68")
    if a is not None:
        out["A"] = a
        if err:
            out["A_pull"] = (a - truth["A_expected"]) / err
    if ci and ci[0] is not None:
        out["A68_covers"] = bool(ci[0] <= truth["A_expected"] <= ci[1])
        out["A_ci68"] = ci
        out["A_err"] = err
    if rb.get("p_leading") is not None:
        out["p_leading"] = rb["p_leading"]
    cal = rep.get("calibration") or {}
    if cal.get("false_robust"):
        # The calibration's own symmetric mocks called robust or reversed
        # (its prediction of how often a disc without asymmetry is).
        out["cal_false_robust"] = [cal["false_robust"]["k"], cal["false_robust"]["n"]]
        out["cal_centre_coverage"] = [cal["centre_coverage_2sigma"]["k"], cal["centre_coverage_2sigma"]["n"]]
    return out


def drop_islands(d, min_pixels):
    """Blank, in the velocity and intensity maps (and their error maps),
    8-connected groups of fewer than `min_pixels` finite velocity pixels: the
    isolated noise peaks above the clip outside the disc."""
    from astropy.io import fits
    from scipy import ndimage
    vel = fits.getdata(os.path.join(d, "velocity.fits"))
    lab, n = ndimage.label(np.isfinite(vel), structure=np.ones((3, 3)))
    sizes = ndimage.sum(np.isfinite(vel), lab, index=np.arange(1, n + 1))
    small = np.isin(lab, 1 + np.nonzero(sizes < min_pixels)[0])
    for name in ("velocity", "velocity_error", "intensity"):
        path = os.path.join(d, f"{name}.fits")
        with fits.open(path) as h:
            data, hdr = h[0].data.copy(), h[0].header.copy()
        data[small] = np.nan
        fits.PrimaryHDU(data=data, header=hdr).writeto(path, overwrite=True)


def one_realisation(args):
    """Generate, fit and analyse one realisation; returns a result dict."""
    preset, seed, fulcrum, kin_only, draws, keep, islands, clip_snr, tail_err, overrides, no_verr = args
    d = tempfile.mkdtemp(prefix=f"cov_{preset}_{seed}_")
    try:
        truth = mockgen.generate(preset, seed, d, **overrides)
        if islands > 0:
            drop_islands(d, islands)
        log = os.path.join(d, "log.txt")
        res = {"preset": preset, "seed": seed, "A_expected": truth["A_expected"]}
        kj = os.path.join(d, "kin.json")
        # The velocity error map, unless the study runs without one (as many
        # delivered velocity fields come).
        verr = [] if no_verr else ["--velocity-error", f"{d}/velocity_error.fits"]
        run([fulcrum, "--quiet", "kinematics", "--velocity", f"{d}/velocity.fits", *verr,
             "--intensity", f"{d}/intensity.fits", "--json", kj], log)
        if os.path.exists(kj):
            res.update(kinematics_result(json.load(open(kj)), truth))
        else:
            res["status"] = "no output"
        if not kin_only:
            out = os.path.join(d, "analysis")
            cmd = [fulcrum, "--quiet", "analyse", "--velocity", f"{d}/velocity.fits", *verr,
                   "--intensity", f"{d}/intensity.fits", "--intensity-error",
                   f"{d}/intensity_error.fits", "--tail-pa", str(truth["tail_pa_deg"]), "--tail-pa-err", str(tail_err),
                   "--seed", str(seed), "--draws", str(draws), "--no-figures", "--out", out]
            if preset == "centre-trap":
                cmd += ["--optical", f"{d}/optical.fits"]
            if clip_snr > 0:
                cmd += ["--clip-snr", str(clip_snr)]
            run(cmd, log)
            rp = os.path.join(out, "report.json")
            if os.path.exists(rp):
                rep = json.load(open(rp))
                res.update(analyse_result(rep, truth))
                # The centre the analysis used: its covariance carries the
                # re-fit bootstrap's scale (calibration on), which the
                # kinematics command alone does not run.
                k = rep.get("kinematics") or {}
                if k.get("status") == "ok":
                    res.update(kinematics_result(k, truth))
                    if k.get("centre_bootstrap"):
                        res["centre_bootstrap"] = k["centre_bootstrap"]
        return res
    finally:
        if keep:
            print(f"kept {d}", file=sys.stderr)
        else:
            shutil.rmtree(d, ignore_errors=True)


def summarise(rows):
    """Coverage numbers of one preset's results."""
    ok = [r for r in rows if r.get("status") == "ok" and "m2" in r]
    s = {"n": len(rows), "n_ok": len(ok)}
    if ok:
        m2 = np.array([r["m2"] for r in ok])
        s["in_1sigma"] = float(np.mean(m2 <= 1.0))
        s["in_2sigma"] = float(np.mean(m2 <= 4.0))
        s["mean_m2"] = float(np.mean(m2))
        s["median_m2"] = float(np.median(m2))
        for k in ("pa_pull", "inc_pull"):
            v = np.array([r[k] for r in ok])
            s[k + "_mean"], s[k + "_rms"] = float(np.mean(v)), float(np.sqrt(np.mean(v * v)))
        s["mean_offset_arcsec"] = float(np.mean([r["offset_arcsec"] for r in ok]))
        chi = [r["reduced_chi2"] for r in ok if r.get("reduced_chi2") is not None]
        if chi:
            s["median_reduced_chi2"] = float(np.median(chi))
    cov = [r["A68_covers"] for r in rows if "A68_covers" in r]
    if cov:
        s["A68_coverage"] = float(np.mean(cov))
    pulls = [r["A_pull"] for r in rows if "A_pull" in r]
    if pulls:
        s["A_pull_rms"] = float(np.sqrt(np.mean(np.square(pulls))))
    p = [r["p_leading"] for r in rows if "p_leading" in r]
    if len(p) >= 5:
        from scipy import stats
        s["p_leading_ks_p"] = float(stats.kstest(p, "uniform").pvalue)
    v = [r.get("verdict") for r in rows if r.get("verdict")]
    if v:
        s["verdicts"] = {k: v.count(k) for k in VERDICTS if v.count(k)}
        s["robust_or_reversed"] = (v.count("robust") + v.count("reversed")) / len(v)
    cal = [r["cal_false_robust"] for r in rows if "cal_false_robust" in r]
    if cal:
        # Pooled over the realisations: the calibration's predicted rate.
        s["cal_false_robust"] = sum(k for k, _ in cal) / max(1, sum(n for _, n in cal))
        cc = [r["cal_centre_coverage"] for r in rows if "cal_centre_coverage" in r]
        s["cal_centre_coverage"] = sum(k for k, _ in cc) / max(1, sum(n for _, n in cc))
    return s


def fmt(x, f="{:.2f}"):
    return "-" if x is None else f.format(x)


def print_table(summary):
    print("| preset | n ok | in 1s (0.39) | in 2s (0.86) | <m2> (2) | PA pull mean/rms | inc pull mean/rms "
          "| A68 (0.68) | A pull rms | KS p | robust or reversed | verdicts | calibration: false robust, "
          "centre in 2s |")
    print("|---|---|---|---|---|---|---|---|---|---|---|---|---|")
    for name, s in summary.items():
        print(f"| {name} | {s['n_ok']}/{s['n']} | {fmt(s.get('in_1sigma'))} | {fmt(s.get('in_2sigma'))} | "
              f"{fmt(s.get('mean_m2'))} | {fmt(s.get('pa_pull_mean'))}/{fmt(s.get('pa_pull_rms'))} | "
              f"{fmt(s.get('inc_pull_mean'))}/{fmt(s.get('inc_pull_rms'))} | {fmt(s.get('A68_coverage'))} | "
              f"{fmt(s.get('A_pull_rms'))} | {fmt(s.get('p_leading_ks_p'), '{:.3f}')} | "
              f"{fmt(s.get('robust_or_reversed'))} | "
              f"{', '.join(f'{k} {n}' for k, n in (s.get('verdicts') or {}).items()) or '-'} | "
              f"{fmt(s.get('cal_false_robust'), '{:.3f}')}, {fmt(s.get('cal_centre_coverage'))} |")


def main(argv):
    ap = argparse.ArgumentParser(description="Coverage of fulcrum's error bars on independent mocks.")
    ap.add_argument("--fulcrum", default=os.path.join(HERE, "..", "build", "fulcrum"), help="the fulcrum binary")
    ap.add_argument("--presets", default="bright,faint,null,centre-trap")
    ap.add_argument("--n", type=int, default=40, help="realisations per preset")
    ap.add_argument("--first-seed", type=int, default=1000)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--draws", type=int, default=2000, help="bootstrap draws of fulcrum analyse")
    ap.add_argument("--kinematics-only", action="store_true")
    ap.add_argument("--keep", action="store_true", help="keep the temporary folders")
    ap.add_argument("--drop-islands", type=int, default=0, metavar="PIX",
                    help="blank groups of fewer than PIX connected velocity pixels before fitting (0: off)")
    ap.add_argument("--clip-snr", type=float, default=3.0,
                    help="tell fulcrum analyse the maps are clipped at this S/N (mockgen clips at 3; 0: do not)")
    ap.add_argument("--tail-pa-err", type=float, default=0.0,
                    help="tail PA error given to fulcrum analyse, deg (0: the truth's tail PA is exact, so the "
                         "interval of A is compared with A_expected at that angle)")
    ap.add_argument("--set", action="append", default=[], metavar="KEY=VALUE",
                    help="override a mockgen.py parameter of every preset (numbers), e.g. scatter_kms=8")
    ap.add_argument("--no-velocity-error", action="store_true",
                    help="give fulcrum no velocity error map (the fit then takes its noise from the residuals)")
    ap.add_argument("--json", help="write the per-run results and the summary here")
    a = ap.parse_args(argv)
    if not os.access(a.fulcrum, os.X_OK):
        print(f"coverage_study.py: --fulcrum: {a.fulcrum} is not an executable", file=sys.stderr)
        return 2
    presets = [p for p in a.presets.split(",") if p]
    for p in presets:
        if p not in mockgen.PRESETS:
            print(f"coverage_study.py: --presets: unknown preset '{p}'", file=sys.stderr)
            return 2
    overrides = {}
    for kv in a.set:
        key, _, value = kv.partition("=")
        if key not in mockgen.BASE or not value:
            print(f"coverage_study.py: --set: '{kv}' is not KEY=VALUE with a mockgen.py parameter", file=sys.stderr)
            return 2
        try:
            overrides[key] = float(value)
        except ValueError:
            print(f"coverage_study.py: --set: '{kv}': the value is not a number", file=sys.stderr)
            return 2
    tasks = [(p, a.first_seed + i, os.path.abspath(a.fulcrum), a.kinematics_only, a.draws, a.keep, a.drop_islands,
              a.clip_snr, a.tail_pa_err, overrides, a.no_velocity_error) for p in presets for i in range(a.n)]
    with cf.ProcessPoolExecutor(max_workers=max(1, a.jobs)) as ex:
        results = list(ex.map(one_realisation, tasks))
    summary = {p: summarise([r for r in results if r["preset"] == p]) for p in presets}
    print_table(summary)
    if a.json:
        tmp = a.json + ".tmp"
        with open(tmp, "w") as f:
            json.dump({"summary": summary, "runs": results, "n": a.n, "presets": presets}, f, indent=1)
        os.replace(tmp, a.json)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
