"""Independent reference for the table-reader tests: astropy (Debian python3-astropy).

Reads one JSON request on stdin and prints one JSON answer:
  {"op": "units", "items": [[value, from_unit, to_unit], ...]}
      -> {"values": [...]}  (astropy.units conversion)
  {"op": "read_ecsv", "path": P}
      -> {"columns": [{"name", "unit", "dtype"}], "rows": [[...]]}  (masked -> null)
  {"op": "write", "columns": [{"name", "unit", "datatype"}], "rows": [[...]],
   "ecsv_comma": P1, "ecsv_space": P2, "votable": P3}
      -> {"astropy_version": ...}  (files written by astropy's own writers)
"""
import json
import math
import sys

import astropy
import astropy.units as u
from astropy.io import votable
from astropy.table import Table


def to_json_value(v):
    if v is None or v is getattr(__import__("numpy").ma, "masked"):
        return None
    if hasattr(v, "item"):
        v = v.item()
    if isinstance(v, bytes):
        v = v.decode("utf-8")
    if isinstance(v, float) and not math.isfinite(v):
        return str(v)
    return v


def main():
    req = json.load(sys.stdin)
    op = req["op"]
    if op == "units":
        out = [float((value * u.Unit(a)).to(u.Unit(b)).value) for value, a, b in req["items"]]
        json.dump({"values": out}, sys.stdout)
    elif op == "read_ecsv":
        t = Table.read(req["path"], format="ascii.ecsv")
        cols = [{"name": c.name, "unit": None if c.unit is None else c.unit.to_string(), "dtype": str(c.dtype)} for c in t.itercols()]
        rows = []
        for r in t:
            row = []
            for c in t.colnames:
                masked = hasattr(t[c], "mask") and bool(t[c].mask[r.index])
                row.append(None if masked else to_json_value(r[c]))
            rows.append(row)
        json.dump({"columns": cols, "rows": rows}, sys.stdout)
    elif op == "write":
        names = [c["name"] for c in req["columns"]]
        data = []
        for i, c in enumerate(req["columns"]):
            values = [row[i] for row in req["rows"]]
            if c["datatype"] == "string":
                data.append(values)
            else:
                data.append([float(v) for v in values])
        t = Table(data, names=names)
        for c in req["columns"]:
            if c.get("unit"):
                t[c["name"]].unit = u.Unit(c["unit"])
        t.write(req["ecsv_comma"], format="ascii.ecsv", delimiter=",", overwrite=True)
        t.write(req["ecsv_space"], format="ascii.ecsv", overwrite=True)
        vt = votable.from_table(t)
        vt.to_xml(req["votable"], tabledata_format="tabledata")
        json.dump({"astropy_version": astropy.__version__}, sys.stdout)
    else:
        raise SystemExit(f"unknown op {op}")


main()
