"""Reference check: fulcrum's moment-1 beam-smearing operator
(kinematics/beam_smearing.hpp) against scipy.ndimage on the same arrays.

The operator is v_s = B * (I v) / B * I (the first moment of a beam-convolved
cube over its zeroth moment), with pixels of non-finite velocity or intensity,
or intensity <= 0, carrying no emission and nothing beyond the grid.

Two cases, both written by tests/kinematics/test_beam_smearing.cpp:
  * "axes": a beam whose axes lie along the pixel axes; the reference is
    scipy.ndimage.gaussian_filter (separable Gaussian, mode='constant',
    cval=0) with the pixel sigmas.
  * "rotated": an elliptical beam (BMAJ, BMIN in arcsec, BPA north through
    east) on a rotated and flipped pixel grid given by its Jacobian
    d(east, north)/d(x, y) in arcsec per pixel (the CD matrix). This script
    builds the pixel covariance itself from the beam definition
    (FWHM = 2 sqrt(2 ln 2) sigma; major axis along (sin BPA, cos BPA) in
    (east, north)), C_pix = J^-1 C_sky J^-T, samples the Gaussian on a box of
    +-9 sigma and convolves with scipy.ndimage.convolve (mode='constant').

Both sides truncate the kernel at 8 sigma or more (fulcrum is called with
truncate_sigma = 8), where the Gaussian is below exp(-32) = 1.3e-14 of its
peak. Pixels are compared where B * I is at least 1e-3 of its largest value,
so the two truncations change the weights there by < 1e-10 relative; with
velocities spanning ~600 km/s the smeared values may differ by < 1e-7 km/s.
Tolerance 1e-6 km/s (derived above, with margin).

usage: check_moment1_smearing.py case.json
"""
import json
import sys

import numpy as np
from scipy import ndimage

TOL_KMS = 1e-6  # derived in the docstring from the truncation of both kernels
FWHM_PER_SIGMA = 2.0 * np.sqrt(2.0 * np.log(2.0))


def arr(values, ny, nx):
    return np.array([np.nan if v is None else v for v in values], dtype=float).reshape(ny, nx)


c = json.load(open(sys.argv[1]))
nx, ny = c["nx"], c["ny"]
vel = arr(c["velocity"], ny, nx)
inten = arr(c["intensity"], ny, nx)
got = arr(c["smeared"], ny, nx)

emit = np.isfinite(vel) & np.isfinite(inten) & (inten > 0)
w = np.where(emit, inten, 0.0)
wv = np.where(emit, inten * np.where(np.isfinite(vel), vel, 0.0), 0.0)

if c["case"] == "axes":
    sx, sy = c["sigma_x_pix"], c["sigma_y_pix"]
    def smooth(a):
        return ndimage.gaussian_filter(a, sigma=(sy, sx), mode="constant", cval=0.0, truncate=9.0)
else:
    J = np.array(c["jacobian"], dtype=float)  # rows (east, north), columns (x, y)
    smaj = c["bmaj_arcsec"] / FWHM_PER_SIGMA
    smin = c["bmin_arcsec"] / FWHM_PER_SIGMA
    pa = np.radians(c["bpa_deg"])
    u = np.array([np.sin(pa), np.cos(pa)])   # major axis, (east, north)
    v = np.array([np.cos(pa), -np.sin(pa)])  # minor axis
    c_sky = smaj**2 * np.outer(u, u) + smin**2 * np.outer(v, v)
    Ji = np.linalg.inv(J)
    c_pix = Ji @ c_sky @ Ji.T                # covariance in (x, y) pixels
    hx = int(np.ceil(9 * np.sqrt(c_pix[0, 0])))
    hy = int(np.ceil(9 * np.sqrt(c_pix[1, 1])))
    dy, dx = np.mgrid[-hy:hy + 1, -hx:hx + 1]
    d = np.stack([dx, dy], axis=-1).astype(float)
    q = np.einsum("...i,ij,...j->...", d, np.linalg.inv(c_pix), d)
    k = np.exp(-0.5 * q)
    k /= k.sum()
    def smooth(a):
        return ndimage.convolve(a, k, mode="constant", cval=0.0)

num, den = smooth(wv), smooth(w)
want = np.full_like(num, np.nan)
ok = den > 1e-300
want[ok] = num[ok] / den[ok]
# Compare where the beam-weighted emission is at least 1e-3 of its peak
# (farther out both sides are ratios of kernel tails).
cmp = den > 1e-3 * den.max()
both = cmp & np.isfinite(got)
missing = int(np.count_nonzero(cmp & ~np.isfinite(got)))
err = np.abs(got[both] - want[both])
print(f"case {c['case']}: {both.sum()} pixels compared, largest |fulcrum - scipy| = "
      f"{err.max():.3e} km/s (tolerance {TOL_KMS:g}); {missing} pixels missing on the fulcrum side")
if missing or not np.all(err <= TOL_KMS):
    i = np.unravel_index(np.argmax(np.where(both, np.abs(got - want), -1)), got.shape)
    print(f"worst at (y, x) = {i}: fulcrum {got[i]!r}, scipy {want[i]!r}")
    sys.exit(1)
