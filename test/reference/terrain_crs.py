"""Reference values for test/geometry-terrain.test.ts: site-frame (east, north, up) points about a WGS84 origin
turned into latitude, longitude, ellipsoidal height and UTM zone 26 north coordinates with PROJ (pyproj), and back.
The local east-north-up rotation is written out here with numpy; geodetic <-> Earth-centred conversions and the UTM
projection are PROJ's (EPSG:4979 geographic 3D, EPSG:4978 geocentric, EPSG:32626 UTM 26N).
Run: /usr/bin/python3 test/reference/terrain_crs.py   (Debian python3-pyproj, python3-numpy)
"""
import numpy as np
import pyproj

lat0, lon0, h0 = 45.5, -30.5, 60.0
to_ecef = pyproj.Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
to_geo = pyproj.Transformer.from_crs("EPSG:4978", "EPSG:4979", always_xy=True)
to_utm = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:32626", always_xy=True)
x0, y0, z0 = to_ecef.transform(lon0, lat0, h0)
la, lo = np.radians(lat0), np.radians(lon0)
R = np.array([[-np.sin(lo), np.cos(lo), 0.0],
              [-np.sin(la) * np.cos(lo), -np.sin(la) * np.sin(lo), np.cos(la)],
              [np.cos(la) * np.cos(lo), np.cos(la) * np.sin(lo), np.sin(la)]])
for e, n in [(0.0, 0.0), (1000.0, 500.0), (-700.0, -900.0), (1900.0, 900.0)]:
    d = R.T @ np.array([e, n, 0.0])
    lon, lat, h = to_geo.transform(x0 + d[0], y0 + d[1], z0 + d[2])
    E, N = to_utm.transform(lon, lat)
    print(f"enu ({e:.0f}, {n:.0f}, 0) -> lat {lat:.9f} lon {lon:.9f} h {h:.4f} utm26N {E:.4f} {N:.4f}")
