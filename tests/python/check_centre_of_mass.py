"""Reference check: fulcrum's photometric peak and light-weighted centroid
vs scipy.ndimage.center_of_mass (python3-scipy, Debian) on the same clipped
pixels.

Each case gives the weight image fulcrum used (the peak's cap weights
S - t, or the centroid's final aperture pixels, zero elsewhere; nx*ny, x
fastest) and the centre fulcrum reported (0-based pixels). scipy returns
(row, column) = (y, x). Tolerance: 1e-6 pixel (from the issue).
Input: JSON list of {"name", "nx", "ny", "weights", "x", "y"}.
"""
import json
import sys

import numpy as np
from scipy import ndimage

cases = json.load(open(sys.argv[1]))
worst = 0.0
for c in cases:
    w = np.array(c["weights"], dtype=float).reshape(c["ny"], c["nx"])
    cy, cx = ndimage.center_of_mass(w)
    d = max(abs(cx - c["x"]), abs(cy - c["y"]))
    worst = max(worst, d)
    print(f"{c['name']}: fulcrum ({c['x']:.9f}, {c['y']:.9f}) scipy ({cx:.9f}, {cy:.9f}) diff {d:.2e} px")
if worst > 1e-6:
    sys.exit(f"centre of mass differs from scipy by {worst:.3e} pixel (> 1e-6)")
