"""Writes a small NetCDF-4 sample file with Debian's python3-netcdf4 (netCDF-C underneath), for the reader test.

Usage: python3 test/reference/netcdf_samples.py OUT.nc
Layout: time (5 rays, unlimited) x range (4 gates); azimuth and elevation in radians, range in km, time in minutes
since a reference with a +01:00 zone, radial velocity with the 'toward' standard name and a fill value at ray 1,
gate 2, CNR packed as short integers (scale_factor 0.01, add_offset -20) with a fill at ray 2, gate 0, elevation
missing on ray 3. Chunked (2 rays x 4 gates) and deflate-compressed. Prints the stored arrays.
"""
import sys

import netCDF4
import numpy as np

out = sys.argv[1]
with netCDF4.Dataset(out, "w", format="NETCDF4") as ds:
    ds.createDimension("time", None)
    ds.createDimension("range", 4)
    t = ds.createVariable("time", "f8", ("time",))
    t.units = "minutes since 2026-03-01 13:00:00 +01:00"
    t.standard_name = "time"
    t[:] = [0.0, 0.25, 0.5, 0.75, 1.0]
    r = ds.createVariable("range", "f4", ("range",))
    r.units = "km"
    r[:] = [0.1, 0.13, 0.16, 0.19]
    az = ds.createVariable("azimuth", "f8", ("time",))
    az.units = "radians"
    az[:] = [0.1, 0.2, 0.3, -0.1, 7.0]
    el = ds.createVariable("elevation", "f8", ("time",), fill_value=-999.0)
    el.units = "rad"
    el[:] = np.ma.masked_array([0.05, 0.05, 0.05, 0.0, 0.05], mask=[0, 0, 0, 1, 0])
    vr = ds.createVariable("vel", "f4", ("time", "range"), zlib=True, chunksizes=(2, 4), fill_value=-999.0)
    vr.units = "m s-1"
    vr.standard_name = "radial_velocity_of_scatterers_toward_instrument"
    v = np.arange(20, dtype="f4").reshape(5, 4) * 0.5 - 3.0
    vr[:] = np.ma.masked_array(v, mask=(np.arange(20).reshape(5, 4) == 6))
    cnr = ds.createVariable("cnr", "i2", ("time", "range"), zlib=True, chunksizes=(2, 4), fill_value=-32767)
    cnr.units = "dB"
    cnr.scale_factor = 0.01
    cnr.add_offset = -20.0
    cnr.set_auto_maskandscale(False)
    stored = (1000 + np.arange(20)).reshape(5, 4).astype("i2")
    stored[2, 0] = -32767
    cnr[:] = stored
    ds.Conventions = "CF-1.8"
with netCDF4.Dataset(out) as ds:
    print("vel", ds["vel"][:].filled(np.nan).tolist())
    ds["cnr"].set_auto_maskandscale(False)
    print("cnr stored", ds["cnr"][:].tolist())
# printed (python3-netcdf4 1.6.2, numpy 1.24.2):
# vel [[-3.0, -2.5, -2.0, -1.5], [-1.0, -0.5, nan, 0.5], [1.0, 1.5, 2.0, 2.5], [3.0, 3.5, 4.0, 4.5], [5.0, 5.5, 6.0, 6.5]]
# cnr stored [[1000, 1001, 1002, 1003], [1004, 1005, 1006, 1007], [-32767, 1009, 1010, 1011], [1012, 1013, 1014, 1015], [1016, 1017, 1018, 1019]]
