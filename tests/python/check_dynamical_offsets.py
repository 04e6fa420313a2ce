"""Reference check: offsets of photometric centres from a dynamical centre
vs astropy.coordinates (separation, position_angle) and scipy.stats.chi2
(the matching probability is the chi-square survival function with 2 dof
of the squared Mahalanobis distance, computed here with numpy.linalg).
Tolerances: 1e-6 arcsec for separations, 1e-6 deg for PAs, 1e-9 relative
for Mahalanobis distances and probabilities.
Input: JSON list of {"dyn": [ra, dec], "cdyn": [[..],[..]], "pos": [ra, dec],
"cpos": [[..],[..]], "east", "north", "offset_arcsec", "pa_deg",
"mahalanobis", "probability"}.
"""
import json
import sys
import warnings

import numpy as np
import astropy.units as u
from astropy.coordinates import SkyCoord
from scipy.stats import chi2

warnings.simplefilter("ignore")
bad = []
for c in json.load(open(sys.argv[1])):
    k = SkyCoord(c["dyn"][0] * u.deg, c["dyn"][1] * u.deg, frame="icrs")
    p = SkyCoord(c["pos"][0] * u.deg, c["pos"][1] * u.deg, frame="icrs")
    sep = k.separation(p).arcsec
    pa = k.position_angle(p).deg % 360.0
    # Tangent-plane (gnomonic) offsets about the dynamical centre.
    ra0, dec0 = np.radians(c["dyn"]); ra, dec = np.radians(c["pos"])
    D = np.sin(dec0) * np.sin(dec) + np.cos(dec0) * np.cos(dec) * np.cos(ra - ra0)
    xi = np.cos(dec) * np.sin(ra - ra0) / D * 206264.80624709636
    eta = (np.cos(dec0) * np.sin(dec) - np.sin(dec0) * np.cos(dec) * np.cos(ra - ra0)) / D * 206264.80624709636
    v = np.array([xi, eta])
    C = np.array(c["cdyn"]) + np.array(c["cpos"])
    m2 = float(v @ np.linalg.solve(C, v))
    prob = chi2.sf(m2, 2)
    checks = [("sep", abs(sep - c["offset_arcsec"]), 1e-6),
              ("pa", abs((pa - c["pa_deg"] + 180) % 360 - 180), 1e-6),
              ("east", abs(xi - c["east"]), 1e-6), ("north", abs(eta - c["north"]), 1e-6),
              ("mahalanobis", abs(np.sqrt(m2) - c["mahalanobis"]) / max(np.sqrt(m2), 1e-300), 1e-9),
              ("probability", abs(prob - c["probability"]) / max(prob, 1e-300), 1e-9)]
    for name, diff, tol in checks:
        if diff > tol:
            bad.append(f"{name}: diff {diff:.3e} > {tol}")
    print(f"sep {sep:.6f}\" pa {pa:.6f} m {np.sqrt(m2):.6f} p {prob:.6e}")
if bad:
    sys.exit("; ".join(bad))
