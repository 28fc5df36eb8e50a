"""Compares wakeplane's per-window field NetCDF (fields/<plane>.nc) with its CSV field tables, reading the NetCDF
with xarray (Debian python3-xarray over python3-netcdf4) and the CSV with the csv module, matched by the names in
the run's dictionary.json. Every variable on (window, z, y) that has a CSV column is compared cell by cell: numbers
within half a unit of the CSV's last written digit (plus float32 rounding), masks by their flag meanings, empty
CSV cells against NaN. Prints JSON: windows in each, the variables compared, cells compared, and the mismatches;
and, when the run wrote wake/wake_table.nc, the wake table's dictionary names (netcdfVariable in dictionary.json)
that the file lacks and the file's variables the dictionary does not name.

Usage: python3 test/reference/compare_field_netcdf.py RUN_DIR PLANE
"""
import csv
import glob
import json
import sys

import numpy as np
import xarray as xr

run, plane = sys.argv[1], sys.argv[2]
d = json.load(open(f"{run}/dictionary.json"))
cols = {c["name"]: c["header"] for t in d["tables"] if t["id"] == "field-table" for c in t["columns"]}
files = sorted(glob.glob(f"{run}/fields/{plane}_w*.csv"))
tables = [list(csv.DictReader(open(f))) for f in files]
mismatches, compared, cells = [], [], 0
with xr.open_dataset(f"{run}/fields/{plane}.nc") as ds:
    ys, zs = ds["y"].values, ds["z"].values
    for name, v in ds.data_vars.items():
        if v.dims != ("window", "z", "y") or name not in cols:
            continue
        header = cols[name]
        meanings = None
        if "flag_meanings" in v.attrs:
            meanings = dict(zip([int(q) for q in np.atleast_1d(v.attrs["flag_values"])], v.attrs["flag_meanings"].split()))
        for k, rows in enumerate(tables):
            a = v.values[k]
            for r in rows:
                j = int(np.argmin(abs(ys - float(r["y_m"]))))
                i = int(np.argmin(abs(zs - float(r["z_m"]))))
                text, x = r[header], a[i, j]
                cells += 1
                if meanings is not None:
                    if (text or meanings.get(0)) != meanings.get(int(x)):
                        mismatches.append([name, k, r["y_m"], r["z_m"], text, int(x)])
                    continue
                if text == "":
                    if np.isfinite(x):
                        mismatches.append([name, k, r["y_m"], r["z_m"], text, float(x)])
                    continue
                c = float(text)
                parts = text.lstrip("-").lower().split("e")[0].split(".")
                unit = 10.0 ** -(len(parts[1]) if len(parts) > 1 else 0)
                if "e" in text.lower():
                    unit *= 10.0 ** int(text.lower().split("e")[1])
                # half a unit of the last written digit; float32 keeps 2^-24 relative
                if not abs(c - float(x)) <= 0.5 * unit * 1.0001 + 6e-8 * abs(c):
                    mismatches.append([name, k, r["y_m"], r["z_m"], text, float(x)])
        compared.append(name)
    nc_windows = int(ds.sizes["window"])
wake = None
if glob.glob(f"{run}/wake/wake_table.nc"):
    named = {c["netcdfVariable"] for t in d["tables"] if t["id"] == "wake-table" for c in t["columns"] if c["netcdfVariable"]}
    with xr.open_dataset(f"{run}/wake/wake_table.nc", decode_times=False) as w:
        present = set(w.variables) - set(w.dims)
    wake = {"missing": sorted(named - present), "extra": sorted(present - named), "named": len(named)}
print(json.dumps({"wake_table": wake, "windows_nc": nc_windows, "windows_csv": len(files), "compared": compared, "cells": cells, "mismatches": mismatches[:20], "mismatch_count": len(mismatches)}))
