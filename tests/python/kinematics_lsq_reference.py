"""Reference check: the Ceres solution of the global tilted-ring problem vs
scipy.optimize.least_squares on the same residuals.

The C++ side exports the last fitting pass as a fixed least-squares problem
(pixels, residual factors, ring brackets, node radii, start and solution).
This script re-implements the residual independently from the published
model (Begeman 1989; polar route as in kinematics_model_reference.py):

    r_i = scale_i * (v_i - [vsys + sin i (vrot(R_i) cos theta_i)]),
    vrot(R) linear between the bracketing nodes (node 0: R = 0, vrot = 0),

solves it from the same start with scipy's trust-region least squares
and compares every parameter. Tolerance 1e-6 in every parameter (from the
issue; arcsec for the centre, radians for the angles, km/s for speeds).

usage: kinematics_lsq_reference.py problem.json
"""
import json
import sys

import numpy as np
from scipy.optimize import least_squares

TOL = 1e-6  # from the issue

p = json.load(open(sys.argv[1]))
east = np.array(p["east"]); north = np.array(p["north"])
vel = np.array(p["velocity"]); scale = np.array(p["scale"])
br = np.array(p["bracket"], dtype=int); nodes = np.array(p["node_radius"])
start = np.array(p["start"]); ceres = np.array(p["solution"])
N = len(nodes) - 1
assert not p["radial"], "radial problems are not exported by the test"
used_nodes = sorted((set(br.tolist()) | set((br + 1).tolist())) - {0})
free = [0, 1, 2, 3, 4] + [4 + k for k in used_nodes]  # parameter indices that the data touch


def model(x):
    # Written with complex-safe operations only (no arctan2/hypot), so that
    # the Jacobian can be taken by complex-step differentiation, exact to
    # rounding (Squire & Trapp 1998, SIAM Review 40, 110).
    ce, cn, pa, inc, vsys = x[:5]
    vrot = np.concatenate([[0.0], x[5:5 + N]])
    dx, dy = east - ce, north - cn
    r = np.sqrt(dx * dx + dy * dy)
    cos_phi, sin_phi = dy / r, dx / r          # phi: PA of the point, north through east
    X = r * (cos_phi * np.cos(pa) + sin_phi * np.sin(pa))      # r cos(phi - pa)
    Y = r * (sin_phi * np.cos(pa) - cos_phi * np.sin(pa)) / np.cos(inc)  # r sin(phi - pa) / cos i
    R = np.sqrt(X * X + Y * Y)
    f = (R - nodes[br]) / (nodes[br + 1] - nodes[br])
    v = vrot[br] + (vrot[br + 1] - vrot[br]) * f
    return vsys + np.sin(inc) * v * X / R


def full(sub):
    x = start.astype(complex if np.iscomplexobj(sub) else float).copy()
    x[free] = sub
    return x


def resid(sub):
    return scale * (vel - model(full(sub)))


def jac(sub):
    h = 1e-30
    J = np.empty((len(vel), len(sub)))
    for j in range(len(sub)):
        z = sub.astype(complex)
        z[j] += 1j * h
        J[:, j] = np.imag(resid(z)) / h
    return J


# Levenberg-Marquardt (MINPACK) with the exact Jacobian. Pixels close to
# the centre make the problem strongly non-linear, so Gauss-Newton-type
# steps converge only linearly at the end and MINPACK's relative-reduction
# test stops early; restarting from its own answer resets the damping and
# finishes the job (still scipy throughout).
sol = least_squares(resid, start[free], method="lm", jac=jac, xtol=1e-15, ftol=1e-15,
                    gtol=1e-15, max_nfev=20000)
for _ in range(3):
    sol = least_squares(resid, sol.x, method="lm", jac=jac, xtol=1e-15, ftol=1e-15, gtol=1e-15,
                        max_nfev=20000)
x = start.copy(); x[free] = sol.x
d = x - ceres
d[2] = (d[2] + np.pi) % (2 * np.pi) - np.pi  # PA modulo a turn
worst = np.max(np.abs(d[free]))
names = ["centre_east", "centre_north", "pa", "inc", "vsys"] + [f"vrot_{k}" for k in range(1, N + 1)]
print(f"{len(vel)} residuals, {len(free)} parameters; scipy status {sol.status} ({sol.message}); "
      f"cost scipy {0.5 * np.sum(resid(sol.x) ** 2):.12g} ceres {0.5 * np.sum(resid(ceres[free]) ** 2):.12g}; "
      f"largest |scipy - ceres| = {worst:.3e} (tolerance {TOL:g})")
if not worst <= TOL:
    for i in free:
        if abs(d[i]) > TOL:
            print(f"  {names[i]}: scipy {x[i]!r} ceres {ceres[i]!r}")
    sys.exit(1)
