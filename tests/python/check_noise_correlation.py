"""Reference check of fulcrum's noise model (imaging/noise_correlation.hpp)
by simulation with numpy: is the pixel-noise correlation of a beam-smoothed
map the beam's autocorrelation, and is the variance of a sum over a region
much larger than the beam eta = 2 x pixels-per-beam times the white value?

For each case (written by tests/imaging/test_noise_correlation.cpp) the
script draws noise fields on a 256 x 256 periodic grid of the case's pixel
size, rotation and flip (the (east, north) Jacobian built here from the
rotation), in one of two ways:
  smoothed:        white deviates convolved with the beam in Fourier space
                   (the kernel sampled on the grid from BMAJ, BMIN, BPA);
  interferometric: white deviates filtered by sqrt(FT(beam)), so that the
                   noise power follows the beam's transform (the uv weights)
                   and the correlation is the beam itself;
then normalises each field to unit pixel variance and measures
  (1) the correlation at the nearest grid lag to each of the case's sky
      lags, against the analytic correlation (sigma_corr = sqrt2 sigma_beam
      for the smoothed model, sigma_beam for the interferometric one) at
      that lag; fulcrum's rho at the requested lag must equal the analytic
      value to 1e-9 (exact formula);
  (2) the variance of sums over 64 x 64 boxes, divided by the number of
      pixels, against eta_box = sum_ij rho_ij / N over the box computed from
      the measured correlation function of the simulated fields (FFT), and
      its large-box limit, the measured correlation summed over lags
      within 6 model sigma, against fulcrum's eta.
Tolerances: (1) 0.03 absolute (sampling error of a correlation from 40
fields of 65536 correlated pixels is < 0.01); (2) 12% relative (the variance
of 640 box sums has a relative error sqrt(2/640) = 5.6%; 2 sigma plus the
edge of the box); the limit sum of rho matches eta within 3% (the sampled
kernel vs the continuous Gaussian on pixels of 1/3 of a beam sigma).

usage: check_noise_correlation.py cases.json
"""
import json
import math
import sys

import numpy as np

FWHM_PER_SIGMA = 2.0 * math.sqrt(2.0 * math.log(2.0))
N = 256
BOX = 64
FIELDS = 40
TOL_RHO = 0.03
TOL_BOX = 0.12
TOL_ETA = 0.03


def jacobian(pixel, rot_deg, flip):
    r = math.radians(rot_deg)
    ex = np.array([math.cos(r), -math.sin(r)]) if flip else np.array([-math.cos(r), math.sin(r)])
    ey = np.array([math.sin(r), math.cos(r)])
    return pixel * np.column_stack([ex, ey])  # columns: (east, north) per x step, per y step


def beam_on_grid(c, jac):
    """The beam (peak 1) at every periodic lag of the grid, index 0 = zero lag."""
    k = np.fft.fftfreq(N) * N
    dx, dy = np.meshgrid(k, k)
    e = jac[0, 0] * dx + jac[0, 1] * dy
    n = jac[1, 0] * dx + jac[1, 1] * dy
    b = math.radians(c["bpa_deg"])
    a = e * math.sin(b) + n * math.cos(b)
    m = e * math.cos(b) - n * math.sin(b)
    sa, sm = c["bmaj_arcsec"] / FWHM_PER_SIGMA, c["bmin_arcsec"] / FWHM_PER_SIGMA
    return np.exp(-0.5 * ((a / sa) ** 2 + (m / sm) ** 2)), e, n


def simulate(c, jac, rng):
    beam, e, n = beam_on_grid(c, jac)
    fb = np.fft.fft2(beam)
    if c["model"] == "smoothed":
        filt = fb
    else:
        filt = np.sqrt(np.maximum(fb.real, 0.0))
    fields = []
    for _ in range(FIELDS):
        f = np.real(np.fft.ifft2(np.fft.fft2(rng.standard_normal((N, N))) * filt))
        fields.append(f / f.std())
    return np.array(fields), e, n


def measured_correlation(fields):
    """Mean periodic autocorrelation (index 0 = zero lag), normalised to 1."""
    p = np.mean([np.abs(np.fft.fft2(f)) ** 2 for f in fields], axis=0)
    acf = np.real(np.fft.ifft2(p))
    return acf / acf[0, 0]


def box_factor(acf):
    """sum_ij rho_ij / N over a BOX x BOX box: sum over lags of rho times the overlap."""
    k = np.fft.fftfreq(N) * N
    dx, dy = np.meshgrid(k, k)
    overlap = np.clip(BOX - np.abs(dx), 0, None) * np.clip(BOX - np.abs(dy), 0, None)
    return float(np.sum(acf * overlap) / (BOX * BOX))


def check_case(i, c, rng):
    jac = jacobian(c["pixel_arcsec"], c["grid_rotation_deg"], c["flip"])
    fields, e, n = simulate(c, jac, rng)
    acf = measured_correlation(fields)
    ok = True
    inv = np.linalg.inv(jac)
    s_model = math.sqrt(2.0) if c["model"] == "smoothed" else 1.0
    sa = s_model * c["bmaj_arcsec"] / FWHM_PER_SIGMA
    sm = s_model * c["bmin_arcsec"] / FWHM_PER_SIGMA
    bpa = math.radians(c["bpa_deg"])

    def analytic(le, ln):  # this script's derivation: sigma_corr = s_model * sigma_beam
        a = le * math.sin(bpa) + ln * math.cos(bpa)
        m = le * math.cos(bpa) - ln * math.sin(bpa)
        return math.exp(-0.5 * ((a / sa) ** 2 + (m / sm) ** 2))

    for lag in c["lags"]:
        px = inv @ np.array([lag["east"], lag["north"]])
        ix, iy = int(round(px[0])), int(round(px[1]))
        le, ln = e[iy % N, ix % N], n[iy % N, ix % N]
        measured = acf[iy % N, ix % N]
        good_sim = abs(measured - analytic(le, ln)) < TOL_RHO
        good_fulcrum = abs(lag["rho"] - analytic(lag["east"], lag["north"])) < 1e-9
        ok &= good_sim and good_fulcrum
        print(f"case {i} ({c['model']}): rho at ({lag['east']:+.2f}, {lag['north']:+.2f})\" fulcrum "
              f"{lag['rho']:.4f} analytic {analytic(lag['east'], lag['north']):.4f} "
              f"{'ok' if good_fulcrum else 'FAIL'}; simulated at the grid lag ({le:+.2f}, {ln:+.2f})\" "
              f"{measured:.4f} analytic {analytic(le, ln):.4f} {'ok' if good_sim else 'FAIL'}")
    # variance of box sums
    sums = []
    for f in fields:
        for by in range(0, N, BOX):
            for bx in range(0, N, BOX):
                sums.append(f[by:by + BOX, bx:bx + BOX].sum())
    var_per_pixel = float(np.var(sums) / (BOX * BOX))
    expect_box = box_factor(acf)
    # Large-box limit: the measured correlation summed over lags within 6
    # sigma of the model's correlation (beyond, rho < 1.5e-8 but the
    # measured function is sampling noise, whose sum does not vanish).
    smod = math.sqrt(2.0) if c["model"] == "smoothed" else 1.0
    reach = 6.0 * smod * c["bmaj_arcsec"] / FWHM_PER_SIGMA
    limit = float(np.sum(acf[np.hypot(e, n) <= reach]))
    good_box = abs(var_per_pixel / expect_box - 1.0) < TOL_BOX
    good_eta = abs(limit / c["eta"] - 1.0) < TOL_ETA
    ok &= good_box and good_eta
    print(f"case {i} ({c['model']}): var(box sum)/N = {var_per_pixel:.2f}, expected {expect_box:.2f} "
          f"{'ok' if good_box else 'FAIL'}; sum of rho = {limit:.2f}, fulcrum eta = {c['eta']:.2f} "
          f"{'ok' if good_eta else 'FAIL'}")
    return ok


def main():
    cases = json.load(open(sys.argv[1]))
    rng = np.random.default_rng(20240)
    ok = all([check_case(i, c, rng) for i, c in enumerate(cases)])
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
