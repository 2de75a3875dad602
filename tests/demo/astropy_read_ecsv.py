"""Read an ECSV file with astropy (Debian python3-astropy) and print what it
understood as JSON: per column its name, dtype kind, unit, description and
values (masked cells as null, non-finite floats as the strings nan/inf/-inf),
plus the table metadata. Used by tests/demo/writeEcsv.test.ts to check the
project's ECSV writer against an independent reader.

Usage: python3 astropy_read_ecsv.py FILE
"""
import json
import math
import sys

import astropy
import numpy as np
from astropy.table import Table


def cell(value, masked):
    if masked:
        return None
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (np.floating, float)):
        v = float(value)
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        if v == 0 and math.copysign(1.0, v) < 0:
            return "-0"
        return v
    return str(value)


def main():
    table = Table.read(sys.argv[1], format="ascii.ecsv")
    columns = []
    for name in table.colnames:
        col = table[name]
        mask = getattr(col, "mask", None)
        values = [cell(col[i], bool(mask[i]) if mask is not None else False) for i in range(len(col))]
        columns.append(
            {
                "name": name,
                "kind": col.dtype.kind,
                "unit": None if col.unit is None else str(col.unit),
                "description": col.description,
                "values": values,
            }
        )
    json.dump({"astropy_version": astropy.__version__, "columns": columns, "meta": dict(table.meta)}, sys.stdout)


main()
