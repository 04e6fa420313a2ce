"""Reference check: fulcrum's point-source fit (circular sky Gaussian plus a
constant, photometry/point_source_fit.hpp) vs scipy.optimize.curve_fit
(python3-scipy, Debian) on the same pixels.

Each case gives the pixels fulcrum fitted (0-based x, y and value), the
Jacobian J = d(east, north)/d(x, y) in arcsec/pixel, the start values and
fulcrum's result (centre in pixels, FWHM in arcsec, amplitude, background).
The model is B + A exp(-|J (x - x0, y - y0)|^2 / (2 s^2)), FWHM = 2 sqrt(2 ln 2) s.
Tolerances: 1e-4 pixel on the centre, 1e-4 relative on FWHM and amplitude
(two least-squares solvers on the same problem meet at the same minimum;
the tolerance covers their stopping rules).
Input: JSON list of {"name", "x", "y", "v", "jac", "start", "fit"}.
"""
import json
import sys

import numpy as np
from scipy.optimize import curve_fit

K = 2.0 * np.sqrt(2.0 * np.log(2.0))
cases = json.load(open(sys.argv[1]))
bad = []
for c in cases:
    x = np.array(c["x"], float)
    y = np.array(c["y"], float)
    v = np.array(c["v"], float)
    J = np.array(c["jac"], float)

    def model(xy, x0, y0, a, s, b):
        dx, dy = xy[0] - x0, xy[1] - y0
        de = J[0, 0] * dx + J[0, 1] * dy
        dn = J[1, 0] * dx + J[1, 1] * dy
        return b + a * np.exp(-(de * de + dn * dn) / (2.0 * s * s))

    st = c["start"]
    p0 = [st["x"], st["y"], v.max() - v.min(), st["fwhm_arcsec"] / K, v.min()]
    p, _ = curve_fit(model, (x, y), v, p0=p0, xtol=1e-12, ftol=1e-12, maxfev=20000)
    f = c["fit"]
    dc = max(abs(p[0] - f["x"]), abs(p[1] - f["y"]))
    dw = abs(K * abs(p[3]) / f["fwhm_arcsec"] - 1.0)
    da = abs(p[2] / f["amplitude"] - 1.0)
    print(f"{c['name']}: centre diff {dc:.2e} px, FWHM scipy {K * abs(p[3]):.6f} fulcrum "
          f"{f['fwhm_arcsec']:.6f} (rel {dw:.1e}), amplitude rel {da:.1e}")
    if dc > 1e-4 or dw > 1e-4 or da > 1e-4:
        bad.append(c["name"])
if bad:
    sys.exit("point-source fit differs from scipy.optimize.curve_fit for: " + ", ".join(bad))
