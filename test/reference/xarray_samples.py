"""Writes a small sample file the way an analyst would with xarray (Debian python3-xarray over python3-netcdf4):
times from a pandas DatetimeIndex, which xarray's default encoding stores as int64 "<unit> since <first time>"
with the coarsest unit that holds every time exactly (here microseconds or nanoseconds, given by the second
argument: us or ns); range on (time, gate), per ray; radial velocity packed as int16 (scale_factor 0.01,
_FillValue -32768) with NaN holes; azimuth and elevation in degrees. Prints what the file holds as JSON, decoded by
pandas and numpy: Unix seconds per ray, the stored units of time, the holes (ray, gate), and the velocities.

Usage: python3 test/reference/xarray_samples.py OUT.nc us|ns
"""
import json
import sys

import netCDF4
import numpy as np
import pandas as pd
import xarray as xr

out, unit = sys.argv[1], sys.argv[2]
R, G = 6, 3
# 2026-05-09T10:07:43.6738Z plus irregular steps; with "ns" a few nanoseconds more, so microseconds cannot hold them.
base = np.int64(1778321263673800000)
steps = np.array([0, 413_250_000, 1_019_700_000, 1_377_125_000, 1_905_000_000, 2_333_333_000], dtype="i8")
ns = base + steps + (np.arange(R, dtype="i8") * 7 if unit == "ns" else 0)
times = pd.to_datetime(ns, unit="ns")
vel = (np.arange(R * G).reshape(R, G) * 0.25 - 2.0)
vel[1, 2] = np.nan
vel[4, 0] = np.nan
ds = xr.Dataset(
    {
        "azimuth": (("time",), np.linspace(10.0, 60.0, R), {"units": "degree"}),
        "elevation": (("time",), np.full(R, 4.5), {"units": "degree"}),
        "range": (("time", "gate"), 500.0 + 15.0 * np.arange(G)[None, :] + np.arange(R)[:, None], {"units": "m"}),
        "radial_velocity": (("time", "gate"), vel, {"units": "m s-1", "standard_name": "radial_velocity_of_scatterers_away_from_instrument"}),
    },
    coords={"time": times},
)
ds.to_netcdf(out, format="NETCDF4", encoding={"radial_velocity": {"dtype": "i2", "scale_factor": 0.01, "_FillValue": -32768}})
with netCDF4.Dataset(out) as d:
    units = d["time"].units
unix = ((times - pd.Timestamp("1970-01-01")) / pd.Timedelta(1, "s")).tolist()
holes = [[int(i), int(j)] for i, j in zip(*np.nonzero(np.isnan(vel)))]
print(json.dumps({"units": units, "unix": unix, "holes": holes, "vel": np.where(np.isnan(vel), None, vel).tolist()}))
