"""Self-checks of the independent mock generator (tests/python/mockgen.py),
so that the coverage study measures fulcrum against a generator that is
itself right. Each check names its outside reference:

1. WCS (FITS WCS standard, through astropy.wcs as the reader): the written
   velocity map's header puts the true centre where the generator says, and
   the CD matrix has the stated pixel size and handedness (det < 0: east to
   the left for an unflipped grid).
2. Beam cards (FITS BMAJ/BMIN/BPA in degrees, common practice): they give
   back the preset beam.
3. Noise (the noise model of docs/uncertainties.md §1, derived there): the
   generator's unit noise field has pixel rms 1 within 3% and a correlation
   at one beam FWHM along the beam's major axis of 2^-2 = 0.25 within 0.03
   (the beam is 2^-4 there, its autocorrelation, a Gaussian with sqrt2 x the
   sigma, is the square root of that), measured over 30 fields.
4. Velocities (the tilted-ring formula of Begeman 1989 with the arctan
   rotation curve): on an unsmeared copy (beam 0.01") the noise-free
   velocity at the pixel centres equals vsys + vrot sin i cos theta computed
   here from the truth within 0.5 km/s (the generator averages 3x3
   sub-pixels, this check evaluates the pixel centre: the difference is the
   curvature over a pixel, < 0.5 km/s away from the centre).
5. Asymmetry: A_expected is 0 within 0.005 for the null preset (point-
   symmetric disc and beam; footprint sampling), positive for bright, and
   the centre-trap's optical centre reverses the sign.

usage: check_mockgen.py OUTDIR
"""
import json
import math
import os
import sys

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import mockgen  # noqa: E402

FAIL = []


def check(ok, what):
    print(("ok   " if ok else "FAIL ") + what)
    if not ok:
        FAIL.append(what)


def main(out):
    t = mockgen.generate("bright", 3, out)
    h = fits.getheader(os.path.join(out, "velocity.fits"))
    w = WCS(h)
    p = mockgen.preset("bright")
    cx = 0.5 * (p["nx"] - 1) + p["centre_pixel_offset"][0]
    cy = 0.5 * (p["ny"] - 1) + p["centre_pixel_offset"][1]
    ra, dec = w.wcs_pix2world(cx, cy, 0)
    check(abs(ra - t["centre"]["ra_deg"]) < 1e-10 and abs(dec - t["centre"]["dec_deg"]) < 1e-10,
          f"1. WCS: true centre at pixel ({cx + 1:.2f}, {cy + 1:.2f}) (FITS) reads back as the truth")
    cd = w.pixel_scale_matrix * 3600
    check(abs(math.sqrt(abs(np.linalg.det(cd))) - p["pixel_arcsec"]) < 1e-12 and np.linalg.det(cd) < 0,
          f"1. WCS: CD matrix pixel {math.sqrt(abs(np.linalg.det(cd))):.4f}\" and det < 0 (unflipped)")
    check(abs(h["BMAJ"] * 3600 - p["bmaj_arcsec"]) < 1e-9 and abs(h["BMIN"] * 3600 - p["bmin_arcsec"]) < 1e-9
          and h["BPA"] == p["bpa_deg"], "2. beam cards give the preset beam")
    check(h["BUNIT"] == "km/s" and fits.getheader(os.path.join(out, "intensity.fits"))["BUNIT"] == "Jy/beam km/s",
          "units: km/s and Jy/beam km/s")
    # 3. noise
    rng = np.random.default_rng(1)
    jac = w.pixel_scale_matrix * 3600  # (east, north) per pixel step, as the header says
    fields = [mockgen.correlated_noise(p, rng, jac, (128, 128)) for _ in range(30)]
    rms = float(np.sqrt(np.mean(np.square(fields))))
    check(abs(rms - 1) < 0.03, f"3. unit noise rms {rms:.4f}")
    b = math.radians(p["bpa_deg"])
    lag = np.linalg.solve(jac, p["bmaj_arcsec"] * np.array([math.sin(b), math.cos(b)]))
    # correlation at the nearest integer lags around, interpolated bilinearly
    x0, y0 = int(math.floor(lag[0])), int(math.floor(lag[1]))
    fx, fy = lag[0] - x0, lag[1] - y0

    def corr(dx, dy):
        return float(np.mean([np.mean(f * np.roll(f, (-dy, -dx), axis=(0, 1))) for f in fields]) / rms ** 2)
    c = ((1 - fx) * (1 - fy) * corr(x0, y0) + fx * (1 - fy) * corr(x0 + 1, y0)
         + (1 - fx) * fy * corr(x0, y0 + 1) + fx * fy * corr(x0 + 1, y0 + 1))
    check(abs(c - 0.25) < 0.03, f"3. noise correlation at one FWHM along the major axis {c:.3f} (0.25)")
    # 4. velocities without smearing
    q = mockgen.preset("bright", bmaj_arcsec=0.01, bmin_arcsec=0.01)
    w2 = mockgen.make_wcs(q)
    _, vel = mockgen.noise_free_maps(q, w2, 0.0)
    yy, xx = np.mgrid[0:q["ny"], 0:q["nx"]].astype(float)
    ra0, dec0 = mockgen.true_centre(q, w2)
    e, n = mockgen.sky_offsets(w2, xx, yy, ra0, dec0)
    pa, inc = math.radians(q["pa_deg"]), math.radians(q["inc_deg"])
    X = e * math.sin(pa) + n * math.cos(pa)
    Y = (e * math.cos(pa) - n * math.sin(pa)) / math.cos(inc)
    R = np.hypot(X, Y)
    model = q["vsys_kms"] + q["vflat_kms"] * 2 / math.pi * np.arctan(R / q["rt_arcsec"]) * math.sin(inc) * X / np.maximum(R, 1e-9)
    sel = (R > 3.0) & (R < 15.0)
    d = float(np.nanmax(np.abs(vel[sel] - model[sel])))
    check(d < 0.5, f"4. unsmeared velocities vs the tilted-ring formula: largest difference {d:.3f} km/s")
    # 5. asymmetry
    tn = mockgen.generate("null", 1, os.path.join(out, "null"))
    tt = mockgen.generate("centre-trap", 1, os.path.join(out, "trap"))
    check(abs(tn["A_expected"]) < 0.005, f"5. null preset A_expected {tn['A_expected']:+.4f}")
    check(t["A_expected"] > 0.02, f"5. bright preset A_expected {t['A_expected']:+.4f} > 0")
    check(tt["A_expected"] > 0 > tt["A_optical_centre"],
          f"5. centre trap: A {tt['A_expected']:+.3f} at the centre, {tt['A_optical_centre']:+.3f} at the optical centre")
    with open(os.path.join(out, "truth.json")) as f:
        json.load(f)
    return 1 if FAIL else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
