#!/usr/bin/env python3
"""Check fulcrum's channel velocities against astropy.units' Doppler
equivalencies (python3-astropy): doppler_radio, v = c (1 - nu/nu0), and
doppler_optical, v = c (nu0/nu - 1).

Input: a JSON file written by tests/moments/test_spectral_axis.cpp with, per
axis, the FITS description (CTYPE, CUNIT, CRVAL, CDELT, CRPIX, rest frequency),
the convention fulcrum used and the velocities it computed through wcslib.
Tolerance: 1e-6 km/s (issue requirement).
"""
import json
import sys

import numpy as np
from astropy import units as u

TOL_KMS = 1e-6


def world(axis, pix):
    """Linear world coordinate of FITS pixel `pix`, in SI units."""
    unit = u.Unit(axis["cunit"]) if axis["cunit"] else (u.Hz if axis["ctype"] == "FREQ" else u.m / u.s)
    return ((axis["crval"] + (pix - axis["crpix"]) * axis["cdelt"]) * unit).si


def velocity(axis, pix):
    rest = axis["rest_hz"] * u.Hz
    w = world(axis, pix)
    radio = u.doppler_radio(rest)
    optical = u.doppler_optical(rest)
    want = radio if axis["convention"] == "radio" else optical
    if axis["ctype"] == "FREQ":
        return w.to(u.km / u.s, equivalencies=want).value
    own = radio if axis["ctype"] == "VRAD" else optical
    nu = w.to(u.Hz, equivalencies=own)
    return nu.to(u.km / u.s, equivalencies=want).value


data = json.load(open(sys.argv[1]))
bad = 0
for axis in data["axes"]:
    n = len(axis["velocity_kms"])
    pix = np.arange(n) + 1.0
    ref = velocity(axis, pix)
    got = np.array(axis["velocity_kms"])
    err = np.max(np.abs(got - ref))
    wref = np.abs(velocity(axis, pix + 0.5) - velocity(axis, pix - 0.5))
    werr = np.max(np.abs(np.array(axis["width_kms"]) - wref))
    print(f"{axis['name']}: {axis['convention']} max |dv| = {err:.2e} km/s, widths {werr:.2e} km/s")
    if not (err <= TOL_KMS and werr <= TOL_KMS):
        bad += 1
for d in data["direct"]:
    rest = d["rest"] * u.Hz
    nu = d["nu"] * u.Hz
    r = nu.to(u.km / u.s, equivalencies=u.doppler_radio(rest)).value
    o = nu.to(u.km / u.s, equivalencies=u.doppler_optical(rest)).value
    e = max(abs(r - d["radio"]), abs(o - d["optical"]))
    e_nu = max(abs(d["nu_from_radio"] - d["nu"]), abs(d["nu_from_optical"] - d["nu"])) / d["nu"]
    print(f"nu={d['nu']:.4e}: radio/optical max |dv| = {e:.2e} km/s, round trip {e_nu:.1e}")
    if e > TOL_KMS or e_nu > 1e-13:
        bad += 1
sys.exit(1 if bad else 0)
