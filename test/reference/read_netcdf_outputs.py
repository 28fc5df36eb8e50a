"""Reads wakeplane's NetCDF outputs with xarray (Debian python3-xarray over python3-netcdf4) and prints what the
output test compares with the CSV tables, as JSON.

Usage: python3 test/reference/read_netcdf_outputs.py RUN_DIR PLANE
"""
import json
import sys

import numpy as np
import xarray as xr

run, plane = sys.argv[1], sys.argv[2]


def values(a):
    return [None if not np.isfinite(x) else float(x) for x in np.asarray(a, dtype="f8").ravel()]


out = {}
with xr.open_dataset(f"{run}/fields/{plane}.nc") as ds:
    out["conventions"] = ds.attrs["Conventions"]
    out["dims"] = {k: int(v) for k, v in ds.sizes.items()}
    out["times"] = [str(t)[:19] for t in ds["window"].values]  # decoded by xarray from "seconds since 1970-01-01"
    out["bounds_start"] = [str(t)[:19] for t in ds["window_bounds"].values[:, 0]]
    out["window_index"] = [int(x) for x in ds["window_index"].values]
    out["y"] = values(ds["y"])
    out["z"] = values(ds["z"])
    for k in ["u", "v", "w", "u_se", "w_se", "w_amplification", "eastward_wind", "northward_wind", "longitude", "latitude", "direction"]:
        out[k] = values(ds[k])
    out["w_mask"] = [int(x) for x in ds["w_mask"].values.ravel()]
    out["flag_meanings"] = ds["w_mask"].attrs["flag_meanings"].split()
    out["w_standard_name"] = ds["w"].attrs.get("standard_name")
    out["w_se_standard_name"] = ds["w_se"].attrs.get("standard_name")
    out["eastward_standard_name"] = ds["eastward_wind"].attrs.get("standard_name")
with xr.open_dataset(f"{run}/wake/wake_table.nc") as ds:
    out["wake_start"] = [str(t)[:19] for t in ds["start"].values]
    out["wake_yc"] = values(ds["yc"])
    out["wake_flag"] = [str(x) for x in ds["flag"].values]
with xr.open_dataset(f"{run}/wake/profiles.nc") as ds:
    out["profiles_u"] = values(ds["u"])
    out["profiles_cut"] = [str(x) for x in ds["cut"].values]
print(json.dumps(out))
