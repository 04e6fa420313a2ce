#!/usr/bin/python3
"""Write the catalogue of bad inputs that fulcrum must refuse (or repair with a warning).

    /usr/bin/python3 tools/make_bad_inputs.py OUT_DIR          # the bad inputs
    /usr/bin/python3 tools/make_bad_inputs.py --corpus OUT_DIR # fuzzing seeds

Every file is small and invented: a mock disc galaxy at an invented position
(RA 150 deg, Dec +20 deg), 40 x 40 pixels of 0.5 arcsec, SIN projection,
beam 2.0 x 1.6 arcsec (BMAJ/BMIN in degrees as FITS wants). Velocities are
km/s, line maps Jy/beam km/s, optical images counts. Nothing here is a real
observation. The list of cases, with the command line that reads each file,
the expected exit status and the message, is fixtures/bad_inputs/catalogue.json;
tests/reliability/test_bad_inputs.cpp runs it.

Files are written with astropy.io.fits (python3-astropy) where the damage is
at the level of keywords, and byte by byte where the damage is in the FITS
structure itself (truncation, missing END, wrong BITPIX).
"""
import math
import os
import sys

import numpy as np
from astropy.io import fits

NX = NY = 40
PIX_ARCSEC = 0.5
RA0, DEC0 = 150.0, 20.0          # invented position of the mock galaxy
VSYS, VFLAT, RTURN = 7000.0, 180.0, 3.0   # km/s, km/s, arcsec
PA, INC = 60.0, 55.0             # deg: receding major axis, inclination
BMAJ, BMIN, BPA = 2.0 / 3600, 1.6 / 3600, 20.0


def celestial_header(ra=RA0, dec=DEC0, proj="SIN", pix=PIX_ARCSEC, nx=NX, ny=NY):
    h = fits.Header()
    h["CTYPE1"] = "RA---" + proj
    h["CTYPE2"] = "DEC--" + proj
    h["CRPIX1"] = (nx + 1) / 2.0
    h["CRPIX2"] = (ny + 1) / 2.0
    h["CRVAL1"] = ra
    h["CRVAL2"] = dec
    h["CDELT1"] = -pix / 3600.0
    h["CDELT2"] = pix / 3600.0
    h["CUNIT1"] = "deg"
    h["CUNIT2"] = "deg"
    h["RADESYS"] = "ICRS"
    return h


def offsets_arcsec(nx=NX, ny=NY, pix=PIX_ARCSEC):
    """(east, north) offsets of each pixel from the map centre; east = -x here (CDELT1 < 0)."""
    y, x = np.mgrid[0:ny, 0:nx].astype(float)
    east = -(x - (nx - 1) / 2.0) * pix
    north = (y - (ny - 1) / 2.0) * pix
    return east, north


def disc_coordinates():
    e, n = offsets_arcsec()
    pa, inc = math.radians(PA), math.radians(INC)
    along = e * math.sin(pa) + n * math.cos(pa)       # towards the receding half
    across = (-e * math.cos(pa) + n * math.sin(pa)) / math.cos(inc)
    r = np.hypot(along, across)
    cos_theta = np.where(r > 0, along / np.where(r > 0, r, 1.0), 0.0)
    return r, cos_theta


def velocity_field():
    """Tilted-ring model (Begeman 1989), one ring geometry, arctan rotation curve, km/s."""
    r, cos_theta = disc_coordinates()
    vrot = VFLAT * (2 / math.pi) * np.arctan(r / RTURN)
    v = VSYS + vrot * math.sin(math.radians(INC)) * cos_theta
    v[r > 11.0] = np.nan
    return v


def intensity_map():
    r, _ = disc_coordinates()
    return 0.5 * np.exp(-r / 4.0)


def write(path, data, header, bunit=None, beam=True, dtype=np.float32):
    h = header.copy()
    if bunit is not None:
        h["BUNIT"] = bunit
    if beam:
        h["BMAJ"], h["BMIN"], h["BPA"] = BMAJ, BMIN, BPA
    hdu = fits.PrimaryHDU(None if data is None else np.asarray(data, dtype=dtype), header=h)
    hdu.writeto(path, overwrite=True, output_verify="silentfix")


def card(key, value):
    """One 80-character header card (value already formatted)."""
    if key == "END":
        return "END".ljust(80)
    return ("%-8s= %20s" % (key, value)).ljust(80)[:80]


def raw_fits(cards, data_bytes=b"", pad=True):
    """A FITS file put together byte by byte (for damage astropy refuses to write)."""
    header = "".join(cards).encode("ascii")
    if pad:
        header += b" " * ((-len(header)) % 2880)
        data_bytes += b"\0" * ((-len(data_bytes)) % 2880)
    return header + data_bytes


def good_cards(bitpix="-32", naxes=(NX, NY)):
    cs = [card("SIMPLE", "T"), card("BITPIX", bitpix), card("NAXIS", str(len(naxes)))]
    cs += [card("NAXIS%d" % (i + 1), str(n)) for i, n in enumerate(naxes)]
    for k, v in celestial_header().items():
        cs.append(card(k, ("'%s'" % v) if isinstance(v, str) else repr(v)))
    return cs


def write_bytes(path, b):
    with open(path, "wb") as f:
        f.write(b)


def make_bad_inputs(d):
    os.makedirs(d, exist_ok=True)
    p = lambda name: os.path.join(d, name)
    vel, mom0 = velocity_field(), intensity_map()
    h = celestial_header()

    # Good reference files, used beside the bad ones.
    write(p("good_vel.fits"), vel, h, "km/s")
    write(p("good_mom0.fits"), mom0, h, "Jy/beam.km/s")
    write(p("good_mom0_err.fits"), np.full_like(mom0, 0.01), h, "Jy/beam.km/s")

    # --- FITS structure -------------------------------------------------
    write_bytes(p("empty.fits"), b"")
    write_bytes(p("short_header.fits"), raw_fits(good_cards(), pad=False)[:1000])
    write_bytes(p("not_fits.fits"), (b"this is a text file, not FITS\n" * 200)[:5760])
    full = open(p("good_mom0.fits"), "rb").read()
    write_bytes(p("truncated_data.fits"), full[: 2880 + 2000])   # header + part of the data
    data32 = np.asarray(mom0, dtype=">f4").tobytes()
    write_bytes(p("missing_end.fits"),
                raw_fits([c for c in good_cards()], data32)[:2880].replace(b"END" + b" " * 77, b" " * 80)
                + data32)
    write_bytes(p("bitpix_12.fits"), raw_fits(good_cards(bitpix="12") + [card("END", "")],
                                              np.zeros(NX * NY * 2, np.uint8).tobytes()))
    # Text after a value without the '/' of a comment, on a DSS plate keyword
    # (wcslib's wcspih crashed on this before fulcrum refused it; fuzzing find).
    junk = good_cards() + [("CNPIX2  = %20s" % "2.5").ljust(79) + "x", card("END", "")]
    write_bytes(p("value_trailing_text.fits"), raw_fits(junk, data32))
    nobitpix = [c for c in good_cards() if not c.startswith("BITPIX")] + [card("END", "")]
    write_bytes(p("bitpix_missing.fits"), raw_fits(nobitpix, data32))
    write(p("naxis_1.fits"), np.arange(NX, dtype=float), fits.Header(), "Jy/beam.km/s", beam=False)
    write(p("naxis_0.fits"), None, h, beam=False)
    write_bytes(p("naxis2_zero.fits"), raw_fits(good_cards(naxes=(NX, 0)) + [card("END", "")]))

    h4 = celestial_header()
    h4["CTYPE3"], h4["CRVAL3"], h4["CDELT3"], h4["CRPIX3"], h4["CUNIT3"] = "VRAD", 7.0e6, 1.0e4, 1.0, "m/s"
    h4["CTYPE4"], h4["CRVAL4"], h4["CDELT4"], h4["CRPIX4"] = "STOKES", 1.0, 1.0, 1.0
    write(p("naxis_4_two_stokes.fits"), np.zeros((2, 3, NY, NX)), h4, "Jy/beam")
    h5 = h4.copy()
    h5["CTYPE5"], h5["CRVAL5"], h5["CDELT5"], h5["CRPIX5"] = "TIME", 0.0, 1.0, 1.0
    write(p("naxis_5.fits"), np.zeros((1, 1, 3, NY, NX)), h5, "Jy/beam")
    h3 = h4.copy()
    for k in ("CTYPE4", "CRVAL4", "CDELT4", "CRPIX4"):
        del h3[k]
    write(p("cube_as_map.fits"), np.zeros((3, NY, NX)) + mom0, h3, "Jy/beam")

    # --- WCS -------------------------------------------------------------
    def without(*keys):
        hh = celestial_header()
        for k in keys:
            del hh[k]
        return hh

    write(p("missing_ctype.fits"), mom0, without("CTYPE1", "CTYPE2"), "Jy/beam.km/s")
    write(p("missing_crval.fits"), mom0, without("CRVAL1", "CRVAL2"), "Jy/beam.km/s")
    write(p("missing_cdelt.fits"), mom0, without("CDELT1", "CDELT2"), "Jy/beam.km/s")
    hz = celestial_header()
    hz["CDELT2"] = 0.0
    write(p("cdelt_zero.fits"), mom0, hz, "Jy/beam.km/s")
    hcd = without("CDELT1", "CDELT2")
    hcd["CD1_1"], hcd["CD1_2"], hcd["CD2_1"], hcd["CD2_2"] = -1e-4, 2e-4, 1e-4, -2e-4  # det = 0
    write(p("singular_cd.fits"), mom0, hcd, "Jy/beam.km/s")
    hn = celestial_header()
    hn["CTYPE1"], hn["CTYPE2"], hn["CUNIT1"], hn["CUNIT2"] = "FREQ", "VRAD", "Hz", "m/s"
    write(p("non_celestial.fits"), mom0, hn, "Jy/beam.km/s")
    hl = celestial_header()
    hl["CTYPE2"], hl["CUNIT2"] = "LINEAR", ""
    write(p("only_ra_axis.fits"), mom0, hl, "Jy/beam.km/s")
    h23 = fits.Header()
    h23["CTYPE1"], h23["CRVAL1"], h23["CDELT1"], h23["CRPIX1"], h23["CUNIT1"] = "VRAD", 7.0e6, 1.0e4, 1.0, "m/s"
    for i, (k, v) in enumerate([("RA---SIN", RA0), ("DEC--SIN", DEC0)], start=2):
        h23["CTYPE%d" % i], h23["CRVAL%d" % i] = k, v
        h23["CDELT%d" % i], h23["CRPIX%d" % i], h23["CUNIT%d" % i] = PIX_ARCSEC / 3600, 20.0, "deg"
    write(p("celestial_on_axes_2_3.fits"), np.zeros((NY, NX, 3)), h23, "Jy/beam")
    hq = celestial_header()
    hq["CTYPE1"], hq["CTYPE2"] = "RA---QQQ", "DEC--QQQ"
    write(p("unknown_projection.fits"), mom0, hq, "Jy/beam.km/s")
    hd = celestial_header()
    hd["CRVAL2"] = 123.0
    write(p("dec_out_of_range.fits"), mom0, hd, "Jy/beam.km/s")
    hs = celestial_header()
    hs["CRVAL1"] = "somewhere"
    write(p("crval_not_a_number.fits"), mom0, hs, "Jy/beam.km/s")
    hbig = good_cards(naxes=(100000, 100000)) + [card("END", "")]
    write_bytes(p("huge_naxis.fits"), raw_fits(hbig, data32))
    write_bytes(p("bscale_zero.fits"),
                raw_fits(good_cards(bitpix="16") + [card("BSCALE", "0.0"), card("END", "")],
                         np.zeros(NX * NY, ">i2").tobytes()))

    # --- beam ------------------------------------------------------------
    def with_beam(name, bmaj, bmin, bpa=BPA):
        hh = celestial_header()
        hh["BMAJ"], hh["BMIN"], hh["BPA"] = bmaj, bmin, bpa
        hh["BUNIT"] = "Jy/beam.km/s"
        fits.PrimaryHDU(mom0.astype(np.float32), header=hh).writeto(p(name), overwrite=True)

    with_beam("beam_negative.fits", -BMAJ, BMIN)
    with_beam("beam_zero.fits", 0.0, 0.0)
    with_beam("beam_absurd.fits", 5.0, 4.0)            # degrees: larger than any galaxy map
    with_beam("beam_in_arcsec.fits", 2.0, 1.6)          # arcsec written where degrees belong
    with_beam("beam_in_radians.fits", 2.0 / 206265, 1.6 / 206265)  # radians: 0.035 arcsec read as deg
    with_beam("beam_not_a_number.fits", "two", "one")
    hb = celestial_header()
    hb["BMAJ"], hb["BUNIT"] = BMAJ, "Jy/beam.km/s"
    write(p("beam_bmaj_only.fits"), mom0, hb, beam=False)

    # --- map content -----------------------------------------------------
    write(p("vel_all_nan.fits"), np.full((NY, NX), np.nan), h, "km/s")
    one = np.full((NY, NX), np.nan)
    one[NY // 2, NX // 2] = VSYS
    write(p("vel_single_pixel.fits"), one, h, "km/s")
    const = np.where(np.isfinite(vel), VSYS, np.nan)
    write(p("vel_constant.fits"), const, h, "km/s")
    write(p("vel_in_m_per_s.fits"), vel * 1000.0, h, "m/s")
    write(p("vel_in_m_per_s_no_unit.fits"), vel * 1000.0, h, None)
    write(p("vel_unit_jy.fits"), vel, h, "Jy/beam")
    write(p("mom0_all_nan.fits"), np.full((NY, NX), np.nan), h, "Jy/beam.km/s")
    write(p("mom0_all_zero.fits"), np.zeros((NY, NX)), h, "Jy/beam.km/s")
    write(p("mom0_negative_total.fits"), mom0 - 1.0, h, "Jy/beam.km/s")
    write(p("mom0_single_pixel.fits"), np.where(one > 0, 1.0, np.nan), h, "Jy/beam.km/s")
    # Positive and negative pixels that cancel: a total of ~0 (A undefined).
    write(p("mom0_total_near_zero.fits"), mom0 - np.nanmean(mom0), h, "Jy/beam.km/s")
    # m/s values labelled km/s: |v| = 7e6 "km/s", faster than light.
    write(p("vel_m_per_s_labelled_kms.fits"), vel * 1000.0, h, "km/s")
    hfar = celestial_header(ra=210.0, dec=-30.0)
    write(p("mom0_elsewhere.fits"), mom0, hfar, "Jy/beam.km/s")
    write(p("mom0_err_other_grid.fits"), np.full((NY // 2, NX // 2), 0.01),
          celestial_header(nx=NX // 2, ny=NY // 2), "Jy/beam.km/s")
    rng = np.random.default_rng(20261201)
    hopt = celestial_header(proj="TAN", pix=0.4, nx=60, ny=60)
    write(p("optical_pure_noise.fits"), rng.normal(0.0, 1.0, (60, 60)), hopt, "adu", beam=False)
    write(p("optical_all_nan.fits"), np.full((60, 60), np.nan), hopt, "adu", beam=False)

    # --- cubes -----------------------------------------------------------
    hc = h3.copy()
    hc["CTYPE3"] = "LINEAR"
    write(p("cube_no_spectral_axis.fits"), np.zeros((3, NY, NX)) + mom0, hc, "Jy/beam")
    write(p("cube_all_blank.fits"), np.full((3, NY, NX), np.nan), h3, "Jy/beam")
    hf = h3.copy()
    hf["CTYPE3"], hf["CRVAL3"], hf["CDELT3"], hf["CUNIT3"] = "FREQ", 2.2e11, 1.0e7, "Hz"
    write(p("cube_freq_no_restfrq.fits"), np.zeros((3, NY, NX)) + mom0, hf, "Jy/beam")

    # --- folders and manifests --------------------------------------------
    os.makedirs(p("a_folder.fits"), exist_ok=True)
    os.makedirs(p("folder_manifest.toml"), exist_ok=True)
    galaxy = ('[[galaxy]]\nname = "{name}"\nvelocity = "good_vel.fits"\n'
              'intensity = "good_mom0.fits"\nintensity_error = "good_mom0_err.fits"\n'
              'tail_pa_deg = {tail}\ntail_pa_err_deg = 10.0\n{extra}\n')
    head = '[sample]\nname = "bad-input catalogue"\nseed = 7\ndraws = 200\n\n'

    def manifest(name, *galaxies, header=head):
        with open(p(name), "w") as f:
            f.write(header)
            for g in galaxies:
                f.write(galaxy.format(**{"name": "Mock-A", "tail": "300.0", "extra": "", **g}))

    manifest("manifest_unknown_key.toml", {"extra": "tail_angle = 300.0"})
    manifest("manifest_unknown_sample_key.toml", {}, header=head + "colour = \"blue\"\n")
    manifest("manifest_wrong_type.toml", {"tail": '"north-west"'})
    manifest("manifest_duplicate_names.toml", {}, {})
    manifest("manifest_missing_file.toml", {"extra": 'optical = "no_such_image.fits"'})
    manifest("manifest_path_is_folder.toml", {"extra": 'optical = "a_folder.fits"'})
    manifest("manifest_tail_pa_out_of_range.toml", {"tail": "720.0"})
    manifest("manifest_tail_pa_huge.toml", {"tail": "1e300"})
    manifest("manifest_psf_negative.toml", {"extra": "psf_fwhm_arcsec = -1.0"})
    manifest("manifest_seed_negative.toml", {}, header=head.replace("seed = 7", "seed = -1"))
    manifest("manifest_rms_zero.toml", {"extra": "rms = 0.0"})
    manifest("manifest_no_name.toml", {"name": ""})
    manifest("manifest_long_name.toml", {"name": "Mock-" + "x" * 295})
    manifest("manifest_huge_name.toml", {"name": "Mock-" + "y" * 100000})
    manifest("manifest_no_galaxies.toml")
    # A galaxy given as a line cube: the run makes its maps (issue 7).
    cube_galaxy = '[[galaxy]]\nname = "Mock-C"\ncube = "{cube}"\ntail_pa_deg = 300.0\n{extra}\n'
    with open(p("manifest_cube_and_velocity.toml"), "w") as f:
        f.write(head + cube_galaxy.format(cube="cube_all_blank.fits", extra='velocity = "good_vel.fits"'))
    with open(p("manifest_cube_all_blank.toml"), "w") as f:
        f.write(head + cube_galaxy.format(cube="cube_all_blank.fits", extra=""))
    with open(p("manifest_cube_is_a_map.toml"), "w") as f:
        f.write(head + cube_galaxy.format(cube="good_mom0.fits", extra=""))
    with open(p("manifest_syntax_error.toml"), "w") as f:
        f.write(head + '[[galaxy]\nname = "Mock-A"\n')
    write_bytes(p("manifest_empty.toml"), b"")

    # Mock-galaxy parameter files (fulcrum synth --config).
    def mock(name, body):
        with open(p(name), "w") as f:
            f.write('[galaxy]\nname = "Mock-Z"\nseed = 3\n' + body)

    mock("mock_unknown_key.toml", "tilt_deg = 30.0\n")
    mock("mock_wrong_type.toml", 'inc_deg = "steep"\n')
    mock("mock_inclination_out_of_range.toml", "inc_deg = 95.0\n")
    mock("mock_empty_grid.toml", "[galaxy.grid]\nnx = 0\nny = 64\n")
    mock("mock_integer_overflow.toml", "seed = 1e30\n")
    mock("mock_syntax_error.toml", "pa_deg = = 60\n")
    with open(p("manifest_binary.toml"), "wb") as f:
        f.write(bytes(range(256)) * 4)

    # --- issue 17, round two: keywords that read but mean nothing usable --
    hlp = celestial_header()
    hlp["LONPOLE"] = 1e300
    write(p("vel_lonpole_huge.fits"), vel, hlp, "km/s")
    htiny = celestial_header()
    htiny["CDELT1"], htiny["CDELT2"] = -1e-15, 1e-15
    write(p("vel_cdelt_tiny.fits"), vel, htiny, "km/s")
    write(p("mom0_cdelt_tiny.fits"), mom0, htiny, "Jy/beam.km/s")
    hct = h3.copy()
    hct["CDELT3"] = "ten km/s"
    write(p("cube_cdelt3_text.fits"), np.zeros((3, NY, NX)) + mom0, hct, "Jy/beam")
    hgal = celestial_header()
    hgal["CTYPE1"], hgal["CTYPE2"] = "GLON-SIN", "GLAT-SIN"
    write(p("vel_galactic.fits"), vel, hgal, "km/s")
    write(p("mom0_galactic.fits"), mom0, hgal, "Jy/beam.km/s")
    hecl = celestial_header()
    hecl["CTYPE1"], hecl["CTYPE2"] = "ELON-SIN", "ELAT-SIN"
    write(p("mom0_ecliptic.fits"), mom0, hecl, "Jy/beam.km/s")
    hfk4 = celestial_header()
    hfk4["RADESYS"], hfk4["EQUINOX"] = "FK4", 1950.0
    write(p("vel_fk4_b1950.fits"), vel, hfk4, "km/s")
    write(p("mom0_no_bunit.fits"), mom0, h, None)
    write(p("mom0_bunit_kms.fits"), mom0, h, "km/s")
    vinf = vel.copy()
    idx = np.argwhere(np.isfinite(vel))[:5]
    for (yy, xx) in idx:
        vinf[yy, xx] = np.inf
    write(p("vel_inf_pixels.fits"), vinf, h, "km/s")
    # A line map shifted by 3 arcsec (1.5 pixels) against the velocity field.
    hshift = celestial_header()
    hshift["CRPIX1"] = hshift["CRPIX1"] + 3.0 / PIX_ARCSEC
    write(p("mom0_shifted_3arcsec.fits"), mom0, hshift, "Jy/beam.km/s")
    # Two CRVAL1 cards (the second 1 degree away).
    dup = good_cards()
    at = [i for i, c in enumerate(dup) if c.startswith("CRVAL1")][0]
    dup = dup[: at + 1] + [card("CRVAL1", repr(float(RA0) + 1.0))] + dup[at + 1:]
    write_bytes(p("vel_duplicate_crval1.fits"), raw_fits(dup + [card("BUNIT", "'km/s'"), card("END", "")],
                                                         np.asarray(vel, dtype=">f4").tobytes()))
    # A huge BMIN (BMAJ fine): once passed the beam check and ran moments out of memory.
    hbm = h3.copy()
    hbm["BMAJ"], hbm["BMIN"], hbm["BPA"] = BMAJ, 99999999999.0, 0.0
    fits.PrimaryHDU((np.zeros((3, NY, NX)) + mom0).astype(np.float32), header=hbm).writeto(
        p("cube_bmin_huge.fits"), overwrite=True)
    import gzip
    with open(p("good_mom0.fits"), "rb") as f, gzip.open(p("good_mom0.fits.gz"), "wb") as g:
        g.write(f.read())
    hdu = fits.CompImageHDU(mom0.astype(np.float32), header=h)
    hdu.header["BUNIT"] = "Jy/beam.km/s"
    fits.HDUList([fits.PrimaryHDU(), hdu]).writeto(p("mom0_tile_compressed.fits"), overwrite=True)


def make_corpus(d):
    """Small valid and near-valid FITS seeds for the fuzzer (each <= 3 blocks)."""
    os.makedirs(d, exist_ok=True)
    small = np.arange(16, dtype=float).reshape(4, 4)
    h = celestial_header(nx=4, ny=4)
    fits.PrimaryHDU(small.astype(np.float32), header=h).writeto(os.path.join(d, "tiny_f32.fits"), overwrite=True)
    hb = h.copy()
    hb["BMAJ"], hb["BMIN"], hb["BPA"], hb["BUNIT"] = BMAJ, BMIN, BPA, "Jy/beam.km/s"
    hb["BSCALE"], hb["BZERO"], hb["BLANK"] = 0.5, 10.0, -32768
    fits.PrimaryHDU(small.astype(np.int16), header=hb, do_not_scale_image_data=True).writeto(
        os.path.join(d, "tiny_i16_scaled.fits"), overwrite=True)
    hcd = celestial_header(nx=4, ny=4, proj="TAN")
    del hcd["CDELT1"], hcd["CDELT2"]
    hcd["CD1_1"], hcd["CD1_2"], hcd["CD2_1"], hcd["CD2_2"] = -1e-4, 5e-5, 5e-5, 1e-4
    fits.PrimaryHDU(small, header=hcd).writeto(os.path.join(d, "tiny_cd_f64.fits"), overwrite=True)
    h4 = celestial_header(nx=4, ny=4)
    h4["CTYPE3"], h4["CRVAL3"], h4["CDELT3"], h4["CRPIX3"] = "VRAD", 7.0e6, 1.0e4, 1.0
    h4["CTYPE4"], h4["CRVAL4"], h4["CDELT4"], h4["CRPIX4"] = "STOKES", 1.0, 1.0, 1.0
    fits.PrimaryHDU(small.reshape(1, 1, 4, 4).astype(np.float32), header=h4).writeto(
        os.path.join(d, "tiny_4d.fits"), overwrite=True)
    hr = celestial_header(nx=4, ny=4, proj="ARC")
    hr["CROTA2"] = 30.0
    hx = fits.ImageHDU(small.astype(np.int32), header=hr)
    fits.HDUList([fits.PrimaryHDU(), hx]).writeto(os.path.join(d, "tiny_ext_crota.fits"), overwrite=True)


def main(argv):
    if len(argv) == 3 and argv[1] == "--corpus":
        make_corpus(argv[2])
    elif len(argv) == 2 and not argv[1].startswith("-"):
        make_bad_inputs(argv[1])
    else:
        sys.stderr.write(__doc__)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
