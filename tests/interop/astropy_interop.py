"""Independent implementation for the interoperability tests: astropy
(Debian python3-astropy: astropy.table, astropy.io.ascii ECSV/CSV writers and
readers, astropy.io.votable, astropy.units).

Reads one JSON request on stdin and prints one JSON answer.

  {"op": "write_release", "src": DIR, "out": DIR, "tables": [NAME, ...],
   "format": "ecsv" | "ecsv_comma" | "csv" | "votable",
   "units": {TABLE: {COLUMN: UNIT}}}
      Reads each DIR/NAME.ecsv with astropy, converts the listed columns to the
      given units with astropy.units, and writes OUT/NAME.<ext> with astropy's
      own writer (ECSV with its default space delimiter or a comma; plain CSV;
      VOTable with the TABLEDATA serialisation).
      -> {"astropy_version": ..., "files": [...]}

  {"op": "read_tables", "files": [PATH, ...], "format": "ecsv" | "csv",
   "units": [[UNIT_A, UNIT_B], ...]}
      Reads each file with astropy and returns its columns (name, unit as
      astropy writes it, dtype kind) and cells (masked -> null; floats as
      numbers, or the strings "nan", "inf", "-inf"); also says for each pair of
      unit strings whether astropy takes them as the same unit.
      -> {"tables": [{"columns": [...], "rows": [[...]]}], "same_units": [bool]}
"""
import json
import math
import os
import sys

import astropy
import astropy.units as u
import numpy as np
from astropy.io import votable
from astropy.table import Column, MaskedColumn, Table


def cell(value, masked):
    if masked:
        return None
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, (np.floating, float)):
        v = float(value)
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return v
    if isinstance(value, bytes):
        return value.decode("utf-8")
    return str(value)


def write_release(req):
    os.makedirs(req["out"], exist_ok=True)
    files = []
    for name in req["tables"]:
        t = Table.read(os.path.join(req["src"], name + ".ecsv"), format="ascii.ecsv")
        for column, unit in req.get("units", {}).get(name, {}).items():
            old = t[column]
            values = old.quantity.to(u.Unit(unit)).value
            # Keep masked (absent) cells absent: a Quantity has no mask of its own.
            mask = getattr(old, "mask", None)
            new = MaskedColumn(values, mask=mask) if mask is not None else Column(values)
            new.unit = u.Unit(unit)
            new.description = old.description
            t[column] = new
        fmt = req["format"]
        if fmt == "ecsv":
            path = os.path.join(req["out"], name + ".ecsv")
            t.write(path, format="ascii.ecsv", overwrite=True)
        elif fmt == "ecsv_comma":
            path = os.path.join(req["out"], name + ".ecsv")
            t.write(path, format="ascii.ecsv", delimiter=",", overwrite=True)
        elif fmt == "csv":
            path = os.path.join(req["out"], name + ".csv")
            t.write(path, format="ascii.csv", overwrite=True)
        elif fmt == "votable":
            path = os.path.join(req["out"], name + ".vot")
            votable.from_table(t).to_xml(path, tabledata_format="tabledata")
        else:
            raise SystemExit(f"unknown format {fmt}")
        files.append(path)
    return {"astropy_version": astropy.__version__, "files": files}


def read_tables(req):
    fmt = {"ecsv": "ascii.ecsv", "csv": "ascii.csv"}[req["format"]]
    tables = []
    for path in req["files"]:
        t = Table.read(path, format=fmt)
        columns = [
            {"name": c.name, "unit": None if c.unit is None else c.unit.to_string(), "kind": c.dtype.kind}
            for c in t.itercols()
        ]
        masks = {c: getattr(t[c], "mask", None) for c in t.colnames}
        rows = []
        for i in range(len(t)):
            rows.append([cell(t[c][i], bool(masks[c][i]) if masks[c] is not None else False) for c in t.colnames])
        tables.append({"columns": columns, "rows": rows})
    same = [u.Unit(a) == u.Unit(b) for a, b in req.get("units", [])]
    return {"astropy_version": astropy.__version__, "tables": tables, "same_units": same}


def main():
    req = json.load(sys.stdin)
    op = req["op"]
    if op == "write_release":
        answer = write_release(req)
    elif op == "read_tables":
        answer = read_tables(req)
    else:
        raise SystemExit(f"unknown op {op}")
    json.dump(answer, sys.stdout)


main()
