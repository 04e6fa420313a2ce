"""Benchmark (not a test): `fulcrum scan` against what a user writes instead,
a plain NumPy loop over the grid that masks the map's pixels by their
centres, both measured as whole processes in the same run.

For each map size N (default 256 and 1024) the script writes an invented
N x N map (0.1" pixels on a rotated TAN grid, an inclined exponential disc
with a lopsided term, Gaussian noise; numpy and astropy only), then

* runs `fulcrum scan` over the full grid: 101 x 101 centre offsets
  (+-2.5", 0.05" steps) x 181 tail angles (+-90 deg, 1 deg steps), every
  finite pixel, as bench_scan.cpp does, in a child process; its CPU time
  (user + system, all threads) is that of the whole process, reading the
  map and writing the cube included;
* runs the NumPy loop in a child process too: the pixels' (east, north)
  offsets once (astropy, vectorised), then for each grid point one
  vectorised mask over all pixels, s = (p - c) . n > 0 with n the split
  normal, and A = (L - T) / (L + T) from two masked sums. It is far too
  slow for the full grid, so it runs a sub-grid (`--numpy-points` grid
  points spread over the offsets and angles) and its CPU time beyond the
  fixed part (imports, reading, offsets; measured by a run with zero grid
  points) is scaled to the full grid by throughput.

It prints both times, the NumPy time scaled to the full grid, and the ratio
(NumPy / fulcrum, whole process, CPU). Pixel-centre masking is not the
exact split fulcrum computes (fulcrum splits each pixel by area); the loop
is the simplest thing a user writes, which is the comparison asked for.

usage:
  OMP_NUM_THREADS=2 /usr/bin/python3 tools/bench_scan_numpy.py --fulcrum build/fulcrum \
      [--sizes 256,1024] [--numpy-points 200]
"""
import argparse
import math
import os
import resource
import subprocess
import sys
import tempfile

import numpy as np

GRID_HALF, GRID_STEP = 2.5, 0.05        # arcsec: 101 offsets per axis
ANGLE_HALF, ANGLE_STEP = 90.0, 1.0      # deg: 181 angles
FULL_POINTS = 101 * 101 * 181
RA0, DEC0, TAIL_PA = 150.1, 2.2, 120.0  # invented


def make_map(n, path):
    from astropy.io import fits
    from astropy.wcs import WCS
    w = WCS(naxis=2)
    w.wcs.ctype = ["RA---TAN", "DEC--TAN"]
    w.wcs.crval = [RA0, DEC0]
    w.wcs.crpix = [0.5 * (n + 1), 0.5 * (n + 1)]
    s, r = 0.1 / 3600.0, math.radians(20.0)
    w.wcs.cd = s * np.array([[-math.cos(r), math.sin(r)], [math.sin(r), math.cos(r)]])
    yy, xx = np.mgrid[0:n, 0:n].astype(float)
    dx, dy = xx - 0.5 * (n - 1), yy - 0.5 * (n - 1)
    east = 0.1 * (-math.cos(r) * dx + math.sin(r) * dy)
    north = 0.1 * (math.sin(r) * dx + math.cos(r) * dy)
    pa, inc = math.radians(40.0), math.radians(50.0)
    X = east * math.sin(pa) + north * math.cos(pa)
    Y = (east * math.cos(pa) - north * math.sin(pa)) / math.cos(inc)
    h = 0.1 * n / 8.0
    img = np.exp(-np.hypot(X, Y) / h) * (1.0 + 0.2 * np.cos(np.arctan2(east, north) - math.radians(300.0)))
    img += 0.01 * np.random.default_rng(1).standard_normal(img.shape)
    fits.PrimaryHDU(img.astype(np.float64), header=w.to_header()).writeto(path, overwrite=True)


NUMPY_CHILD = r'''
import math, sys
import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
path, npts = sys.argv[1], int(sys.argv[2])
ra0, dec0, tail, gh, gs, ah, ast = map(float, sys.argv[3:10])
h = fits.open(path)
img = h[0].data.astype(float)
w = WCS(h[0].header)
ny, nx = img.shape
yy, xx = np.mgrid[0:ny, 0:nx]
ra, dec = w.wcs_pix2world(xx.ravel(), yy.ravel(), 0)
a, d = np.radians(ra), np.radians(dec)
a0, d0 = math.radians(ra0), math.radians(dec0)
cosc = math.sin(d0) * np.sin(d) + math.cos(d0) * np.cos(d) * np.cos(a - a0)
k = 180.0 / math.pi * 3600.0
east = np.cos(d) * np.sin(a - a0) / cosc * k
north = (math.cos(d0) * np.sin(d) - math.sin(d0) * np.cos(d) * np.cos(a - a0)) / cosc * k
v = img.ravel()
ok = np.isfinite(v)
east, north, v = east[ok], north[ok], v[ok]
noff = int(round(2 * gh / gs)) + 1
nang = int(round(2 * ah / ast)) + 1
rng = np.random.default_rng(3)
out = 0.0
for _ in range(npts):
    i, j, m = rng.integers(noff), rng.integers(noff), rng.integers(nang)
    ce, cn = -gh + i * gs, -gh + j * gs
    t = math.radians(tail - ah + m * ast)
    # the tail side: s = (p - c) . (sin t, cos t) > 0
    s = (east - ce) * math.sin(t) + (north - cn) * math.cos(t)
    T = v[s > 0].sum()
    L = v[s <= 0].sum()
    out += (L - T) / (L + T)
print(out)
'''


def child_cpu(cmd):
    """CPU seconds (user + system) of one child process run to the end."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--fulcrum", required=True)
    ap.add_argument("--sizes", default="256,1024")
    ap.add_argument("--numpy-points", type=int, default=200)
    a = ap.parse_args()
    print(f"{'map':>11s} {'fulcrum CPU s':>14s} {'NumPy CPU s (points)':>22s} {'NumPy fixed s':>14s} "
          f"{'NumPy full grid s':>18s} {'NumPy / fulcrum':>16s}")
    with tempfile.TemporaryDirectory() as tmp:
        for n in (int(x) for x in a.sizes.split(",")):
            path = os.path.join(tmp, f"map{n}.fits")
            make_map(n, path)
            scan = [a.fulcrum, "--quiet", "scan", "--intensity", path, "--centre", f"{RA0},{DEC0}",
                    "--tail-pa", str(TAIL_PA), "--half-width", str(GRID_HALF), "--step", str(GRID_STEP),
                    "--angle-half-width", str(ANGLE_HALF), "--angle-step", str(ANGLE_STEP),
                    "--out", os.path.join(tmp, f"cube{n}.fits")]
            t_scan = child_cpu(scan)
            args = [str(x) for x in (RA0, DEC0, TAIL_PA, GRID_HALF, GRID_STEP, ANGLE_HALF, ANGLE_STEP)]
            py = [sys.executable, "-c", NUMPY_CHILD, path]
            t_fixed = child_cpu(py + ["0"] + args)
            t_np = child_cpu(py + [str(a.numpy_points)] + args)
            per_point = max(t_np - t_fixed, 1e-9) / a.numpy_points
            full = t_fixed + per_point * FULL_POINTS
            print(f"{n:>5d}x{n:<5d} {t_scan:14.2f} {t_np:14.2f} ({a.numpy_points:>5d}) {t_fixed:14.2f} "
                  f"{full:18.0f} {full / t_scan:16.0f}")
            os.remove(os.path.join(tmp, f"cube{n}.fits"))
    print(f"(full grid {FULL_POINTS} points: 101 x 101 offsets x 181 angles; CPU seconds, whole processes; "
          f"OMP_NUM_THREADS={os.environ.get('OMP_NUM_THREADS', 'unset')})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
