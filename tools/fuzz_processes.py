#!/usr/bin/python3
"""Black-box fuzzing of the fulcrum executable (no instrumentation).

    tools/fuzz_processes.py FULCRUM INPUTS SECONDS cli|cube|fits|toml [SEED]

INPUTS is a folder made by tools/make_bad_inputs.py. Each trial runs the
executable in a fresh folder under a 2.5 GB address-space limit and a 30 s
time limit, and counts as a finding when it
  * ends by a signal (a crash), or with a status other than 0 and 2
    (3 = internal error or out of memory),
  * runs out of the 30 s,
  * fails (status 2) with other than exactly one line "fulcrum: ..." on
    stderr (warnings aside), or
  * leaves files in its output folder after a refusal.
`cli`: random command lines: a subcommand (not `demo`), options taken from its --help,
values drawn from edge cases (0, -1, nan, inf, 1e300, huge integers, empty,
long text, the bad inputs). `cube`: `moments --cube` on mutations of a valid
cube (header cards replaced, duplicated or dropped; bytes flipped; the file
cut short). `fits`: the same mutations of the valid velocity and line maps
of INPUTS (good_vel.fits, good_mom0.fits), read by `inspect`, `split`,
`kinematics` or `analyse`. `toml`: `run` on mutations of a valid sample
manifest naming those maps (a value replaced by an edge value, a line given
twice, dropped or cut, a key renamed, a table header put in, bytes flipped,
the text cut short). Prints a summary and the first findings; exit 1 when
any.
"""
import os
import random
import re
import resource
import shutil
import subprocess
import sys
import tempfile
import time

import numpy as np
from astropy.io import fits

VALUES = ["0", "-1", "1", "nan", "inf", "-inf", "1e300", "-1e300", "1e-300", "18446744073709551616",
          "9223372036854775807", "2147483648", "", "x" * 5000, "abc", "1,2", "150.0,20.0", "3/0", "0/3", "1/1",
          "65536", "0.5", "1e9", "--", "-", "..", "/", "/dev/null", "\t", "12abc"]


def limit():
    resource.setrlimit(resource.RLIMIT_AS, (2_500_000_000, 2_500_000_000))


def options_of(exe, sub):
    out = subprocess.run([exe, sub, "--help"], capture_output=True, text=True).stdout
    return sorted(set(re.findall(r"^\s+(--[a-z][a-z0-9-]*)", out, re.M)) - {"--help"})


def run(exe, args, cwd):
    try:
        p = subprocess.run([exe, "--quiet"] + args, capture_output=True, text=True, cwd=cwd, timeout=30,
                           preexec_fn=limit, env=dict(os.environ, OMP_NUM_THREADS="1"))
    except subprocess.TimeoutExpired:
        return None, ""
    return p.returncode, p.stderr


def judge(code, err, out_dir):
    if code is None:
        return "timeout (30 s)"
    if code < 0:
        return "signal %d" % -code
    if code not in (0, 2):
        return "status %d: %s" % (code, err.strip()[-300:])
    if code == 2:
        lines = [l for l in err.splitlines() if l.startswith("fulcrum: ") and not l.startswith("fulcrum: warning")]
        if len(lines) != 1:
            return "%d error lines: %s" % (len(lines), err.strip()[-300:])
        if os.path.isdir(out_dir) and any(files for _, _, files in os.walk(out_dir)):
            return "files left after a refusal: " + lines[0][:200]
    return None


def cli_trial(exe, inputs, subs, rng, work):
    sub = rng.choice(list(subs))
    args = [sub]
    files = [os.path.join(inputs, f) for f in os.listdir(inputs)]
    for opt in rng.sample(subs[sub], min(len(subs[sub]), rng.randint(1, 8))):
        args.append(opt)
        r = rng.random()
        if opt in ("--out", "--json"):
            args.append(os.path.join(work, "out" + (".json" if opt == "--json" else "")))
        elif r < 0.45:
            args.append(rng.choice(files))
        elif r < 0.95:
            args.append(rng.choice(VALUES))
    if sub in ("run", "merge") and rng.random() < 0.7:
        args.insert(1, rng.choice([f for f in files if f.endswith(".toml")] or files))
    return args


def mutate_fits(good, rng):
    data = bytearray(good)
    kind = rng.randrange(4)
    header_end = data.find(b"END" + b" " * 77)
    cards = [bytes(data[i:i + 80]) for i in range(0, header_end, 80)]
    if kind == 0 and cards:  # replace a value
        i = rng.randrange(len(cards))
        key = cards[i][:8]
        val = rng.choice([b"'ten km/s'", b"nan", b"1e300", b"-1e300", b"0", b"-0.0", b"1E-15", b"T", b"''",
                          b"'GLON-SIN'", b"'FREQ'", b"'VRAD'", b"'STOKES'", b"99999999999", b"-1"])
        cards[i] = (key + b"= " + val.rjust(20)).ljust(80)
    elif kind == 1 and cards:  # duplicate or drop a card
        i = rng.randrange(len(cards))
        if rng.random() < 0.5:
            cards.insert(i, cards[i])
        else:
            del cards[i]
    if kind in (0, 1):
        h = b"".join(cards) + b"END".ljust(80)
        h = h.ljust((len(h) + 2879) // 2880 * 2880)
        data = bytearray(h) + data[(header_end + 80 + 2879) // 2880 * 2880:]
    elif kind == 2:  # flip bytes
        for _ in range(rng.randint(1, 20)):
            data[rng.randrange(len(data))] = rng.randrange(256)
    else:  # cut short
        data = data[: rng.randrange(len(data))]
    return bytes(data)


def cube_trial(good, rng, work):
    path = os.path.join(work, "cube.fits")
    with open(path, "wb") as f:
        f.write(mutate_fits(good, rng))
    return ["moments", "--cube", path, "--out", os.path.join(work, "out")]


def fits_trial(inputs, rng, work):
    vel, mom0 = os.path.join(inputs, "good_vel.fits"), os.path.join(inputs, "good_mom0.fits")
    which = rng.choice(["velocity", "intensity"])
    path = os.path.join(work, which + ".fits")
    with open(vel if which == "velocity" else mom0, "rb") as f:
        good = f.read()
    with open(path, "wb") as f:
        f.write(mutate_fits(good, rng))
    if which == "velocity":
        vel = path
    else:
        mom0 = path
    command = rng.choice(["inspect", "inspect", "split", "split", "kinematics", "analyse"])
    if command == "inspect":
        return ["inspect", path]
    if command == "split":
        return ["split", "--intensity", mom0, "--rms", "0.01", "--centre", "150.0,20.0", "--tail-pa", "300",
                "--json", os.path.join(work, "s.json")]
    if command == "kinematics":
        return ["kinematics", "--velocity", vel, "--json", os.path.join(work, "k.json")]
    return ["analyse", "--velocity", vel, "--intensity", mom0, "--rms", "0.01", "--tail-pa", "300", "--draws", "100",
            "--calibrate", "0", "--no-figures", "--out", os.path.join(work, "out")]


TOML_VALUES = ["0", "-1", "1e300", "nan", "inf", "-inf", "true", '""', '"x"', "[]", "{}", "[1, 2]",
               '"' + "n" * 300 + '"', "9223372036854775807", "18446744073709551616", "1979-05-27T07:32:00Z",
               "'''a'''", '"\\u0000"', '"../../etc"', '"/dev/null"', '"good_vel.fits"', "300.0", "2e9"]
TOML_KEYS = ["name", "velocity", "cube", "rms", "seed", "draws", "tail_pa_deg", "centre", "psf_fwhm_arcsec",
             "grow_pixels", "x" * 200, "", "a.b"]
TOML_TABLES = ["[[galaxy]]", "[sample]", "[galaxy]", "[[sample]]", "[", "[[galaxy]", "[moments]"]


def toml_trial(inputs, rng, work):
    lines = ['[sample]', 'name = "fuzz sample"', 'seed = 7', 'draws = 100', 'calibrate = 0', '',
             '[[galaxy]]', 'name = "Mock-A"', 'velocity = "%s"' % os.path.join(inputs, "good_vel.fits"),
             'intensity = "%s"' % os.path.join(inputs, "good_mom0.fits"),
             'intensity_error = "%s"' % os.path.join(inputs, "good_mom0_err.fits"),
             'tail_pa_deg = 300.0', 'tail_pa_err_deg = 10.0', 'distance_mpc = 16.5']
    for _ in range(rng.randint(1, 3)):
        kind = rng.randrange(6)
        i = rng.randrange(len(lines))
        if kind == 0 and "=" in lines[i]:  # replace a value
            lines[i] = lines[i].split("=")[0] + "= " + rng.choice(TOML_VALUES)
        elif kind == 1:  # a line given twice (a key or a table)
            lines.insert(i, lines[i])
        elif kind == 2:  # drop a line
            del lines[i]
        elif kind == 3 and "=" in lines[i]:  # rename a key
            lines[i] = rng.choice(TOML_KEYS) + " =" + lines[i].split("=", 1)[1]
        elif kind == 4:  # cut a line
            lines[i] = lines[i][: rng.randrange(len(lines[i]) + 1)]
        else:  # a table header in between
            lines.insert(i, rng.choice(TOML_TABLES))
    data = bytearray(("\n".join(lines) + "\n").encode())
    if rng.random() < 0.15:
        for _ in range(rng.randint(1, 5)):
            data[rng.randrange(len(data))] = rng.randrange(256)
    if rng.random() < 0.1:
        data = data[: rng.randrange(len(data))]
    path = os.path.join(work, "sample.toml")
    with open(path, "wb") as f:
        f.write(bytes(data))
    return ["run", path, "--threads", "1", "--no-figures", "--out", os.path.join(work, "out")]


def make_cube(path):
    rng = np.random.default_rng(3)
    n, nz = 24, 12
    h = fits.Header()
    for k, v in [("CTYPE1", "RA---SIN"), ("CTYPE2", "DEC--SIN"), ("CTYPE3", "VRAD"), ("CRVAL1", 150.0),
                 ("CRVAL2", 20.0), ("CRVAL3", 7.0e6), ("CDELT1", -1 / 3600), ("CDELT2", 1 / 3600),
                 ("CDELT3", 1.0e4), ("CRPIX1", 12.0), ("CRPIX2", 12.0), ("CRPIX3", 6.0), ("CUNIT3", "m/s"),
                 ("BMAJ", 2 / 3600), ("BMIN", 2 / 3600), ("BPA", 0.0), ("BUNIT", "Jy/beam"), ("RADESYS", "ICRS")]:
        h[k] = v
    z = np.arange(nz)[:, None, None]
    cube = np.exp(-0.5 * ((z - 6) / 2.0) ** 2) * np.ones((nz, n, n)) + rng.normal(0, 0.05, (nz, n, n))
    fits.PrimaryHDU(cube.astype(np.float32), header=h).writeto(path, overwrite=True)


def main(argv):
    exe, inputs, seconds, mode = os.path.abspath(argv[1]), os.path.abspath(argv[2]), float(argv[3]), argv[4]
    if mode not in ("cli", "cube", "fits", "toml"):
        sys.exit("mode must be cli, cube, fits or toml")
    rng = random.Random(int(argv[5]) if len(argv) > 5 else 1)
    subs = {}
    if mode == "cli":
        listed = subprocess.run([exe, "--help"], capture_output=True, text=True).stdout
        for sub in re.findall(r"^\s+([a-z]+)\s", listed.split("SUBCOMMANDS")[-1], re.M):
            # `demo` alone is a valid run of minutes (six galaxies, their
            # calibration), a timeout by design; its settings are in the
            # catalogue and the resource sweep.
            if sub != "demo":
                subs[sub] = options_of(exe, sub)
    base = tempfile.mkdtemp(prefix="fulcrum-fuzz-")
    good = None
    if mode == "cube":
        make_cube(os.path.join(base, "good_cube.fits"))
        good = open(os.path.join(base, "good_cube.fits"), "rb").read()
    start, trials, findings, codes = time.time(), 0, [], {}
    while time.time() - start < seconds:
        work = os.path.join(base, "t%d" % trials)
        os.makedirs(work)
        if mode == "cli":
            args = cli_trial(exe, inputs, subs, rng, work)
        elif mode == "cube":
            args = cube_trial(good, rng, work)
        elif mode == "fits":
            args = fits_trial(inputs, rng, work)
        else:
            args = toml_trial(inputs, rng, work)
        code, err = run(exe, args, work)
        codes[code] = codes.get(code, 0) + 1
        bad = judge(code, err, os.path.join(work, "out"))
        if bad:
            findings.append((args, bad))
            keep = os.path.join(base, "finding-%d" % len(findings))
            shutil.copytree(work, keep)
        else:
            shutil.rmtree(work)
        trials += 1
    print("%s: %d trials in %.0f s; exit statuses %s; %d findings (kept under %s)" %
          (mode, trials, time.time() - start, dict(sorted(codes.items(), key=str)), len(findings), base))
    for args, bad in findings[:15]:
        print("  FINDING:", bad[:300], "\n    args:", " ".join(a[:80] for a in args))
    return 1 if findings else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
