"""Reference check: the files `fulcrum synth --as-delivered` writes have the
properties docs/synth.md promises, read back with astropy.io.fits
(python3-astropy, Debian) and counted with numpy (python3-numpy).

Checked in DIR: vel.fits, vel_err.fits, mom0.fits, mom0_err.fits are
BITPIX = -32 with BLANK = -999 (a card astropy reads as given, though the
FITS standard defines BLANK for integer data only); the count of pixels
equal to -999, of +inf and of values >= 1e37 in each file equals the count
fulcrum wrote into truth.json ("delivered"); vel_err.fits holds both +inf
and ~1e38; at least 100 HISTORY cards; scattered velocity pixels: the given
number of finite velocities with no finite velocity among their 8
neighbours (up to 10% + 5 more: the clean mask's own lonely edge pixels);
vel_model.fits is clean float64 without BLANK; CTYPE1 ends in SIN when asked (argv[2]).
"""
import json
import sys
import warnings

import numpy as np
from astropy.io import fits

d = sys.argv[1]
proj = sys.argv[2] if len(sys.argv) > 2 else None
truth = json.load(open(f"{d}/truth.json"))["delivered"]
bad = []
for name in ("vel.fits", "vel_err.fits", "mom0.fits", "mom0_err.fits"):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        h = fits.open(f"{d}/{name}")[0]
        a = h.data.astype(np.float64)
    hdr = h.header
    n_blank = int(np.sum(a == -999.0))
    n_inf = int(np.sum(np.isposinf(a)))
    n_huge = int(np.sum(np.isfinite(a) & (a >= 1e37)))
    want = truth[name]
    print(f"{name}: BITPIX {hdr['BITPIX']} BLANK {hdr.get('BLANK')} blank {n_blank} (want {want['blank']}) "
          f"+inf {n_inf} (want {want['plus_inf']}) 1e38 {n_huge} (want {want['value_1e38']}) "
          f"HISTORY {len(hdr.get('HISTORY', []))} CTYPE1 {hdr['CTYPE1']}")
    if hdr["BITPIX"] != -32 or hdr.get("BLANK") != -999:
        bad.append(f"{name}: BITPIX/BLANK")
    if (n_blank, n_inf, n_huge) != (want["blank"], want["plus_inf"], want["value_1e38"]) or n_blank == 0:
        bad.append(f"{name}: counts")
    if len(hdr.get("HISTORY", [])) < 100:
        bad.append(f"{name}: HISTORY")
    if proj and not hdr["CTYPE1"].endswith(proj):
        bad.append(f"{name}: projection")

err = fits.getdata(f"{d}/vel_err.fits").astype(np.float64)
if not (np.isposinf(err).any() and (np.isfinite(err) & (err >= 1e37)).any()):
    bad.append("vel_err.fits lacks +inf or 1e38")
v = fits.getdata(f"{d}/vel.fits").astype(np.float64)
ok = np.isfinite(v) & (v != -999.0)
p = np.pad(ok, 1)
neigh = sum(np.roll(np.roll(p, dy, 0), dx, 1) for dy in (-1, 0, 1) for dx in (-1, 0, 1) if (dx, dy) != (0, 0))[1:-1, 1:-1]
lonely = ok & (neigh == 0)
model = fits.open(f"{d}/vel_model.fits")[0]
print(f"lonely velocity pixels: {int(lonely.sum())} (want {truth['scattered_pixels']}); vel_model BITPIX "
      f"{model.header['BITPIX']} BLANK {model.header.get('BLANK')}")
# The clean mask may have a few lonely pixels of its own at its edge.
if not (truth["scattered_pixels"] <= int(lonely.sum()) <= 1.1 * truth["scattered_pixels"] + 5) or truth["scattered_pixels"] == 0:
    bad.append("scattered pixels")
if "BLANK" in model.header:
    bad.append("vel_model.fits has BLANK")
if bad:
    sys.exit("delivered mock differs from docs/synth.md: " + "; ".join(bad))
