"""Reference check: fulcrum's ECSV, CSV and FITS tables as read by astropy.

Source: astropy.table.Table.read (python3-astropy) for the ECSV 1.0 format
and FITS binary tables (TUNITn/TTYPEn), Python's csv module for the CSV.
Tolerance: exact equality of every double (the writers use shortest
round-trip decimals; FITS holds the binary float64).
Usage: check_table.py DIR   (DIR holds t.ecsv, t.csv, t.fits, expect.json)
"""
import csv
import json
import math
import os
import sys
import warnings

warnings.simplefilter("ignore")
from astropy.table import Table
import astropy.units as u
import numpy as np

d = sys.argv[1]
expect = json.load(open(os.path.join(d, "expect.json")))
errors = []


def same(a, b):
    if b is None:
        return isinstance(a, float) and math.isnan(a)
    if isinstance(b, str):
        return str(a) == b
    return a == b


for kind in ("ecsv", "fits"):
    t = Table.read(os.path.join(d, "t." + kind))
    if t.colnames != expect["order"]:
        errors.append(f"{kind}: column names {t.colnames} != {expect['order']}")
        continue
    for name, col in expect["columns"].items():
        c = t[name]
        unit = "" if c.unit is None else c.unit.to_string()
        want = "" if not col["unit"] else u.Unit(col["unit"]).to_string()
        if unit != want:
            errors.append(f"{kind}: {name}: unit {unit!r} != {want!r}")
        if kind == "ecsv" and (c.description or "") != col["description"]:
            errors.append(f"{kind}: {name}: description {c.description!r}")
        for i, v in enumerate(col["values"]):
            got = c[i]
            if got is np.ma.masked:  # astropy masks NaN floats read from FITS
                got = float("nan")
            got = got.item() if hasattr(got, "item") else got
            if kind == "fits" and isinstance(got, str):
                # FITS character fields are blank-padded to the column width;
                # trailing blanks are not part of the value (FITS standard).
                got = got.rstrip(" ")
            if not same(got, v):
                errors.append(f"{kind}: {name}[{i}]: {got!r} != {v!r}")

# CSV: units line, header, rows.
with open(os.path.join(d, "t.csv")) as f:
    lines = [l for l in f]
units_line = [l for l in lines if l.startswith("# units:")]
rows = list(csv.reader([l for l in lines if not l.startswith("#")]))
if not units_line:
    errors.append("csv: no units line")
if rows[0] != expect["order"]:
    errors.append(f"csv: header {rows[0]}")
for j, name in enumerate(expect["order"]):
    for i, v in enumerate(expect["columns"][name]["values"]):
        cell = rows[1 + i][j]
        if v is None:
            ok = cell == ""
        elif isinstance(v, str):
            ok = cell == v
        elif isinstance(v, int):
            ok = int(cell) == v
        else:
            ok = float(cell) == v
        if not ok:
            errors.append(f"csv: {name}[{i}]: {cell!r} != {v!r}")

for e in errors:
    print(e)
print("checked ecsv, fits, csv:", "FAIL" if errors else "ok")
sys.exit(1 if errors else 0)
