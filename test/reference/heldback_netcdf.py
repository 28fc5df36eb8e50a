"""Scanning-lidar sample files in NetCDF-4 written outside wakeplane (python3-netcdf4 and xarray), each instrument
in its own conventions, with the same samples as plain CSV, as a reviewer's held-back case.

Usage: python3 test/reference/heldback_netcdf.py OUTDIR [--minutes M]
Writes OUTDIR/data/{west,east,back}.nc, OUTDIR/data/{west,east,back}.csv (the same unmasked samples, decoded here
by hand: the reference), OUTDIR/data/back.csv.gz, OUTDIR/campaign-nc.yaml, OUTDIR/campaign-csv.yaml,
OUTDIR/campaign-gz.yaml (JSON text) and OUTDIR/expected.json (masked samples per instrument, samples per file).

Invented site as in heldback_steering.py: turbine at the origin (hub 100 m, rotor 120 m), wind from 270 degrees
(rotor frame x = east, y = north), cross plane at x = 600 m. Flow u = 8 (z / 100)^0.14 (1 - 0.35 exp(-((y - 10)^2 +
(z - 100)^2) / (2 * 45^2))), v = w = 0. Each instrument makes 2 rays a second (irregular times), each ray aimed at a
point of a Lissajous path over the plane; radial velocity at every gate = u along the beam (+ N(0, 0.1) m/s).

Files (each a different set of conventions):
- west.nc (netCDF4): time float64 "seconds since 2000-01-01 00:00:00 UTC"; azimuth, elevation float64 degrees;
  range float64 m on the gates, shared by all rays (21 gates 280-680 m); radial_velocity float32 m s-1 with the
  "away" standard name, _FillValue -999 on 1 % of the samples; cnr float32 dB; chunks (64, 21), deflate 4 + shuffle.
- east.nc (netCDF4): names t, az, el, rng, dv, snr (mapped in the campaign); angles in radians; rng in km on
  (time, range), per ray (9 gates, 12 m apart, around the aimed point); t float64 "days since 2026-05-09";
  dv float32 with the "toward" standard name and missing_value -9999 (no _FillValue) on 1 % of the samples, plus one
  ray whose azimuth is the fill value; snr int16 packed (scale_factor 0.01, add_offset -20); chunks (17, 3),
  deflate 9.
- back.nc (xarray from a pandas DatetimeIndex, so time is int64 "nanoseconds since ..." as xarray chooses);
  dims (time, gate); range on (time, gate), per ray, m; radial_velocity packed int16 (scale_factor 0.01,
  _FillValue -32768) with NaN on 1 % of the samples; azimuth/elevation in degrees; contiguous, not compressed.
"""
import gzip
import json
import math
import os
import sys

import netCDF4
import numpy as np
import pandas as pd
import xarray as xr

out = sys.argv[1]
minutes = float(sys.argv[sys.argv.index("--minutes") + 1]) if "--minutes" in sys.argv else 20.0
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(512)
T0 = 1778321263.6  # 2026-05-09T10:07:43.6Z
DUR = minutes * 60
PLANE_X, HUB = 600.0, 100.0


def wind(y, z):
    g = np.exp(-((y - 10.0) ** 2 + (z - HUB) ** 2) / (2 * 45.0 ** 2))
    return 8.0 * (np.maximum(z, 1.0) / HUB) ** 0.14 * (1 - 0.35 * g)


def rays(pos, periods, ph):
    """Ray times, azimuth, elevation (deg) and the aimed point's range, for one instrument."""
    t = []
    s = T0 + rng.uniform(0, 0.5)
    while s < T0 + DUR:
        t.append(s)
        s += rng.uniform(0.3, 0.7)
    t = np.array(t)
    y = 170 * np.sin(2 * np.pi * t / periods[0] + ph)
    z = 100 + 88 * np.sin(2 * np.pi * t / periods[1])
    x = PLANE_X + rng.uniform(-10, 10, len(t))
    de, dn, du = x - pos[0], y - pos[1], z - pos[2]
    r = np.sqrt(de * de + dn * dn + du * du)
    az = (np.degrees(np.arctan2(de, dn)) + 360) % 360
    el = np.degrees(np.arcsin(du / r))
    return t, az, el, r


def vr_at(pos, az, el, ranges):
    """Radial velocity (positive away) at each gate: u (eastward) along the beam, plus noise."""
    a, e = np.radians(az)[:, None], np.radians(el)[:, None]
    ne, nn, nu = np.sin(a) * np.cos(e), np.cos(a) * np.cos(e), np.sin(e)
    y = pos[1] + ranges * nn
    z = pos[2] + ranges * nu
    return wind(y, z) * ne + rng.normal(0, 0.1, ranges.shape)


def write_csv(name, t, az, el, R, vr, cnr, keep):
    lines = ["time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db"]
    for i in range(len(t)):
        for g in range(R.shape[1]):
            if keep[i, g]:
                lines.append(f"{t[i]!r},{name},{az[i]!r},{el[i]!r},{R[i, g]!r},{vr[i, g]!r},{cnr[i, g]!r}")
    with open(os.path.join(out, "data", f"{name}.csv"), "w") as f:
        f.write("\n".join(lines) + "\n")
    return len(lines) - 1


expected = {}
# ---- west: netCDF4, standard names, shared gates.
pos = (450.0, 430.0, 2.0)
t, az, el, _ = rays(pos, (41.3, 12.7), 0.3)
gates = np.arange(280.0, 681.0, 20.0)
R = np.broadcast_to(gates, (len(t), len(gates)))
vr = vr_at(pos, az, el, R).astype("f4")
cnr = np.full(R.shape, -11.5, dtype="f4")
mask = rng.uniform(size=R.shape) < 0.01
EPOCH2000 = 946684800.0
with netCDF4.Dataset(os.path.join(out, "data", "west.nc"), "w", format="NETCDF4") as ds:
    ds.createDimension("time", None)
    ds.createDimension("range", len(gates))
    v = ds.createVariable("time", "f8", ("time",))
    v.units, v.standard_name = "seconds since 2000-01-01 00:00:00 UTC", "time"
    v[:] = t - EPOCH2000
    v = ds.createVariable("range", "f8", ("range",))
    v.units = "m"
    v[:] = gates
    for n, a in (("azimuth", az), ("elevation", el)):
        v = ds.createVariable(n, "f8", ("time",))
        v.units = "degrees"
        v[:] = a
    v = ds.createVariable("radial_velocity", "f4", ("time", "range"), zlib=True, complevel=4, shuffle=True,
                          chunksizes=(64, len(gates)), fill_value=-999.0)
    v.units, v.standard_name = "m s-1", "radial_velocity_of_scatterers_away_from_instrument"
    v[:] = np.ma.masked_array(vr, mask=mask)
    v = ds.createVariable("cnr", "f4", ("time", "range"), zlib=True, chunksizes=(64, len(gates)))
    v.units = "dB"
    v[:] = cnr
# decoded by hand: seconds since 2000 + 946684800 (float64 sums, as stored)
with netCDF4.Dataset(os.path.join(out, "data", "west.nc")) as ds:
    t_dec = ds["time"][:].data + EPOCH2000
expected["west"] = {"masked": int(mask.sum()), "samples": int(R.size),
                    "csv": write_csv("west", t_dec, az, el, R, vr.astype("f8"), cnr.astype("f8"), ~mask)}

# ---- east: netCDF4, mapped names, radians, km, days, toward, per-ray ranges, missing_value, packed snr.
pos = (780.0, -400.0, 1.0)
t, az, el, rf = rays(pos, (37.9, 13.9), 1.9)
R = rf[:, None] + 12.0 * np.arange(-4, 5)[None, :]
vr = vr_at(pos, az, el, R)
cnr_stored = np.round((-9.0 - 0.01 * (R - 600) + 20) / 0.01).astype("i2")
mask = rng.uniform(size=R.shape) < 0.01
bad_ray = len(t) // 3
DAY0 = 1778284800.0  # 2026-05-09T00:00:00Z
az_rad = np.radians(az)
el_rad = np.radians(el)
R_km = (R / 1000.0).astype("f8")
dv_stored = (-vr).astype("f4")  # toward positive
t_days = (t - DAY0) / 86400.0
with netCDF4.Dataset(os.path.join(out, "data", "east.nc"), "w", format="NETCDF4") as ds:
    ds.createDimension("time", len(t))
    ds.createDimension("range", R.shape[1])
    v = ds.createVariable("t", "f8", ("time",))
    v.units = "days since 2026-05-09"
    v[:] = t_days
    v = ds.createVariable("az", "f8", ("time",), fill_value=-1e30)
    v.units = "radians"
    v[:] = np.ma.masked_array(az_rad, mask=np.arange(len(t)) == bad_ray)
    v = ds.createVariable("el", "f8", ("time",))
    v.units = "rad"
    v[:] = el_rad
    v = ds.createVariable("rng", "f8", ("time", "range"), zlib=True, complevel=9, chunksizes=(17, 3))
    v.units = "km"
    v[:] = R_km
    v = ds.createVariable("dv", "f4", ("time", "range"), zlib=True, complevel=9, chunksizes=(17, 3), fill_value=False)
    v.units, v.standard_name, v.missing_value = "m s-1", "radial_velocity_of_scatterers_toward_instrument", np.float32(-9999.0)
    v.set_auto_maskandscale(False)
    st = dv_stored.copy()
    st[mask] = -9999.0
    v[:] = st
    v = ds.createVariable("snr", "i2", ("time", "range"), zlib=True, complevel=9, chunksizes=(17, 3))
    v.units, v.scale_factor, v.add_offset = "dB", 0.01, -20.0
    v.set_auto_maskandscale(False)
    v[:] = cnr_stored
# decoded by hand: Unix = days * 86400 + DAY0; degrees = rad * 180 / pi; m = km * 1000; away = -stored;
# dB = stored * 0.01 - 20. The CSV carries these (17 significant digits).
t_dec = t_days * 86400.0 + DAY0
keep = ~mask
keep[bad_ray, :] = False
expected["east"] = {"masked": int(mask.sum() + R.shape[1] - mask[bad_ray].sum()), "samples": int(R.size),
                    "csv": write_csv("east", t_dec, az_rad * (180 / math.pi), el_rad * (180 / math.pi), R_km * 1000.0,
                                     -dv_stored.astype("f8"), cnr_stored * 0.01 - 20.0, keep)}

# ---- back: xarray from pandas datetimes, packed int16 velocity, NaN holes, per-ray ranges.
pos = (1250.0, 60.0, 3.0)
t, az, el, rf = rays(pos, (29.3, 9.7), 4.1)
t = np.round(t * 1e4) / 1e4  # 0.1 ms times: xarray then stores int64 "microseconds since ..."
R = rf[:, None] + 15.0 * np.arange(-3, 4)[None, :]
vr = vr_at(pos, az, el, R)
mask = rng.uniform(size=R.shape) < 0.01
vr_q = np.round(vr / 0.01).astype("i2")  # what the packing stores
vr_nan = np.where(mask, np.nan, vr)
times = pd.to_datetime(np.round(t * 1e6).astype("i8"), unit="us")
ds = xr.Dataset(
    {
        "azimuth": (("time",), az, {"units": "degree"}),
        "elevation": (("time",), el, {"units": "degree"}),
        "range": (("time", "gate"), R, {"units": "m"}),
        "radial_velocity": (("time", "gate"), vr_nan,
                            {"units": "m s-1", "standard_name": "radial_velocity_of_scatterers_away_from_instrument"}),
    },
    coords={"time": times},
)
enc = {"radial_velocity": {"dtype": "i2", "scale_factor": 0.01, "_FillValue": -32768}}
ds.to_netcdf(os.path.join(out, "data", "back.nc"), format="NETCDF4", encoding=enc)
with netCDF4.Dataset(os.path.join(out, "data", "back.nc")) as d2:
    tu = d2["time"].units
    d2["time"].set_auto_maskandscale(False)
    traw = d2["time"][:]
    d2["radial_velocity"].set_auto_maskandscale(False)
    stored = d2["radial_velocity"][:]
assert np.array_equal(stored[~mask], vr_q[~mask]) and (stored[mask] == -32768).all()
expected["back"] = {"masked": int(mask.sum()), "samples": int(R.size), "time_units": tu,
                    "csv": write_csv("back", t, az, el, R, vr_q.astype("f8") * 0.01, np.full(R.shape, -10.0), ~mask)}
# no CNR variable in back.nc: the CSV's -10 dB is above the campaign's fixed limit, like a missing CNR.
with open(os.path.join(out, "data", "back.csv"), "rb") as f, gzip.open(os.path.join(out, "data", "back.csv.gz"), "wb") as g:
    g.write(f.read())


def campaign(ext, east_cols):
    return {
        "name": "heldback-netcdf",
        "turbine": {"id": "HB-1", "position_m": [0, 0, 0], "hubHeight_m": HUB, "rotorDiameter_m": 120, "thrustCoefficient": 0.78},
        "instruments": [
            {"id": "west", "position_m": [450.0, 430.0, 2.0], "files": [f"data/west.{ext[0]}"]},
            {"id": "east", "position_m": [780.0, -400.0, 1.0], "files": [f"data/east.{ext[1]}"], **east_cols},
            {"id": "back", "position_m": [1250.0, 60.0, 3.0], "files": [f"data/back.{ext[2]}"]},
        ],
        "planes": [{"id": "x5", "x_m": PLANE_X, "y": {"min": -180, "max": 180}, "z": {"min": 10, "max": 190},
                    "cell_m": [30, 30], "thickness_m": 30}],
        "qc": {"cnr_db": {"min": -25, "max": 5}},
        "windows": {"kind": "fixed", "length_s": 300, "anchor": "2026-05-09T10:07:43.6Z"},
        "windDirection": {"kind": "fixed", "deg": 270},
        "output": {"images": False, "netcdf": True, "writeRejected": True},
    }


east_map = {"columns": {"time": "t", "azimuth_deg": "az", "elevation_deg": "el", "range_m": "rng",
                        "radial_velocity_ms": "dv", "cnr_db": "snr"}}
for name, ext, cols in (("nc", ("nc", "nc", "nc"), east_map), ("csv", ("csv", "csv", "csv"), {}), ("gz", ("nc", "csv", "csv.gz"), {})):
    with open(os.path.join(out, f"campaign-{name}.yaml"), "w") as f:
        json.dump(campaign(ext, cols), f, indent=1)
with open(os.path.join(out, "expected.json"), "w") as f:
    json.dump(expected, f, indent=1)
print(json.dumps(expected))
