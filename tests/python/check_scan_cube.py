#!/usr/bin/python3
"""Check the WCS of a `fulcrum scan` cube with astropy (python3-astropy).

Axes 1-2 must be a celestial TAN WCS whose pixel (i, j) is the trial centre at
gnomonic offsets (east_i, north_j) about the reference (standard coordinates,
Calabretta & Greisen 2002); axis 3 is the tail PA in degrees. Cube values at
the points listed in POINTS.json must equal the direct sums given there.

Usage: check_scan_cube.py CUBE.fits POINTS.json
POINTS.json: {"reference": [ra, dec], "east": [...], "north": [...], "angles": [...],
              "points": [{"i","j","k","asymmetry"}, ...]}
"""
import json
import math
import sys

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS

TOL_ARCSEC = 1e-6   # positions: TAN inverse, double precision
TOL_VALUE = 1e-9    # engine vs direct sum (exact both)


def gnomonic_inverse(xi_arcsec, eta_arcsec, ra0, dec0):
    xi, eta = math.radians(xi_arcsec / 3600.0), math.radians(eta_arcsec / 3600.0)
    ra0, dec0 = math.radians(ra0), math.radians(dec0)
    rho = math.hypot(xi, eta)
    c = math.atan(rho)
    if rho == 0:
        return math.degrees(ra0), math.degrees(dec0)
    dec = math.asin(math.cos(c) * math.sin(dec0) + eta * math.sin(c) * math.cos(dec0) / rho)
    ra = ra0 + math.atan2(xi * math.sin(c), rho * math.cos(dec0) * math.cos(c) - eta * math.sin(dec0) * math.sin(c))
    return math.degrees(ra), math.degrees(dec)


def main():
    hdu = fits.open(sys.argv[1])[0]
    spec = json.load(open(sys.argv[2]))
    ra0, dec0 = spec["reference"]
    w = WCS(hdu.header)
    bad = 0
    cel = w.celestial
    for i, e in enumerate(spec["east"]):
        for j, n in enumerate(spec["north"]):
            ra, dec = cel.all_pix2world([[i, j]], 0)[0]
            rr, dd = gnomonic_inverse(e, n, ra0, dec0)
            d = math.hypot((ra - rr) * math.cos(math.radians(dec0)), dec - dd) * 3600.0
            if d > TOL_ARCSEC:
                bad += 1
                print(f"position mismatch at ({i},{j}): {d:.3e} arcsec")
    sub = w.sub([3])
    for k, a in enumerate(spec["angles"]):
        got = sub.all_pix2world([[k]], 0)[0][0]
        if abs(got - a) > 1e-9:
            bad += 1
            print(f"angle axis mismatch at {k}: {got} vs {a}")
    if hdu.header.get("CUNIT3", "").strip() != "deg":
        bad += 1
        print("CUNIT3 is not deg")
    data = hdu.data
    for p in spec["points"]:
        got = data[p["k"], p["j"], p["i"]]
        if abs(got - p["asymmetry"]) > TOL_VALUE * max(1.0, abs(p["asymmetry"])):
            bad += 1
            print(f"value mismatch at {p}: {got}")
    print(f"checked {len(spec['east']) * len(spec['north'])} positions, {len(spec['angles'])} angles, "
          f"{len(spec['points'])} values; {bad} problems")
    sys.exit(1 if bad else 0)


main()
