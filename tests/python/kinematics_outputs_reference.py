"""Reference check of `fulcrum kinematics --out` products with astropy:
the model and residual maps carry the input map's celestial WCS (astropy.wcs
pixel->world agrees to 1e-9 deg, our tolerance for identical headers), the
residual equals observed minus model (minus the beam-smeared model,
kinematics_model_smeared.fits, when the beam-smearing correction was applied
and that file was written), and the ECSV ring table reads with
astropy.table with the documented units; the CSV header names units.

usage: kinematics_outputs_reference.py VEL.fits OUTDIR
"""
import os
import sys
import warnings

import numpy as np
from astropy.io import fits
from astropy.table import Table
from astropy.wcs import WCS

warnings.simplefilter("ignore")
vel, out = sys.argv[1], sys.argv[2]
v = fits.getdata(vel).astype(float)
wv = WCS(fits.getheader(vel)).celestial
model = fits.getdata(os.path.join(out, "kinematics_model.fits")).astype(float)
resid = fits.getdata(os.path.join(out, "kinematics_residual.fits")).astype(float)
wm = WCS(fits.getheader(os.path.join(out, "kinematics_model.fits"))).celestial
ny, nx = v.shape
x = np.array([0, nx - 1, nx / 2, 3.3]); y = np.array([0, ny - 1, 7.1, ny / 2])
a = np.array(wv.all_pix2world(x, y, 0)); b = np.array(wm.all_pix2world(x, y, 0))
fail = []
if np.max(np.abs(a - b)) > 1e-9:
    fail.append(f"model WCS differs from input by {np.max(np.abs(a - b))} deg")
ok = np.isfinite(v) & np.isfinite(model)
if ok.sum() < 100:
    fail.append("model map has too few finite pixels")
seen_path = os.path.join(out, "kinematics_model_smeared.fits")
seen = fits.getdata(seen_path).astype(float) if os.path.exists(seen_path) else model
what = "beam-smeared model" if os.path.exists(seen_path) else "model"
d = np.abs(resid[ok] - (v[ok] - seen[ok]))
if d.max() > 1e-9:
    fail.append(f"residual != observed - {what} by {d.max()}")
t = Table.read(os.path.join(out, "kinematics_rings.ecsv"), format="ascii.ecsv")
for col, unit in [("radius", "arcsec"), ("vrot", "km / s"), ("ring_pa", "deg"), ("c2", "km / s")]:
    if str(t[col].unit) != unit:
        fail.append(f"ECSV column {col} has unit {t[col].unit}, expected {unit}")
header = open(os.path.join(out, "kinematics_rings.csv")).readline()
if "radius [arcsec]" not in header or "vrot [km/s]" not in header:
    fail.append("CSV header lacks units: " + header[:80])
print(f"{len(t)} rings; model finite pixels {int(ok.sum())}; max |resid - (v - {what})| {d.max():.2e}")
if fail:
    print("\n".join(fail))
    sys.exit(1)
