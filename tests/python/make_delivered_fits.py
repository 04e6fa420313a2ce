"""Writes a small float32 map the way delivered data products often are, with
astropy (an outside writer), for the reader tests of fulcrum.

    make_delivered_fits.py OUT_STEM

writes OUT_STEM.fits (plain), OUT_STEM.fits.gz (the same file gzip-compressed
by Python's gzip module) and OUT_STEM.fz (a tile-compressed image HDU,
lossless GZIP_1 with no quantisation, astropy CompImageHDU), and prints the
expected counts: "blank B inf I absurd A nan N".

The map: 20 x 16 float32, value(x, y) = 1000 + 3 x - 2 y (km/s), SIN
projection with a beam; BLANK = -999 on the float data (a common-practice
card the FITS standard defines for integer data only) at 40 pixels, +inf at
3, -inf at 1, 1e38 at 2 and -3e30 at 1 (absurd values), NaN at 1.
"""
import gzip
import shutil
import sys
import warnings

import numpy as np
from astropy.io import fits

warnings.simplefilter("ignore")
stem = sys.argv[1]
ny, nx = 16, 20
y, x = np.mgrid[0:ny, 0:nx]
data = (1000.0 + 3.0 * x - 2.0 * y).astype(np.float32)
flat = data.reshape(-1)
flat[0:40] = -999.0
flat[100:103] = np.inf
flat[103] = -np.inf
flat[110:112] = 1e38
flat[120] = -3e30
flat[130] = np.nan
hdr = fits.Header()
for k, v in dict(CTYPE1="RA---SIN", CTYPE2="DEC--SIN", CRVAL1=150.0, CRVAL2=12.0, CRPIX1=10.0,
                 CRPIX2=8.0, CDELT1=-7e-5, CDELT2=7e-5, BUNIT="km/s", BMAJ=6e-4, BMIN=4.5e-4,
                 BPA=10.0).items():
    hdr[k] = v
plain = fits.PrimaryHDU(data, header=hdr)
plain.header["BLANK"] = -999
plain.writeto(stem + ".fits", overwrite=True, output_verify="silentfix")
with open(stem + ".fits", "rb") as src, gzip.open(stem + ".fits.gz", "wb") as dst:
    shutil.copyfileobj(src, dst)
comp = fits.CompImageHDU(data, header=hdr, compression_type="GZIP_1", quantize_level=0.0)
comp.header["BLANK"] = -999
fits.HDUList([fits.PrimaryHDU(), comp]).writeto(stem + ".fz", overwrite=True,
                                                output_verify="silentfix")
# The compressed file must hold the same values (lossless), checked here
# with astropy's own reader.
back = fits.getdata(stem + ".fz", ext=1)
same = (back == data) | (np.isnan(back) & np.isnan(data))
if not same.all():
    sys.exit("astropy: the tile-compressed copy is not lossless")
print("blank 40 inf 4 absurd 3 nan 1")
