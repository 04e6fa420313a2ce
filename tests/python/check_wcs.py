"""Reference check: fulcrum's WCS, offsets and position angles vs astropy.

Sources: astropy.wcs.WCS (wcslib underneath, but reached through astropy's own
header parsing), astropy.coordinates.SkyCoord.position_angle/separation, and
the gnomonic (TAN) projection about the reference position as built by
astropy.wcs for the (east, north) offsets (Calabretta & Greisen 2002).
Tolerances: 1e-9 deg for pixel<->world, 1e-6 deg for position angles
(from the issue), 1e-6 arcsec for offsets.
"""
import json
import sys
import warnings

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
from astropy.coordinates import SkyCoord
import astropy.units as u

warnings.simplefilter("ignore")
cases = json.load(open(sys.argv[1]))
worst = {"world": 0.0, "pix": 0.0, "pa": 0.0, "off": 0.0, "sep": 0.0}
for c in cases:
    w = WCS(fits.getheader(c["file"]))
    pts = c["points"]
    x = np.array([p["x"] for p in pts]); y = np.array([p["y"] for p in pts])
    ra, dec = w.all_pix2world(x, y, 0)
    dra = np.abs(((ra - np.array([p["ra"] for p in pts])) + 180) % 360 - 180)
    ddec = np.abs(dec - np.array([p["dec"] for p in pts]))
    worst["world"] = max(worst["world"], dra.max(), ddec.max())
    px, py = w.all_world2pix(np.array([p["ra"] for p in pts]), np.array([p["dec"] for p in pts]), 0)
    worst["pix"] = max(worst["pix"], np.abs(px - x).max(), np.abs(py - y).max())
    # Tangent-plane offsets: a TAN WCS centred on the reference, 1 arcsec pixels,
    # x increasing to the west, so east = -x, north = y.
    def tangent_offsets(ref_ra, ref_dec, ra_deg, dec_deg):
        t = WCS(naxis=2)
        t.wcs.ctype = ["RA---TAN", "DEC--TAN"]
        t.wcs.crval = [ref_ra, ref_dec]
        t.wcs.crpix = [1, 1]  # FITS 1-based: the reference is 0-based pixel (0, 0)
        t.wcs.cdelt = [-1 / 3600.0, 1 / 3600.0]
        ox, oy = t.all_world2pix(ra_deg, dec_deg, 0)
        return -ox, oy

    east, north = tangent_offsets(c["ref_ra"], c["ref_dec"], np.array([p["ra"] for p in pts]),
                                  np.array([p["dec"] for p in pts]))
    worst["off"] = max(worst["off"], np.abs(east - np.array([p["east"] for p in pts])).max(),
                       np.abs(north - np.array([p["north"] for p in pts])).max())
    # The offsets a whole grid holds (TAN and SIN maps: computed as rotations
    # of unit vectors, not through wcslib per pixel), from astropy's pixel
    # positions and the TAN projection about the grid's reference.
    g = c["grid_points"]
    gra, gdec = w.all_pix2world(np.array([p["x"] for p in g], float), np.array([p["y"] for p in g], float), 0)
    east, north = tangent_offsets(c["grid_ref_ra"], c["grid_ref_dec"], gra, gdec)
    worst["grid_off"] = max(worst.get("grid_off", 0.0), np.abs(east - np.array([p["east"] for p in g])).max(),
                            np.abs(north - np.array([p["north"] for p in g])).max())
    for q in c["pas"]:
        a = SkyCoord(q["ra1"] * u.deg, q["dec1"] * u.deg)
        b = SkyCoord(q["ra2"] * u.deg, q["dec2"] * u.deg)
        pa = a.position_angle(b).deg % 360
        d = abs((pa - q["pa"] + 180) % 360 - 180)
        worst["pa"] = max(worst["pa"], d)
        worst["sep"] = max(worst["sep"], abs(a.separation(b).arcsec - q["sep"]))
print("worst differences:", worst)
ok = (worst["world"] < 1e-9 and worst["pix"] < 1e-6 and worst["pa"] < 1e-6 and worst["off"] < 1e-6 and worst["sep"] < 1e-6
      and worst["grid_off"] < 1e-6)
sys.exit(0 if ok else 1)
