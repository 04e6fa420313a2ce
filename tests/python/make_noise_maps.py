"""Writes noise maps with numpy and astropy for the noise-estimate test.

numpy (python3-numpy, Debian) draws Gaussian noise of a known sigma; the
truth is both that sigma and the realised numpy standard deviation of the
noise alone (before any source is added). Maps (120x100 pixels, 0.5 arcsec,
a TAN WCS, BMAJ = BMIN = 2 arcsec, BUNIT Jy/beam.km/s):
  white.fits       white noise, sigma 0.02, plus a bright elliptical source
  correlated.fits  noise smoothed by scipy.ndimage.gaussian_filter over the
                   beam and rescaled to sigma 0.015, plus the source
  masked.fits      the source with exact zeros outside it (a masked moment map)
truth.json: {"name": {"sigma", "numpy_std"}}.
"""
import json
import sys

import numpy as np
from astropy.io import fits
from scipy import ndimage

out = sys.argv[1]
rng = np.random.default_rng(20261202)
ny, nx = 100, 120
y, x = np.mgrid[0:ny, 0:nx]
source = 2.0 * np.exp(-0.5 * (((x - 60.3) / 12.0) ** 2 + ((y - 48.7) / 7.0) ** 2))


def write(name, data):
    h = fits.Header()
    for k, v in dict(CTYPE1="RA---TAN", CTYPE2="DEC--TAN", CRVAL1=150.0, CRVAL2=20.0, CRPIX1=60.0,
                     CRPIX2=50.0, CDELT1=-0.5 / 3600, CDELT2=0.5 / 3600, BMAJ=2.0 / 3600,
                     BMIN=2.0 / 3600, BPA=0.0, BUNIT="Jy/beam.km/s").items():
        h[k] = v
    fits.PrimaryHDU(data.astype(np.float32), h).writeto(f"{out}/{name}", overwrite=True)


truth = {}
white = rng.normal(0.0, 0.02, (ny, nx))
truth["white"] = {"sigma": 0.02, "numpy_std": float(np.std(white))}
write("white.fits", white + source)

sig_px = 2.0 / 0.5 / (2 * np.sqrt(2 * np.log(2)))
corr = ndimage.gaussian_filter(rng.normal(0.0, 1.0, (ny, nx)), sig_px, mode="wrap")
corr *= 0.015 / np.std(corr)
truth["correlated"] = {"sigma": 0.015, "numpy_std": float(np.std(corr))}
write("correlated.fits", corr + source)

write("masked.fits", np.where(source > 0.1, source, 0.0))
json.dump(truth, open(f"{out}/truth.json", "w"))
