"""An independent generator of mock disc galaxies observed with a beam, for
checking fulcrum's error bars (docs/uncertainties.md). It uses numpy, scipy
and astropy only and shares no code or assumption with fulcrum's own mock
maker (src/synth/): the noise is drawn by FFT, the velocity map is what a
moment-1 map of a beam-convolved cube shows, and the maps are clipped at
3 sigma of the line, as real data products are.

usage:
    python3 tests/python/mockgen.py --preset bright --seed 7 --out DIR
    python3 tests/python/mockgen.py --list

writes DIR/velocity.fits, velocity_error.fits (km/s), intensity.fits,
intensity_error.fits (Jy/beam km/s), optical.fits (a stellar disc about the
optical centre, PSF in BMAJ/BMIN) and truth.json. From Python:

    import mockgen
    truth = mockgen.generate("bright", seed=7, out_dir="DIR")   # same files
    maps = mockgen.make_maps(mockgen.preset("faint"), seed=3)   # arrays only

The galaxy (units: arcsec, degrees, km/s; PA north through east; the
kinematic PA is that of the receding half of the major axis):

* disc-plane coordinates of a sky offset d = p - c from the centre c:
  X = d . (sin PA, cos PA),  Y = d . (cos PA, -sin PA) / cos i,  R = hypot(X, Y);
* gas surface brightness: exponential, exp(-R / h), with a smooth outer edge
  at R_edge (a half-Gaussian taper of width `edge_width`), times a sky-plane
  lopsidedness (1 + e cos(psi - lead_pa)) with psi the position angle of the
  offset d (north through east) and lead_pa the leading direction;
* rotation: v_rot(R) = v_flat (2 / pi) arctan(R / r_t), rising then flat
  (the arctan form of Courteau 1997, AJ 114, 2402), and
  v = v_sys + v_rot(R) sin i X / R;
* beam: an elliptical Gaussian with FWHM BMAJ x BMIN, major axis at BPA
  (north through east), built on the sky and sampled through the CD matrix,
  so rotated and flipped grids need no special case;
* line map: the surface brightness convolved with the beam (on a grid
  oversampled `oversample` times per axis, then averaged over each pixel),
  scaled to the preset's peak, plus beam-correlated noise;
* velocity map: conv(I v) / conv(I), the intensity-weighted beam average of
  the disc velocity (what the first moment of a beam-convolved cube is), plus
  velocity noise sigma_v = k_v rms / max(I_conv, 2 rms) times an independent
  beam-correlated unit-variance field (the moment-1 error of a line scales as
  1/SNR; its noise comes from the same beam-correlated cube noise);
* noise: white Gaussian deviates on the pixel grid convolved with the beam
  in Fourier space (periodic, so the field is stationary), divided by
  sqrt(sum kernel^2) so that the pixel rms is exactly the stated rms (the
  pixel correlation is then the beam's autocorrelation);
* clipping: both maps are blanked (NaN) where the noisy line map is below
  3 rms. Error maps: rms everywhere for the line map, sigma_v where the
  velocity is finite.

The truth (truth.json) gives the centre, PA, inclination, v_sys, the beam
and, for the asymmetry A = (L - T) / (L + T) about a split line through the
true centre perpendicular to the leading direction (L the half towards
lead_pa):
  A_expected      the noise-free, beam-convolved line map over its expected
                  footprint (pixels whose noise-free value is >= 3 rms), each
                  pixel split exactly by its area on either side (sub-pixel
                  sampling 8 x 8); this is what an analysis of the clipped
                  map should recover on average, up to the clipping bias;
  A_all_pixels    the same over every pixel of the noise-free map;
  A_optical_centre the expected-footprint A split at the optical centre.
All of them are computed here, from the noise-free maps, not by fulcrum.

Presets are fixed galaxies (invented names and positions); the seed changes
only the noise. See PRESETS below.
"""
import argparse
import json
import math
import os
import sys

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS

FWHM_PER_SIGMA = 2.0 * math.sqrt(2.0 * math.log(2.0))
CLIP_SIGMA = 3.0

# Every preset: the same invented galaxy geometry on a rotated TAN grid; they
# differ in brightness, lopsidedness and where the optical centre sits.
BASE = {
    "name": "mock disc",
    "nx": 96, "ny": 96, "pixel_arcsec": 0.5,
    "projection": "TAN",            # TAN or SIN
    "grid_rotation_deg": 25.0,      # rotation of the pixel axes against north
    "flip": False,                  # east to the right (a flipped grid)
    "ref_ra_deg": 151.2375, "ref_dec_deg": 21.4719,   # invented
    "centre_pixel_offset": [2.3, -1.6],   # true centre - grid centre, pixels
    "bmaj_arcsec": 2.0, "bmin_arcsec": 1.6, "bpa_deg": 30.0,
    "pa_deg": 62.0, "inc_deg": 55.0, "vsys_kms": 1510.0,
    "vflat_kms": 180.0, "rt_arcsec": 3.0,
    "h_arcsec": 6.0, "r_edge_arcsec": 17.0, "edge_width_arcsec": 1.5,
    "lead_pa_deg": 140.0,           # leading direction; the tail is at +180
    "lopsidedness": 0.15,           # e
    "peak": 1.0,                    # Jy/beam km/s, the noise-free peak
    "rms": 1.0 / 60.0,              # Jy/beam km/s per pixel
    "kv_kms": 30.0,                 # sigma_v = kv * rms / I  (10 km/s at 3 sigma)
    "oversample": 3,
    "optical_offset_beams": 0.0,    # optical centre, beam FWHM towards lead_pa
    "psf_fwhm_arcsec": 1.0,
    "optical_scale_arcsec": 4.0,
    # Non-circular motions the velocity error map does not describe (real
    # discs: streaming, turbulence): a Gaussian random field of this rms
    # (km/s), correlated like the beam scaled by scatter_scale_beams, added
    # to the velocities only. 0: off (the presets).
    "scatter_kms": 0.0,
    "scatter_scale_beams": 1.0,
}

PRESETS = {
    "bright": dict(name="mock bright disc", rms=1.0 / 60.0, lopsidedness=0.15),
    "faint": dict(name="mock faint disc", rms=1.0 / 12.0, lopsidedness=0.15),
    "null": dict(name="mock symmetric faint disc", rms=1.0 / 12.0, lopsidedness=0.0),
    # e is set so that the split about the optical centre (one beam towards
    # the leading side) gives -A of the split about the true centre.
    "centre-trap": dict(name="mock disc with an offset optical centre", rms=1.0 / 30.0,
                        lopsidedness="trap", optical_offset_beams=1.0),
}


def preset(name, **overrides):
    """The full parameter dictionary of a preset, with overrides."""
    if name not in PRESETS:
        raise KeyError(f"unknown preset '{name}' (one of {', '.join(PRESETS)})")
    p = dict(BASE)
    p.update(PRESETS[name])
    p.update(overrides)
    p["preset"] = name
    return p


# ---------------------------------------------------------------- geometry

def make_wcs(p):
    """Celestial WCS with a rotated (optionally flipped) CD matrix; the true
    centre sits centre_pixel_offset pixels from the grid centre."""
    w = WCS(naxis=2)
    w.wcs.ctype = [f"RA---{p['projection']}", f"DEC--{p['projection']}"]
    w.wcs.crval = [p["ref_ra_deg"], p["ref_dec_deg"]]
    w.wcs.crpix = [0.5 * (p["nx"] + 1), 0.5 * (p["ny"] + 1)]
    s = p["pixel_arcsec"] / 3600.0
    r = math.radians(p["grid_rotation_deg"])
    # (east, north) = M (dx, dy): x-axis towards PA 270 + rot (west, rotated)
    # for an unflipped grid; flipped: towards PA 90 + rot.
    ex = np.array([-math.cos(r), math.sin(r)]) if not p["flip"] else np.array([math.cos(r), -math.sin(r)])
    ey = np.array([math.sin(r), math.cos(r)])
    # CD maps pixel steps to intermediate coordinates (x = east, y = north).
    w.wcs.cd = s * np.array([[ex[0], ey[0]], [ex[1], ey[1]]])
    w.wcs.radesys = "ICRS"
    w.wcs.equinox = 2000.0
    return w


def sky_offsets(w, x, y, ra0, dec0):
    """(east, north) arcsec of 0-based pixel positions from (ra0, dec0): the
    gnomonic projection about (ra0, dec0) of each pixel's world position."""
    ra, dec = w.wcs_pix2world(x, y, 0)
    return gnomonic_offset(ra0, dec0, ra, dec)


def gnomonic_offset(ra0, dec0, ra, dec):
    """(east, north) arcsec of (ra, dec) (deg, scalars or arrays) from
    (ra0, dec0), gnomonic projection about (ra0, dec0)."""
    a, d = np.radians(ra), np.radians(dec)
    a0, d0 = math.radians(ra0), math.radians(dec0)
    cosc = math.sin(d0) * np.sin(d) + math.cos(d0) * np.cos(d) * np.cos(a - a0)
    east = np.cos(d) * np.sin(a - a0) / cosc
    north = (math.cos(d0) * np.sin(d) - math.sin(d0) * np.cos(d) * np.cos(a - a0)) / cosc
    k = 180.0 / math.pi * 3600.0
    return east * k, north * k


def true_centre(p, w):
    cx = 0.5 * (p["nx"] - 1) + p["centre_pixel_offset"][0]
    cy = 0.5 * (p["ny"] - 1) + p["centre_pixel_offset"][1]
    ra, dec = w.wcs_pix2world(cx, cy, 0)
    return float(ra), float(dec)


def disc_coordinates(p, east, north):
    pa, inc = math.radians(p["pa_deg"]), math.radians(p["inc_deg"])
    X = east * math.sin(pa) + north * math.cos(pa)
    Y = (east * math.cos(pa) - north * math.sin(pa)) / math.cos(inc)
    return X, Y, np.hypot(X, Y)


def surface_brightness(p, east, north, e):
    X, Y, R = disc_coordinates(p, east, north)
    sb = np.exp(-R / p["h_arcsec"])
    edge = R > p["r_edge_arcsec"]
    sb[edge] *= np.exp(-0.5 * ((R[edge] - p["r_edge_arcsec"]) / p["edge_width_arcsec"]) ** 2)
    psi = np.arctan2(east, north)  # position angle of the offset, north through east
    return sb * (1.0 + e * np.cos(psi - math.radians(p["lead_pa_deg"])))


def disc_velocity(p, east, north):
    X, Y, R = disc_coordinates(p, east, north)
    vrot = p["vflat_kms"] * (2.0 / math.pi) * np.arctan(R / p["rt_arcsec"])
    with np.errstate(invalid="ignore", divide="ignore"):
        cos_theta = np.where(R > 0, X / np.where(R > 0, R, 1.0), 0.0)
    return p["vsys_kms"] + vrot * math.sin(math.radians(p["inc_deg"])) * cos_theta


# ------------------------------------------------------------ convolution

def beam_kernel(p, jac, half_size):
    """The beam (peak 1) sampled at integer pixel steps (-half..half) of a grid
    whose Jacobian d(east, north)/d(x, y) is `jac` (arcsec per step)."""
    sma = p["bmaj_arcsec"] / FWHM_PER_SIGMA
    smi = p["bmin_arcsec"] / FWHM_PER_SIGMA
    b = math.radians(p["bpa_deg"])
    u_maj = np.array([math.sin(b), math.cos(b)])
    u_min = np.array([math.cos(b), -math.sin(b)])
    k = np.arange(-half_size, half_size + 1)
    dx, dy = np.meshgrid(k, k)
    e = jac[0, 0] * dx + jac[0, 1] * dy
    n = jac[1, 0] * dx + jac[1, 1] * dy
    a = e * u_maj[0] + n * u_maj[1]
    c = e * u_min[0] + n * u_min[1]
    return np.exp(-0.5 * ((a / sma) ** 2 + (c / smi) ** 2))


def fft_convolve_periodic(field, kernel):
    """Circular convolution of `field` with a centred odd-sized `kernel`."""
    ny, nx = field.shape
    kh = kernel.shape[0] // 2
    pad = np.zeros_like(field)
    pad[:kernel.shape[0], :kernel.shape[1]] = kernel
    pad = np.roll(pad, (-kh, -kh), axis=(0, 1))
    return np.real(np.fft.ifft2(np.fft.fft2(field) * np.fft.fft2(pad)))


def correlated_noise(p, rng, jac, shape):
    """Unit-rms beam-correlated noise: white deviates convolved with the
    beam in Fourier space, divided by sqrt(sum kernel^2)."""
    half = int(math.ceil(5.0 * p["bmaj_arcsec"] / FWHM_PER_SIGMA / min(np.abs(np.linalg.eigvals(jac)))))
    half = min(half, min(shape) // 2 - 1)
    k = beam_kernel(p, jac, half)
    white = rng.standard_normal(shape)
    return fft_convolve_periodic(white, k) / math.sqrt(np.sum(k * k))


def block_average(a, f):
    ny, nx = a.shape[0] // f, a.shape[1] // f
    return a.reshape(ny, f, nx, f).mean(axis=(1, 3))


def noise_free_maps(p, w, e):
    """Beam-convolved line map (peak 1) and velocity map conv(I v)/conv(I)
    on the pixel grid, from an oversampled model."""
    f = int(p["oversample"])
    nx, ny = p["nx"], p["ny"]
    pad = int(math.ceil(3.0 * p["bmaj_arcsec"] / p["pixel_arcsec"]))
    sub = (np.arange((nx + 2 * pad) * f) + 0.5) / f - 0.5 - pad
    suby = (np.arange((ny + 2 * pad) * f) + 0.5) / f - 0.5 - pad
    X, Y = np.meshgrid(sub, suby)
    ra0, dec0 = true_centre(p, w)
    east, north = sky_offsets(w, X, Y, ra0, dec0)
    sb = surface_brightness(p, east, north, e)
    vel = disc_velocity(p, east, north)
    jac = pixel_jacobian(w) / f
    half = int(math.ceil(5.0 * p["bmaj_arcsec"] / FWHM_PER_SIGMA / (p["pixel_arcsec"] / f)))
    k = beam_kernel(p, jac, half)
    ci = fft_convolve_periodic(sb, k)
    civ = fft_convolve_periodic(sb * vel, k)
    ci = block_average(ci, f)[pad:pad + ny, pad:pad + nx]
    civ = block_average(civ, f)[pad:pad + ny, pad:pad + nx]
    # Far from the disc the convolved emission is FFT round-off (~1e-17 of
    # the peak) and civ / ci is meaningless (values of 1e18 km/s seen): a
    # noise peak there that passes the clip would carry it. In a cube such a
    # peak's first moment is some velocity in the band; the systemic
    # velocity stands in for it (the velocity noise is added on top).
    faint = ~(ci > 1e-9 * ci.max())
    with np.errstate(invalid="ignore", divide="ignore"):
        velocity = np.where(faint, p["vsys_kms"], civ / ci)
    return ci / ci.max(), velocity


def pixel_jacobian(w):
    """d(east, north)/d(x, y) in arcsec per pixel from the CD matrix."""
    return np.array(w.wcs.cd) * 3600.0


# ---------------------------------------------------------------- asymmetry

def split_asymmetry(p, w, image, use, centre_radec, n_sub=8):
    """A = (L - T)/(L + T) of `image` over pixels `use`, each pixel divided by
    the fraction of its area on the leading side of the line through
    centre_radec perpendicular to lead_pa: n_sub x n_sub samples for pixels
    within a pixel diagonal of the line, whole pixels elsewhere."""
    ys, xs = np.nonzero(use)
    lp = math.radians(p["lead_pa_deg"])
    e0, n0 = sky_offsets(w, xs.astype(float), ys.astype(float), centre_radec[0], centre_radec[1])
    s0 = e0 * math.sin(lp) + n0 * math.cos(lp)
    frac = (s0 > 0.0).astype(float)
    near = np.abs(s0) < 0.75 * math.sqrt(2.0) * p["pixel_arcsec"]
    t = (np.arange(n_sub) + 0.5) / n_sub - 0.5
    sx, sy = np.meshgrid(t, t)
    xn, yn = xs[near], ys[near]
    east, north = sky_offsets(w, xn[:, None] + sx.ravel()[None, :], yn[:, None] + sy.ravel()[None, :],
                              centre_radec[0], centre_radec[1])
    frac[near] = np.mean(east * math.sin(lp) + north * math.cos(lp) > 0.0, axis=1)
    v = image[ys, xs]
    L, T = np.sum(v * frac), np.sum(v * (1.0 - frac))
    return float((L - T) / (L + T))


def offset_position(w, ra0, dec0, east, north):
    """World position (deg) of an (east, north) arcsec offset from (ra0, dec0)
    (inverse gnomonic projection)."""
    x, y = math.radians(east / 3600.0), math.radians(north / 3600.0)
    d0, a0 = math.radians(dec0), math.radians(ra0)
    rho = math.hypot(x, y)
    c = math.atan(rho)
    if rho == 0:
        return ra0, dec0
    dec = math.asin(math.cos(c) * math.sin(d0) + y * math.sin(c) * math.cos(d0) / rho)
    ra = a0 + math.atan2(x * math.sin(c), rho * math.cos(d0) * math.cos(c) - y * math.sin(d0) * math.sin(c))
    return math.degrees(ra) % 360.0, math.degrees(dec)


def optical_centre(p):
    """(east, north) arcsec of the optical centre from the true centre."""
    d = p["optical_offset_beams"] * p["bmaj_arcsec"]
    lp = math.radians(p["lead_pa_deg"])
    return d * math.sin(lp), d * math.cos(lp)


def trap_lopsidedness(p, w):
    """e for which A about the optical centre is minus A about the true
    centre (A is linear in e for a fixed footprint)."""
    ra0, dec0 = true_centre(p, w)
    oe, on = optical_centre(p)
    opt = offset_position(w, ra0, dec0, oe, on)
    i0, _ = noise_free_maps(p, w, 0.0)
    i1, _ = noise_free_maps(p, w, 0.1)
    use = i1 * p["peak"] >= CLIP_SIGMA * p["rms"]
    a_trap0 = split_asymmetry(p, w, i0, use, opt)
    a1_true = split_asymmetry(p, w, i1, use, (ra0, dec0))
    a1_trap = split_asymmetry(p, w, i1, use, opt)
    # A_true(e) = a e, A_trap(e) = A_trap0 + (a1_trap - A_trap0) e / 0.1; want A_trap = -A_true.
    slope_true, slope_trap = a1_true / 0.1, (a1_trap - a_trap0) / 0.1
    return float(-a_trap0 / (slope_true + slope_trap))


# ------------------------------------------------------------- the maps

_NOISE_FREE_CACHE = {}


def noise_free(p):
    """The seed-independent part of a galaxy (cached per parameter set): WCS,
    lopsidedness, noise-free line and velocity maps, the optical image
    without noise, and the truth without the per-seed entries."""
    key = json.dumps(p, sort_keys=True)
    if key not in _NOISE_FREE_CACHE:
        w = make_wcs(p)
        e = trap_lopsidedness(p, w) if p["lopsidedness"] == "trap" else float(p["lopsidedness"])
        line0, vel0 = noise_free_maps(p, w, e)
        line0 = line0 * p["peak"]
        truth = make_truth(p, w, e, line0)
        _NOISE_FREE_CACHE[key] = (w, line0, vel0, optical_image(p, w), truth)
    return _NOISE_FREE_CACHE[key]


def make_maps(p, seed):
    """All maps (numpy arrays, [y, x]), the truth dictionary and the WCS of
    one noise realisation."""
    w, line0, vel0, optical0, truth0 = noise_free(p)
    rng = np.random.default_rng(seed)
    jac = pixel_jacobian(w)
    rms = p["rms"]
    line = line0 + rms * correlated_noise(p, rng, jac, line0.shape)
    sigma_v = p["kv_kms"] * rms / np.maximum(line0, 2.0 * rms)
    vel = vel0 + sigma_v * correlated_noise(p, rng, jac, line0.shape)
    keep = line >= CLIP_SIGMA * rms
    maps = {
        "intensity": np.where(keep, line, np.nan).astype(np.float32),
        "intensity_error": np.full(line0.shape, rms, dtype=np.float32),
        "velocity": np.where(keep, vel, np.nan).astype(np.float32),
        "velocity_error": np.where(keep, sigma_v, np.nan).astype(np.float32),
        "optical": (optical0 + 0.5 * rng.standard_normal(optical0.shape)).astype(np.float32),
    }
    if p["scatter_kms"] > 0:  # drawn last: the other maps keep their noise
        f = p["scatter_scale_beams"]
        wide = dict(p, bmaj_arcsec=f * p["bmaj_arcsec"], bmin_arcsec=f * p["bmin_arcsec"])
        extra = p["scatter_kms"] * correlated_noise(wide, rng, jac, line0.shape)
        maps["velocity"] = np.where(keep, vel + extra, np.nan).astype(np.float32)
    truth = dict(truth0)
    truth["seed"] = seed
    truth["pixels_detected"] = int(np.sum(keep))
    return maps, truth, w


def optical_image(p, w):
    """A stellar exponential disc about the optical centre (same PA and
    inclination), convolved with a round Gaussian PSF, on a sky of 5 adu
    (make_maps adds white noise of 0.5 adu)."""
    ra0, dec0 = true_centre(p, w)
    oe, on = optical_centre(p)
    yy, xx = np.mgrid[0:p["ny"], 0:p["nx"]].astype(float)
    east, north = sky_offsets(w, xx, yy, ra0, dec0)
    X, Y, R = disc_coordinates(p, east - oe, north - on)
    img = np.exp(-R / p["optical_scale_arcsec"])
    s = p["psf_fwhm_arcsec"] / FWHM_PER_SIGMA / p["pixel_arcsec"]
    from scipy import ndimage
    img = ndimage.gaussian_filter(img, s, mode="constant") * 100.0
    return img + 5.0


def make_truth(p, w, e, line0):
    ra0, dec0 = true_centre(p, w)
    oe, on = optical_centre(p)
    opt = offset_position(w, ra0, dec0, oe, on)
    footprint = line0 >= CLIP_SIGMA * p["rms"]
    every = np.ones_like(footprint)
    return {
        "generator": "tests/python/mockgen.py",
        "preset": p["preset"], "name": p["name"],
        "centre": {"ra_deg": ra0, "dec_deg": dec0},
        "pa_deg": p["pa_deg"], "inc_deg": p["inc_deg"], "vsys_kms": p["vsys_kms"],
        "vflat_kms": p["vflat_kms"], "rt_arcsec": p["rt_arcsec"],
        "lead_pa_deg": p["lead_pa_deg"], "tail_pa_deg": (p["lead_pa_deg"] + 180.0) % 360.0,
        "lopsidedness": e,
        "beam": {"bmaj_arcsec": p["bmaj_arcsec"], "bmin_arcsec": p["bmin_arcsec"], "bpa_deg": p["bpa_deg"]},
        "pixel_arcsec": p["pixel_arcsec"],
        "rms_intensity": p["rms"], "intensity_unit": "Jy/beam km/s", "peak_intensity": p["peak"],
        "kv_kms": p["kv_kms"], "clip_sigma": CLIP_SIGMA,
        "optical_centre": {"ra_deg": opt[0], "dec_deg": opt[1], "east_arcsec": oe, "north_arcsec": on},
        "psf_fwhm_arcsec": p["psf_fwhm_arcsec"],
        "A_expected": split_asymmetry(p, w, line0, footprint, (ra0, dec0)),
        "A_all_pixels": split_asymmetry(p, w, line0, every, (ra0, dec0)),
        "A_optical_centre": split_asymmetry(p, w, line0, footprint, opt),
        "pixels_expected_footprint": int(np.sum(footprint)),
        "definitions": "A_expected: noise-free beam-convolved line map, pixels >= clip_sigma*rms, "
                       "split exactly through the true centre perpendicular to lead_pa; "
                       "A_all_pixels: same over every pixel; A_optical_centre: expected footprint "
                       "split at the optical centre",
        "parameters": {k: v for k, v in p.items()},
    }


def header_for(w, p, unit, beam=True, psf=False):
    h = w.to_header()
    h["BUNIT"] = unit
    if beam:
        h["BMAJ"] = p["bmaj_arcsec"] / 3600.0
        h["BMIN"] = p["bmin_arcsec"] / 3600.0
        h["BPA"] = p["bpa_deg"]
    if psf:
        h["BMAJ"] = p["psf_fwhm_arcsec"] / 3600.0
        h["BMIN"] = p["psf_fwhm_arcsec"] / 3600.0
        h["BPA"] = 0.0
    h["OBJECT"] = p["name"]
    h["ORIGIN"] = "mockgen.py (invented galaxy)"
    return h


def write_all(maps, truth, w, p, out_dir):
    os.makedirs(out_dir, exist_ok=True)
    units = {"intensity": "Jy/beam km/s", "intensity_error": "Jy/beam km/s",
             "velocity": "km/s", "velocity_error": "km/s", "optical": "adu"}
    for name, data in maps.items():
        h = header_for(w, p, units[name], beam=name != "optical", psf=name == "optical")
        tmp = os.path.join(out_dir, f".{name}.fits.tmp")
        fits.PrimaryHDU(data=data, header=h).writeto(tmp, overwrite=True)
        os.replace(tmp, os.path.join(out_dir, f"{name}.fits"))
    tmp = os.path.join(out_dir, ".truth.json.tmp")
    with open(tmp, "w") as f:
        json.dump(truth, f, indent=1)
    os.replace(tmp, os.path.join(out_dir, "truth.json"))


def generate(preset_name, seed, out_dir, **overrides):
    """Write the maps and truth.json of one realisation; return the truth."""
    p = preset(preset_name, **overrides)
    maps, truth, w = make_maps(p, seed)
    write_all(maps, truth, w, p, out_dir)
    return truth


def main(argv):
    ap = argparse.ArgumentParser(description="Write a mock galaxy observed with a beam (FITS maps + truth.json).")
    ap.add_argument("--preset", default="bright", help="one of: " + ", ".join(PRESETS))
    ap.add_argument("--seed", type=int, default=1, help="noise seed (the galaxy is fixed by the preset)")
    ap.add_argument("--out", help="output folder")
    ap.add_argument("--list", action="store_true", help="list the presets and exit")
    a = ap.parse_args(argv)
    if a.list:
        for k in PRESETS:
            print(k, "-", PRESETS[k]["name"])
        return 0
    if a.preset not in PRESETS:
        print(f"mockgen.py: --preset: unknown preset '{a.preset}' (one of {', '.join(PRESETS)})", file=sys.stderr)
        return 2
    if not a.out:
        print("mockgen.py: --out: an output folder is required", file=sys.stderr)
        return 2
    t = generate(a.preset, a.seed, a.out)
    print(f"{a.preset} seed {a.seed}: A_expected {t['A_expected']:+.4f}, "
          f"A at the optical centre {t['A_optical_centre']:+.4f}, {t['pixels_detected']} pixels detected -> {a.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
