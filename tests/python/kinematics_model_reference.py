"""Reference check: fulcrum's tilted-ring model vs an independent numpy
evaluation of the published formula (Rogstad, Lockhart & Wright 1974;
Begeman 1989, A&A 223, 47):

    v = vsys + vrot sin(i) cos(theta) + vrad sin(i) sin(theta),

with theta the disc-plane azimuth from the receding major axis (PA north
through east) towards PA + 90 deg. This script takes the polar route: the
sky position angle phi of each point about the centre and its sky distance
r give the sky major/minor coordinates x = r cos(phi - pa), y = r sin(phi - pa),
the disc plane has (x, y / cos i). Tolerance 1e-9 km/s (from the issue).

usage: kinematics_model_reference.py points.csv
"""
import sys

import numpy as np

TOL_KMS = 1e-9  # from the issue: "to 1e-9 km/s"

d = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1)
east, north, ce, cn, pa, inc, vsys, vrot, vrad, got = d.T
dx, dy = east - ce, north - cn
r = np.hypot(dx, dy)
phi = np.arctan2(dx, dy)  # position angle of the point, north through east
pa_r, inc_r = np.radians(pa), np.radians(inc)
x = r * np.cos(phi - pa_r)
y = r * np.sin(phi - pa_r) / np.cos(inc_r)
R = np.hypot(x, y)
want = vsys + np.sin(inc_r) * (vrot * x / R + vrad * y / R)
err = np.abs(got - want)
print(f"{len(got)} points, largest |fulcrum - numpy| = {err.max():.3e} km/s (tolerance {TOL_KMS:g})")
if not np.all(err <= TOL_KMS):
    i = int(np.argmax(err))
    print(f"mismatch at row {i}: fulcrum {got[i]!r}, numpy {want[i]!r}")
    sys.exit(1)
