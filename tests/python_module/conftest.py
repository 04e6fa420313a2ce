"""Shared set-up of the Python module's tests: the `fulcrum` command-line
tool (FULCRUM_BINARY, set by the CTest test; else build/fulcrum beside the
module) and one invented mock galaxy made by `fulcrum synth`, analysed once
by the command line, so that the module's results can be compared with it.

Run with the build folder on PYTHONPATH:
    PYTHONPATH=build /usr/bin/python3 -m pytest -q tests/python_module
"""
import json
import os
import subprocess
from pathlib import Path

import pytest

import fulcrum

# Quick settings for every comparison (the numbers must agree to the bit
# whatever the settings; small ones keep the tests within seconds).
DRAWS = 2000
SEED = 3
TAIL_PA = 300.0


def binary():
    given = os.environ.get("FULCRUM_BINARY")
    if given:
        return given
    return str(Path(fulcrum.__file__).resolve().parent / "fulcrum")


def run_cli(*args, check=True):
    """Run the command-line tool; returns the CompletedProcess."""
    r = subprocess.run([binary(), *map(str, args)], capture_output=True, text=True,
                       env=dict(os.environ, OMP_NUM_THREADS="1"))
    if check and r.returncode != 0:
        raise AssertionError(f"fulcrum {' '.join(map(str, args))} failed ({r.returncode}): {r.stderr}")
    return r


@pytest.fixture(scope="session")
def mock(tmp_path_factory):
    """An invented mock galaxy (fulcrum synth) and the command line's
    analysis of it (report.json), with the settings of this module."""
    root = tmp_path_factory.mktemp("mock")
    folder = root / "mock1"
    run_cli("synth", "--out", folder, "--leading-excess", "0.3", "--tail-pa-deg", TAIL_PA)
    out = root / "cli-result"
    run_cli("analyse", "--velocity", folder / "vel.fits", "--velocity-error", folder / "vel_err.fits",
            "--intensity", folder / "mom0.fits", "--intensity-error", folder / "mom0_err.fits",
            "--optical", folder / "opt.fits", "--tail-pa", TAIL_PA, "--name", "mock1",
            "--seed", SEED, "--draws", DRAWS, "--calibrate", 0, "--no-figures", "--out", out)
    report = json.loads((out / "report.json").read_text())
    return {"folder": folder, "root": root, "result": out, "report": report}
