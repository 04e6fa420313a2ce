#!/usr/bin/python3
"""Exactness check of fulcrum's leading/trailing sums (split/half_split.hpp).

Independent reference: every pixel square is mapped through the FITS WCS
(astropy.wcs, origin 0) to the gnomonic tangent plane about the frame
reference (our own formula, Calabretta & Greisen 2002 TAN standard
coordinates), and intersected with the half-plane on the leading side of the
split line using shapely polygon intersection (python3-shapely). The sum of
value x area fraction is compared with fulcrum's numbers to 1e-9 relative.

Usage: check_split_shapely.py MAP.fits CASES.json
CASES.json: {"reference": [ra, dec], "aperture": null | {"east","north","pa_deg","a","q"},
             "cases": [{"east","north","tail_pa_deg","leading","trailing"}, ...]}
"""
import json
import math
import sys

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
from shapely.geometry import Polygon

REL_TOL = 1e-9  # exact geometry on both sides: only rounding differs


def gnomonic(ra, dec, ra0, dec0):
    ra, dec, ra0, dec0 = map(np.radians, (ra, dec, ra0, dec0))
    d = np.sin(dec0) * np.sin(dec) + np.cos(dec0) * np.cos(dec) * np.cos(ra - ra0)
    xi = np.cos(dec) * np.sin(ra - ra0) / d
    eta = (np.cos(dec0) * np.sin(dec) - np.sin(dec0) * np.cos(dec) * np.cos(ra - ra0)) / d
    return np.degrees(xi) * 3600.0, np.degrees(eta) * 3600.0


def main():
    hdu = fits.open(sys.argv[1])[0]
    data = hdu.data.astype(float)
    w = WCS(hdu.header).celestial
    spec = json.load(open(sys.argv[2]))
    ra0, dec0 = spec["reference"]
    ny, nx = data.shape
    ys, xs = np.mgrid[0:ny, 0:nx]
    # centres (aperture membership) and corners
    cra, cdec = w.all_pix2world(xs, ys, 0)
    ce, cn = gnomonic(cra, cdec, ra0, dec0)
    corners = []
    for dx, dy in ((-0.5, -0.5), (0.5, -0.5), (0.5, 0.5), (-0.5, 0.5)):
        r, d = w.all_pix2world(xs + dx, ys + dy, 0)
        corners.append(gnomonic(r, d, ra0, dec0))
    keep = np.isfinite(data)
    ap = spec.get("aperture")
    if ap:
        pa = math.radians(ap["pa_deg"])
        ex, nn = ce - ap["east"], cn - ap["north"]
        maj = ex * math.sin(pa) + nn * math.cos(pa)
        mnr = ex * math.cos(pa) - nn * math.sin(pa)
        keep &= (maj / ap["a"]) ** 2 + (mnr / (ap["a"] * ap["q"])) ** 2 <= 1.0
    idx = np.argwhere(keep)
    polys = [(Polygon([(c[0][j, i], c[1][j, i]) for c in corners]), data[j, i]) for j, i in idx]
    big = 1e5
    bad = 0
    for case in spec["cases"]:
        th = math.radians(case["tail_pa_deg"])
        n = np.array([-math.sin(th), -math.cos(th)])  # leading normal
        t = np.array([n[1], -n[0]])
        c = np.array([case["east"], case["north"]])
        half = Polygon([tuple(c + big * t), tuple(c + big * t + big * n),
                        tuple(c - big * t + big * n), tuple(c - big * t)])
        lead = 0.0
        trail = 0.0
        for poly, f in polys:
            frac = poly.intersection(half).area / poly.area
            lead += f * frac
            trail += f * (1.0 - frac)
        for name, ref, got in (("leading", lead, case["leading"]), ("trailing", trail, case["trailing"])):
            rel = abs(got - ref) / max(abs(ref), 1e-300)
            if rel > REL_TOL:
                bad += 1
                print(f"MISMATCH {name}: fulcrum {got!r} shapely {ref!r} rel {rel:.3e} case {case}")
    print(f"compared {2 * len(spec['cases'])} sums over {len(polys)} pixels; {bad} mismatches")
    sys.exit(1 if bad else 0)


main()
