"""The Python module `fulcrum` against the command-line tool on the same
inputs and seeds: the numbers must be the same to the last bit (both call
the same library), errors must be raised with the command line's message,
and arrays must be accepted as files are (same checks, same messages).
Outside reference for the array handling: astropy.io.fits reads the FITS
files the command line reads (FITS Standard 4.0 data layout, x fastest)."""
import json
import math

import numpy as np
import pytest
from astropy import units as u
from astropy.io import fits
from astropy.table import Table

import fulcrum
from conftest import DRAWS, SEED, TAIL_PA, run_cli


def fits_map(path):
    """(array, header) as astropy reads a FITS file (big-endian data)."""
    with fits.open(path) as hdul:
        return hdul[0].data.copy(), hdul[0].header.copy()


def galaxy_paths(folder):
    return dict(velocity=str(folder / "vel.fits"), velocity_error=str(folder / "vel_err.fits"),
                intensity=str(folder / "mom0.fits"), intensity_error=str(folder / "mom0_err.fits"),
                optical=str(folder / "opt.fits"))


def without_run_details(report, names=None):
    """report.json without what differs between two runs of the same
    analysis: its time stamp and inputs (an array has no file to hash), and
    with each path in `names` written as the name the array has instead."""
    def renamed(x):
        if isinstance(x, dict):
            return {k: renamed(v) for k, v in x.items()}
        if isinstance(x, list):
            return [renamed(v) for v in x]
        if isinstance(x, str):
            for path, name in (names or {}).items():
                x = x.replace(path, name)
        return x
    return renamed({k: v for k, v in report.items() if k not in ("created_utc", "inputs")})


def test_version_matches_the_command_line():
    r = run_cli("--version")
    assert isinstance(fulcrum.__version__, str) and fulcrum.__version__
    assert fulcrum.__version__ in r.stdout


def test_analyse_paths_equals_command_line(mock):
    s = fulcrum.analyse(**galaxy_paths(mock["folder"]), tail_pa_deg=TAIL_PA, name="mock1", seed=SEED,
                        draws=DRAWS, calibrate=0, figures=False)
    cli = mock["report"]
    assert s.verdict == cli["verdict"]
    assert s.asymmetry == cli["split"]["asymmetry"]          # exact: same library, same seed
    assert s.p_positive == cli["robustness"]["p_leading"]
    assert s.to_dict() == {**cli, "created_utc": s.to_dict()["created_utc"]}
    assert s.statement == cli["statement"]


def test_analyse_arrays_equals_command_line(mock):
    folder = mock["folder"]
    maps = {k: fits_map(p) for k, p in galaxy_paths(folder).items()}
    assert maps["velocity"][0].dtype.byteorder == ">"  # FITS data as astropy gives them: big-endian
    s = fulcrum.analyse(**maps, tail_pa_deg=TAIL_PA, name="mock1", seed=SEED, draws=DRAWS, calibrate=0,
                        figures=False)
    cli = mock["report"]
    assert s.verdict == cli["verdict"]
    assert s.asymmetry == cli["split"]["asymmetry"]
    assert s.p_positive == cli["robustness"]["p_leading"]
    # Every number and word the same; the maps are named "<role> array".
    names = {path: f"{role} array" for role, path in galaxy_paths(folder).items()}
    assert without_run_details(s.to_dict()) == without_run_details(cli, names)
    assert s.to_dict()["inputs"]["velocity"]["path"] == "velocity array"


def test_summary_attributes_and_tables(mock):
    s = fulcrum.read_results(mock["result"])
    cli = mock["report"]
    assert s.name == "mock1" and s.verdict == cli["verdict"] and s.seed == SEED and s.draws == DRAWS
    assert s.asymmetry == cli["split"]["asymmetry"]
    assert s.asymmetry_err == cli["split"]["asymmetry_err"]
    assert s.tail_pa_deg == cli["split"]["tail_pa_deg"]
    assert s.verdict_reason is None
    adopted = s.adopted_centre
    assert adopted["id"] == cli["adopted_centre"]
    assert adopted["east_arcsec"] == 0.0 and adopted["north_arcsec"] == 0.0
    centres = s.centres
    assert isinstance(centres, Table)
    assert centres["ra_deg"].unit == u.deg and centres["cov_ee"].unit == u.arcsec ** 2
    assert list(centres["id"]) == [c["id"] for c in cli["centres"]]
    row = s.table()
    assert isinstance(row, Table) and len(row) == 1
    assert s.to_dict() == cli
    assert "mock1" in repr(s)


def test_sample_folder_and_table_without_astropy(mock, tmp_path, monkeypatch):
    import shutil
    shutil.copytree(mock["result"], tmp_path / "sample" / "mock1")
    galaxies = fulcrum.read_results(tmp_path / "sample")
    assert [g.name for g in galaxies] == ["mock1"]
    table = fulcrum.robustness_table(galaxies)
    assert isinstance(table, Table) and list(table["galaxy"]) == ["mock1"]
    # Without astropy the tables are plain dicts of columns.
    import sys
    monkeypatch.setitem(sys.modules, "astropy.table", None)
    plain = fulcrum.robustness_table(galaxies)
    assert isinstance(plain, dict) and list(plain["galaxy"]) == ["mock1"]
    with pytest.raises(fulcrum.InputError, match="holds neither a report.json"):
        fulcrum.read_results(tmp_path)


def test_kinematics_equals_command_line(mock, tmp_path):
    folder = mock["folder"]
    run_cli("kinematics", "--velocity", folder / "vel.fits", "--velocity-error", folder / "vel_err.fits",
            "--intensity", folder / "mom0.fits", "--json", tmp_path / "k.json")
    cli = json.loads((tmp_path / "k.json").read_text())
    k = fulcrum.kinematics(fits_map(folder / "vel.fits"), velocity_error=str(folder / "vel_err.fits"),
                           intensity=str(folder / "mom0.fits"))
    for key in ("centre", "pa_deg", "inc_deg", "vsys_kms", "harmonic_centre", "rings"):
        assert k[key] == cli[key], key
    assert isinstance(k["ring_table"], Table) and k["ring_table"]["vrot"].unit == u.km / u.s
    assert k["model"].shape == fits_map(folder / "vel.fits")[0].shape


def test_kinematic_settings_are_checked_by_the_library(mock):
    vel = str(mock["folder"] / "vel.fits")
    with pytest.raises(fulcrum.InputError) as e:
        fulcrum.kinematics(vel, pa_err=5.0)  # a prior needs its value
    assert "pa" in str(e.value)
    with pytest.raises(TypeError, match="unknown kinematic setting 'pa_error'"):
        fulcrum.kinematics(vel, pa_error=5.0)
    with pytest.raises(fulcrum.SettingError):
        fulcrum.kinematics(vel, pa="north")


def test_photometry_equals_command_line(mock, tmp_path):
    opt = mock["folder"] / "opt.fits"
    run_cli("photometry", "--image", opt, "--bootstrap", 20, "--seed", 5, "--json", tmp_path / "p.json")
    cli = json.loads((tmp_path / "p.json").read_text())
    p = fulcrum.photometry(fits_map(opt), bootstrap=20, seed=5)
    assert p["centres"] == cli["centres"]
    assert p["psf"] == cli["psf"]


def test_split_equals_command_line_and_takes_a_strided_view(mock, tmp_path):
    mom0 = mock["folder"] / "mom0.fits"
    centre = (150.0, 20.0)
    run_cli("split", "--intensity", mom0, "--rms", 0.01, "--centre", "150,20", "--tail-pa", TAIL_PA,
            "--json", tmp_path / "s.json")
    cli = json.loads((tmp_path / "s.json").read_text())
    data, header = fits_map(mom0)
    wide = np.zeros((data.shape[0], 2 * data.shape[1]), dtype=np.float64)
    wide[:, ::2] = data
    view = wide[:, ::2]                      # every other column: not contiguous
    assert not view.flags["C_CONTIGUOUS"]
    for given in (str(mom0), (data, header), (view, header), (np.asfortranarray(data), header)):
        s = fulcrum.split(given, centre=centre, tail_pa_deg=TAIL_PA, rms=0.01)
        assert s["asymmetry"] == cli["asymmetry"]
        assert s["leading_flux"] == cli["leading_flux"] and s["trailing_flux"] == cli["trailing_flux"]
    assert wide[:, 1::2].sum() == 0.0        # the view was read, never written


def test_scan_equals_command_line_cube(mock, tmp_path):
    mom0 = mock["folder"] / "mom0.fits"
    run_cli("scan", "--intensity", mom0, "--centre", "150,20", "--tail-pa", TAIL_PA, "--half-width", 1,
            "--step", 0.5, "--angle-half-width", 10, "--angle-step", 10, "--out", tmp_path / "scan.fits")
    cube = fits.getdata(tmp_path / "scan.fits")   # (angle, north, east), FITS order reversed
    s = fulcrum.scan(fits_map(mom0), centre=(150.0, 20.0), tail_pa_deg=TAIL_PA, half_width_arcsec=1,
                     step_arcsec=0.5, angle_half_width_deg=10, angle_step_deg=10)
    assert s["asymmetry"].shape == cube.shape == (3, 5, 5)
    assert np.array_equal(s["asymmetry"], cube.astype(np.float64))
    assert list(s["tail_pa_deg"]) == [290.0, 300.0, 310.0]
    assert list(s["east_arcsec"]) == [-1.0, -0.5, 0.0, 0.5, 1.0]


def test_calibrate_equals_command_line_with_progress(mock, tmp_path):
    folder = mock["folder"]
    out = tmp_path / "cal"
    run_cli("calibrate", "--from", mock["result"], "--velocity", folder / "vel.fits", "--velocity-error",
            folder / "vel_err.fits", "--intensity", folder / "mom0.fits", "--intensity-error",
            folder / "mom0_err.fits", "--optical", folder / "opt.fits", "--mocks", 2, "--mock-draws", 200,
            "--no-refit", "--out", out)
    cli = json.loads((out / "calibration.json").read_text())
    steps = []
    c = fulcrum.calibrate(**galaxy_paths(folder), summary=fulcrum.read_results(mock["result"]), mocks=2,
                          mock_draws=200, refit=False, progress=lambda label, done, total: steps.append((label, done, total)))
    assert {k: v for k, v in c.items() if k != "seconds"} == {k: v for k, v in cli.items() if k != "seconds"}
    assert steps and steps[-1] == ("calibration mocks", 4, 4)

    def fails(label, done, total):
        raise KeyError("stop")
    with pytest.raises(KeyError, match="stop"):
        fulcrum.calibrate(**galaxy_paths(folder), summary=fulcrum.read_results(mock["result"]), mocks=1,
                          mock_draws=100, refit=False, progress=fails)


def test_missing_file_has_the_command_line_message(mock, tmp_path):
    missing = tmp_path / "none.fits"
    r = run_cli("split", "--intensity", missing, "--rms", 1, "--centre", "150,20", "--tail-pa", 0, check=False)
    with pytest.raises(fulcrum.InputError) as e:
        fulcrum.split(str(missing), centre=(150, 20), tail_pa_deg=0, rms=1)
    assert r.returncode == 2 and r.stderr.strip() == f"fulcrum: {e.value}"
    assert e.value.file == str(missing) and e.value.problem == "no such file"
    assert isinstance(e.value, fulcrum.Error) and isinstance(e.value, ValueError)


def test_arrays_are_checked_as_files_are(mock, tmp_path):
    data, header = fits_map(mock["folder"] / "mom0.fits")
    # No celestial WCS: the same problem as a FITS file without one.
    fits.PrimaryHDU(np.asarray(data, dtype=np.float64)).writeto(tmp_path / "nowcs.fits")
    with pytest.raises(fulcrum.InputError) as from_file:
        fulcrum.split(str(tmp_path / "nowcs.fits"), centre=(150, 20), tail_pa_deg=0, rms=1)
    with pytest.raises(fulcrum.InputError) as from_array:
        fulcrum.split((data, None), centre=(150, 20), tail_pa_deg=0, rms=1)
    assert from_array.value.problem == from_file.value.problem
    assert from_array.value.file == "intensity array"

    def refusal(array, hdr=header):
        with pytest.raises(fulcrum.InputError) as e:
            fulcrum.split((array, hdr), centre=(150, 20), tail_pa_deg=0, rms=1)
        return str(e.value)
    assert refusal(data[0]) == "intensity array: NAXIS = 1: a sky image needs two axes"
    assert "NAXIS3 = 2" in refusal(np.stack([data, data]))
    assert "expected real numbers" in refusal(data.astype(np.complex128))
    assert "expected real numbers" in refusal(np.full(data.shape, "a"))
    assert "the header says NAXIS1 = 128" in refusal(data[:, :100])
    assert "holds values of type object" in refusal(np.array([object()]))
    with pytest.raises(fulcrum.InputError, match="expected a FITS file path or a pair"):
        fulcrum.split(42, centre=(150, 20), tail_pa_deg=0, rms=1)


def test_dict_headers_and_degenerate_axes(mock):
    data, header = fits_map(mock["folder"] / "mom0.fits")
    cards = {k: header[k] for k in ("CTYPE1", "CTYPE2", "CRVAL1", "CRVAL2", "CRPIX1", "CRPIX2",
                                     "CDELT1", "CDELT2", "PC1_1", "PC2_2", "BMAJ", "BMIN", "BPA", "BUNIT")}
    reference = fulcrum.split((data, header), centre=(150, 20), tail_pa_deg=TAIL_PA, rms=0.01)
    from_dict = fulcrum.split((data, cards), centre=(150, 20), tail_pa_deg=TAIL_PA, rms=0.01)
    with_axes = fulcrum.split((data[np.newaxis, np.newaxis], cards), centre=(150, 20), tail_pa_deg=TAIL_PA, rms=0.01)
    assert reference["asymmetry"] == from_dict["asymmetry"] == with_axes["asymmetry"]
    assert from_dict["flux_unit"] == reference["flux_unit"]


def test_settings_are_refused_with_the_library_message(mock):
    paths = galaxy_paths(mock["folder"])
    with pytest.raises(fulcrum.SettingError) as e:
        fulcrum.analyse(**paths, tail_pa_deg=TAIL_PA, draws=5)
    assert e.value.setting == "draws" and str(e.value).startswith("draws = 5 is not allowed: must be")
    r = run_cli("analyse", "--velocity", paths["velocity"], "--intensity", paths["intensity"], "--tail-pa", 0,
                "--draws", 5, "--out", mock["root"] / "refused", check=False)
    assert r.returncode == 2 and e.value.rule in r.stderr
    with pytest.raises(fulcrum.SettingError, match="tail_pa_deg = inf"):
        fulcrum.split(paths["intensity"], centre=(150, 20), tail_pa_deg=math.inf, rms=1)
    with pytest.raises(fulcrum.InputError, match="give tail_pa_deg or tail_image"):
        fulcrum.analyse(**paths)
    with pytest.raises(TypeError, match="unexpected keyword argument 'tail_pa'"):
        fulcrum.analyse(**paths, tail_pa=TAIL_PA)
    assert issubclass(fulcrum.SettingError, fulcrum.InputError) and issubclass(fulcrum.InputError, fulcrum.Error)
