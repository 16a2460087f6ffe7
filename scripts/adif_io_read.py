#!/usr/bin/env python3
"""Reads an ADI file with the independent Python package adif-io (PyPI) and prints what it
found as JSON: {"reader": "adif-io VERSION", "headers": {...}, "records": [{...}, ...]}.

Used by tests/adif.rs: once to make fixtures/adif/nearsky-export.adif-io.json from
fixtures/adif/nearsky-export.adi, and live in CI when NEARSKY_ADIF_IO_PYTHON names a Python
that has the package.
"""
import json
import sys
from importlib.metadata import version

import adif_io

# newline="" keeps CR LF inside NOTES as written (lengths count both characters).
with open(sys.argv[1], encoding="ascii", newline="") as f:
    qsos, headers = adif_io.read_from_string(f.read())
print(json.dumps({
    "reader": f"adif-io {version('adif-io')}",
    "headers": dict(headers),
    "records": [dict(q) for q in qsos],
}, indent=1, sort_keys=True))
