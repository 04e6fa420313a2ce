"""Reference check: the sample products of `fulcrum run` against the
per-galaxy report.json files.

* robustness.ecsv and robustness.fits read by astropy.table.Table.read
  (python3-astropy): every numeric column whose description ends with
  "[report.json: PATH]" must equal, galaxy by galaxy, the number at PATH in
  that galaxy's report.json, exactly (shortest round-trip decimals in ECSV,
  binary float64 in FITS); null in JSON is NaN in the table.
* every report.json is checked against docs/report.schema.json with a small
  validator written here for the subset of JSON Schema the file uses
  (type, required, properties, items, enum, minItems/maxItems, minimum,
  maximum, pattern): no schema library is assumed to be installed.
Usage: check_sample_products.py RUN_DIR SCHEMA
"""
import json
import math
import os
import re
import sys
import warnings

warnings.simplefilter("ignore")
import numpy as np
from astropy.table import Table

run, schema_path = sys.argv[1], sys.argv[2]
errors = []


def at_path(j, path, column=None):
    """PATH as the table descriptions write it: keys joined by '.', a list
    index [N], or [id=NAME] (the list entry whose id is NAME); [id=@COL]
    takes NAME from the table's column COL in the same row (`column`)."""
    if path.startswith("centres[adopted]."):
        # The adopted centre's entry of the centres list.
        key = path.split(".", 1)[1]
        for c in j.get("centres", []):
            if c.get("id") == j.get("adopted_centre"):
                return c.get(key)
        return None
    cur = j
    for part in path.split("."):
        by_id = re.match(r"^(\w+)\[id=(@?[\w.+-]+)\]$", part)
        if by_id:
            ident = by_id.group(2)
            if ident.startswith("@"):
                ident = column(ident[1:]) if column else None
            if not isinstance(cur, dict) or not isinstance(cur.get(by_id.group(1)), list):
                return None
            hits = [e for e in cur[by_id.group(1)] if isinstance(e, dict) and e.get("id") == ident]
            if not hits:
                return None
            cur = hits[0]
            continue
        m = re.match(r"^(\w+)(?:\[(\d+)\])?$", part)
        if not m or not isinstance(cur, dict) or m.group(1) not in cur:
            return None
        cur = cur[m.group(1)]
        if m.group(2) is not None:
            if not isinstance(cur, list) or len(cur) <= int(m.group(2)):
                return None
            cur = cur[int(m.group(2))]
    return cur


reports = {}
for name in sorted(os.listdir(run)):
    p = os.path.join(run, name, "report.json")
    if os.path.isfile(p):
        reports[name] = json.load(open(p))

for kind in ("ecsv", "fits"):
    t = Table.read(os.path.join(run, "robustness." + kind))
    names = [str(g).strip() for g in t["galaxy"]]
    if sorted(names) != sorted(reports):
        errors.append(f"{kind}: galaxies {names} != {sorted(reports)}")
        continue
    ecsv = Table.read(os.path.join(run, "robustness.ecsv"))
    checked = 0
    for col in ecsv.colnames:
        desc = ecsv[col].description or ""
        m = re.search(r"\[report\.json: ([\w.\[\]=@+-]+)\]$", desc)
        if not m:
            continue
        path = m.group(1)
        for i, g in enumerate(names):
            def column(name, i=i):
                v = ecsv[name][i]
                return (v.decode() if isinstance(v, bytes) else str(v)).strip()
            want = at_path(reports[g], path, column)
            got = t[col][i]
            if got is np.ma.masked:
                got = float("nan")
            got = got.item() if hasattr(got, "item") else got
            if isinstance(got, (bytes, str)):
                got = (got.decode() if isinstance(got, bytes) else got).rstrip(" ")
                ok = got == (want if isinstance(want, str) else "")
            elif want is None:
                ok = isinstance(got, float) and math.isnan(got) or (isinstance(got, int) and got == 0)
            else:
                ok = got == want
            checked += 1
            if not ok:
                errors.append(f"{kind}: {g}: {col}: table {got!r} != report.json {path} = {want!r}")
    print(f"{kind}: {checked} cells compared with report.json")


def validate(value, schema, where):
    t = schema.get("type")
    if t is not None:
        types = t if isinstance(t, list) else [t]
        okt = False
        for ty in types:
            if ty == "null" and value is None: okt = True
            if ty == "object" and isinstance(value, dict): okt = True
            if ty == "array" and isinstance(value, list): okt = True
            if ty == "string" and isinstance(value, str): okt = True
            if ty == "boolean" and isinstance(value, bool): okt = True
            if ty == "integer" and isinstance(value, int) and not isinstance(value, bool): okt = True
            if ty == "number" and isinstance(value, (int, float)) and not isinstance(value, bool): okt = True
        if not okt:
            errors.append(f"schema: {where}: {value!r} is not of type {t}")
            return
    if "enum" in schema and value not in schema["enum"]:
        errors.append(f"schema: {where}: {value!r} not in {schema['enum']}")
    if isinstance(value, str) and "pattern" in schema and not re.search(schema["pattern"], value):
        errors.append(f"schema: {where}: {value!r} does not match {schema['pattern']}")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        if "minimum" in schema and value < schema["minimum"]:
            errors.append(f"schema: {where}: {value} < {schema['minimum']}")
        if "maximum" in schema and value > schema["maximum"]:
            errors.append(f"schema: {where}: {value} > {schema['maximum']}")
    if isinstance(value, dict):
        for k in schema.get("required", []):
            if k not in value:
                errors.append(f"schema: {where}: missing required key '{k}'")
        for k, sub in schema.get("properties", {}).items():
            if k in value:
                validate(value[k], sub, where + "." + k)
    if isinstance(value, list):
        if "minItems" in schema and len(value) < schema["minItems"]:
            errors.append(f"schema: {where}: fewer than {schema['minItems']} items")
        if "maxItems" in schema and len(value) > schema["maxItems"]:
            errors.append(f"schema: {where}: more than {schema['maxItems']} items")
        if "items" in schema:
            for i, v in enumerate(value):
                validate(v, schema["items"], f"{where}[{i}]")


schema = json.load(open(schema_path))
for g, r in reports.items():
    validate(r, schema, g)
print(f"schema: {len(reports)} reports validated")
for e in errors[:30]:
    print(e)
print("sample products:", "FAIL" if errors else "ok")
sys.exit(1 if errors else 0)
