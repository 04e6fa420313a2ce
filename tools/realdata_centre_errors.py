"""The dynamical centre and its error budget on the two public CO velocity
fields of /work/shared/realdata (Cooke, Levy et al. 2022, MNRAS 512, 1012;
see that folder's README for source, licence and citation).

The maps mark blanks with -999 through a BLANK card that the FITS standard
defines for integer data only; this script writes temporary float copies
with NaN there (astropy), keeps only the connected groups of at least 30 finite
velocity pixels (the disc; the maps have isolated pixels scattered over the
field; --all-pixels keeps them), runs `fulcrum kinematics`, and prints the reduced
chi^2, the centre error terms and the offset of the published centre
(Table 2 of the paper) in arcsec and as a Mahalanobis distance.

usage: /usr/bin/python3 tools/realdata_centre_errors.py --fulcrum build/fulcrum
           [--data /work/shared/realdata] [--json OUT.json]
"""
import argparse
import json
import math
import os
import subprocess
import sys
import tempfile
import warnings

import numpy as np
from astropy.io import fits

# Published centres (README table, from Table 2 of Cooke, Levy et al. 2022).
MIN_GROUP = 30  # pixels; the isolated pixels outside the discs come alone or in small groups
PUBLISHED = {"NGC4310": (185.6094622, 29.20863889), "NGC5692": (219.57549, 3.41031)}


def offset(ra0, dec0, ra, dec):
    a, d, a0, d0 = map(math.radians, (ra, dec, ra0, dec0))
    cosc = math.sin(d0) * math.sin(d) + math.cos(d0) * math.cos(d) * math.cos(a - a0)
    k = 180 / math.pi * 3600
    return (math.cos(d) * math.sin(a - a0) / cosc * k,
            (math.cos(d0) * math.sin(d) - math.sin(d0) * math.cos(d) * math.cos(a - a0)) / cosc * k)


def largest_island(src):
    """Mask (True = keep) of the 8-connected groups of finite pixels with at
    least MIN_GROUP pixels: the disc (which the blanking splits into a few
    large pieces), without the isolated pixels scattered over the field."""
    from scipy import ndimage
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        data = fits.getdata(src).astype(float)
    ok = np.isfinite(data) & (data != -999) & (np.abs(data) < 1e30)
    lab, n = ndimage.label(ok, structure=np.ones((3, 3)))
    if n == 0:
        return ok
    sizes = ndimage.sum(ok, lab, index=np.arange(1, n + 1))
    big = 1 + np.nonzero(sizes >= MIN_GROUP)[0]
    return np.isin(lab, big)


def clean_copy(src, dst, keep=None):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with fits.open(src) as h:
            data = h[0].data.astype(np.float32)
            hdr = h[0].header.copy()
    data[(data == -999) | ~np.isfinite(data) | (np.abs(data) > 1e30)] = np.nan
    if keep is not None:
        data[~keep] = np.nan
    hdr.remove("BLANK", ignore_missing=True)
    fits.PrimaryHDU(data=data, header=hdr).writeto(dst, overwrite=True, output_verify="silentfix")


def main(argv):
    ap = argparse.ArgumentParser()
    ap.add_argument("--fulcrum", default="build/fulcrum")
    ap.add_argument("--data", default="/work/shared/realdata")
    ap.add_argument("--json")
    ap.add_argument("--start-at-published", dest="start_published", action="store_true",
                    help="start the fit at the published centre (first guess only)")
    ap.add_argument("--all-pixels", dest="largest_island", action="store_false",
                    help="keep the isolated pixels outside the disc (default: only groups of at least 30 pixels)")
    a = ap.parse_args(argv)
    out = {}
    for name, (ra, dec) in PUBLISHED.items():
        with tempfile.TemporaryDirectory() as d:
            keep = largest_island(os.path.join(a.data, f"{name}.cgrad.vcen.fits")) if a.largest_island else None
            for suffix in ("cgrad.vcen", "evcen", "gausspk"):
                clean_copy(os.path.join(a.data, f"{name}.{suffix}.fits"), os.path.join(d, f"{suffix}.fits"), keep)
            kj = os.path.join(d, "k.json")
            r = subprocess.run([a.fulcrum, "--quiet", "kinematics", "--velocity", f"{d}/cgrad.vcen.fits",
                                "--velocity-error", f"{d}/evcen.fits", "--intensity", f"{d}/gausspk.fits",
                                "--json", kj] + (["--centre-ra", str(ra), "--centre-dec", str(dec)] if a.start_published else []),
                               capture_output=True, text=True)
            if not os.path.exists(kj):
                print(f"{name}: fulcrum failed: {r.stderr.strip()}")
                continue
            k = json.load(open(kj))
        if k["status"] != "ok":
            print(f"{name}: {k['status']}: {k['reason']}")
            continue
        c = k["centre"]
        de, dn = offset(c["ra_deg"], c["dec_deg"], ra, dec)
        cov = np.array(c["cov_arcsec2"])
        m2 = float(np.array([de, dn]) @ np.linalg.solve(cov, np.array([de, dn])))
        t = k.get("centre_error_terms", {})
        hc = k.get("harmonic_centre")
        hd = offset(c["ra_deg"], c["dec_deg"], hc["ra_deg"], hc["dec_deg"]) if hc else (float("nan"),) * 2
        row = {"reduced_chi2": k["diagnostics"]["reduced_chi2"], "pa_deg": k["pa_deg"], "pa_err_deg": k["pa_err_deg"],
               "inc_deg": k["inc_deg"], "inc_err_deg": k["inc_err_deg"],
               "published_offset_arcsec": math.hypot(de, dn), "published_m2": m2,
               "harmonic_minus_rings_arcsec": math.hypot(*hd), "centre_error_terms": t,
               "err_ellipse": c.get("error_ellipse")}
        out[name] = row
        print(f"{name}: reduced chi2 {row['reduced_chi2']:.2f}; PA {k['pa_deg']:.1f} +- {k['pa_err_deg']:.1f}, "
              f"inc {k['inc_deg']:.1f} +- {k['inc_err_deg']:.1f}; centre error (1-sigma semi-major): "
              f"formal {t.get('formal_arcsec', float('nan')):.3f}\", statistical {t.get('statistical_arcsec', float('nan')):.3f}\", "
              f"model misfit {t.get('model_misfit_arcsec', float('nan')):.3f}\", method spread "
              f"{t.get('method_spread_arcsec', float('nan')):.3f}\", total {t.get('total_arcsec', float('nan')):.3f}\" "
              f"(dominant: {t.get('dominant')}; residual c2 {t.get('residual_scale2', float('nan')):.2f}, correlation "
              f"{(t.get('residual_correlation') or {}).get('fitted_beam_scale', float('nan')):.2f} x beam); harmonic - rings "
              f"{row['harmonic_minus_rings_arcsec']:.2f}\"; published centre {row['published_offset_arcsec']:.2f}\" away, "
              f"Mahalanobis^2 {m2:.1f}")
    if a.json:
        with open(a.json, "w") as f:
            json.dump(out, f, indent=1)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
