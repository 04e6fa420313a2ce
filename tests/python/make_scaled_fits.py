"""Writes small FITS files with astropy for the reader tests.

Default: a 4x3 int16 image, raw values 0..11, BSCALE=0.5, BZERO=10, BLANK=7,
with a TAN WCS. --no-wcs: a 2-D float image without any WCS keywords.
"""
import sys
import numpy as np
from astropy.io import fits

path = sys.argv[1]
if "--no-wcs" in sys.argv:
    fits.PrimaryHDU(np.ones((5, 5))).writeto(path, overwrite=True)
    sys.exit(0)
raw = np.arange(12, dtype=np.int16).reshape(3, 4)
hdu = fits.PrimaryHDU(raw)
h = hdu.header
h["BSCALE"] = 0.5
h["BZERO"] = 10.0
h["BLANK"] = 7
for k, v in dict(CTYPE1="RA---TAN", CTYPE2="DEC--TAN", CRVAL1=30.0, CRVAL2=-10.0, CRPIX1=2.0,
                 CRPIX2=2.0, CDELT1=-1e-4, CDELT2=1e-4).items():
    h[k] = v
# Write the raw integers without astropy rescaling them.
hdu.writeto(path, overwrite=True, output_verify="silentfix")
with fits.open(path, mode="update", do_not_scale_image_data=True) as f:
    assert f[0].data.dtype.kind == "i"
