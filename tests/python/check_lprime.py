"""Reference check: fulcrum's L'_CO (Solomon & Vanden Bout 2005, eq. 3, with
the rounded coefficient 3.25e7) against the definition of the line
luminosity in brightness-temperature units,
    L' = c^2 / (2 k_B) * S dV * nu_obs^-2 * D_L^2 * (1 + z)^-3,
evaluated with astropy.constants and astropy.units (python3-astropy).
Tolerance: 2e-3 relative (the published coefficient is given to 3 digits).
Usage: check_lprime.py LINE Z LPRIME   (flux 2.5 Jy km/s, D_L = 95 Mpc)."""
import sys

import astropy.constants as c
import astropy.units as u

line, z, got = sys.argv[1], float(sys.argv[2]), float(sys.argv[3])
nu_rest = {"1-0": 115.2712018, "2-1": 230.538}[line] * u.GHz
nu_obs = nu_rest / (1 + z)
flux = 2.5 * u.Jy * u.km / u.s
d = 95 * u.Mpc
lp = (c.c ** 2 / (2 * c.k_B) * flux * nu_obs ** -2 * d ** 2 * (1 + z) ** -3).to(u.K * u.km / u.s * u.pc ** 2)
rel = abs(got - lp.value) / lp.value
print(f"L' fulcrum {got:.6e}, definition {lp.value:.6e}, relative difference {rel:.2e}")
sys.exit(0 if rel < 2e-3 else 1)
