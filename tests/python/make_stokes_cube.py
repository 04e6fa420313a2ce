#!/usr/bin/env python3
"""Rewrite a 3-D cube (x, y, spectral) as a 4-D cube (x, y, STOKES, spectral)
with a degenerate Stokes axis, the layout many interferometer pipelines write.
Uses astropy.io.fits (python3-astropy). Arguments: IN.fits OUT.fits
"""
import sys

from astropy.io import fits

src, dst = sys.argv[1], sys.argv[2]
with fits.open(src) as hl:
    data = hl[0].data  # (nz, ny, nx)
    h = hl[0].header.copy()
nz = data.shape[0]
out = data.reshape(nz, 1, data.shape[1], data.shape[2])
for key in ("CTYPE", "CRVAL", "CDELT", "CRPIX", "CUNIT"):
    if key + "3" in h:
        h[key + "4"] = h[key + "3"]
        del h[key + "3"]
h["CTYPE3"] = "STOKES"
h["CRVAL3"] = 1.0
h["CDELT3"] = 1.0
h["CRPIX3"] = 1.0
hdu = fits.PrimaryHDU(out, header=h)
hdu.header["NAXIS"] = 4
hdu.writeto(dst, overwrite=True)
print("wrote", dst, out.shape)
