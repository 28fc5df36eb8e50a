"""Reference values for the line-of-sight geometry tests (REFERENCES.md sections 1 and 6) and the WGS84 radii of
curvature used to check wgs84ToEnu. Run: python3 test/reference/los_reference.py (numpy). Output pasted into
test/geometry-los.test.ts.
"""
import numpy as np


def unit(az, el):
    a, e = np.radians(az), np.radians(el)
    return np.array([np.cos(e) * np.sin(a), np.cos(e) * np.cos(a), np.sin(e)])


print("v_r = n . U")
for az, el, U in ((45, 10, (5, -3, 0.5)), (210, 30, (-4, 7, 1.2)), (135, 60, (8, 2, -0.5))):
    print(f"  az {az} el {el} U {U}: {unit(az, el) @ np.array(U):.6f}")

# Doviak & Zrnic (1993) eq. 2.28b, k_e = 4/3, a = 6371 km.
print("beam height h(r, theta_e)")
R = 4 / 3 * 6371e3
for el in (0.5, 2):
    s = np.sin(np.radians(el))
    print(f"  el {el}:", [f"{np.sqrt(r*r + R*R + 2*r*R*s) - R:.6f}" for r in (1e3, 3e3, 5e3)])

# WGS84 (a = 6378137 m, f = 1/298.257223563): meridian radius M and prime-vertical radius N.
a = 6378137.0
f = 1 / 298.257223563
e2 = f * (2 - f)
print("WGS84 radii and 0.01 degree arcs")
d = np.radians(0.01)
for lat in (0.0, 52.0):
    # meridian arc from lat to lat + 0.01 deg ~ M(mid-latitude) * d; parallel arc of 0.01 deg ~ N cos(lat) * d
    M = a * (1 - e2) / (1 - e2 * np.sin(np.radians(lat + 0.005)) ** 2) ** 1.5
    N = a / np.sqrt(1 - e2 * np.sin(np.radians(lat)) ** 2)
    print(f"  lat {lat}: M(lat+0.005) = {M:.4f}, N(lat) = {N:.4f}, north arc = {M*d:.6f}, east arc = {N*np.cos(np.radians(lat))*d:.6f}")
