"""A reviewer's held-back case of wakes crossing cross planes, written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_cross.py OUTDIR [--frame-c3] [--plane6]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site, wind from exactly 200 deg (rotor frame: x towards azimuth 20 deg, y towards azimuth 290 deg, z up),
flat ground at 0. Three turbines (rotor 100 m, hub 90 m): C-1 at the site origin, C-2 side by side 300 m to its
left (y = +300), C-3 700 m behind C-1 (x = 700, y = 0). Two cross planes in C-1's frame: P4 at x = 400 m (the wakes
of C-1 and C-2 cross it side by side) and P11 at x = 1100 m (behind C-3, 4 D; C-2's wake at 11 D beside it).
With --plane6 a third plane P6 at x = 620 m, 0.8 D upstream of C-3, shares the samples.
With --frame-c3, P11 is given in C-3's frame (x = 400 m): the same plane. Planes: y from -250 to 550 m in 25-m cells, z from 10 to 190 m in 20-m cells, slabs 20 m thick.

Flow: u = U (z / 90)^0.12 prod_k (1 - a_k exp(-((y - yc_k(x))^2 + (z - 90)^2) / (2 s_k(x)^2))) behind each turbine
(x > x_k), a_k = 0.35 (C-3: 0.25), s_k = 35 m + 0.06 (x - x_k), yc_k = y_k + 2 m per degree of yaw offset x
tanh((x - x_k) / 150 m); v = w = 0. U = 8.5 m/s. Two logged windows of 10 minutes: C-1 at yaw offset 0, then +20 deg
(wake to +y); C-2 and C-3 never yawed. Turbine series every 5 s with yaw_deg and power_kw.

Lidar: two scanners at (x, y) = (-300, -700) and (-300, 1000) m, 3 m up; every row a point drawn uniformly in one of
the planes (own azimuth, elevation and range), 8 rows per second each; radial velocity = wind along the beam +
N(0, 0.08); CNR -9 dB.

expected.json: for each window and turbine view the README's rules give (a cross plane behind a turbine standing in
another's wake belongs to that turbine; a waked turbine's inflow from the cross plane between it and the turbine
waking it): the true wake centre in the view's own frame at its plane, and for C-3 at P11 the true u at C-3's hub
position in P4 (its inflow); for the planner, per plane cell and scanner whether the straight beam to the cell
centre crosses a rotor disk (beams within 1 m of a rim left out).
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(1103)
WD, U, D, H, ALPHA = 200.0, 8.5, 100.0, 90.0, 0.12
dE, dN = -math.sin(math.radians(WD)), -math.cos(math.radians(WD))
lE, lN = -dN, dE
T = {"C-1": (0.0, 0.0), "C-2": (0.0, 300.0), "C-3": (700.0, 0.0)}
A = {"C-1": 0.35, "C-2": 0.35, "C-3": 0.25}
PLANES = {"P4": 400.0, "P11": 1100.0}
if "--plane6" in sys.argv:
    # A third plane 0.8 D upstream of C-3: where the deflection of C-1's wake at C-3 is read.
    PLANES["P6"] = 620.0
Y, Z = (-250.0, 550.0), (10.0, 190.0)
T0 = 1791234567.8
WIN = [(T0 + 60.0, T0 + 660.0, 0.0), (T0 + 780.0, T0 + 1380.0, 20.0)]


def centre(k, x, g1):
    xk, yk = T[k]
    g = g1 if k == "C-1" else 0.0
    return yk + 2.0 * g * math.tanh(max(x - xk, 0.0) / 150.0)


def u_at(x, y, z, g1):
    f = U * (np.maximum(z, 1.0) / H) ** ALPHA
    for k, (xk, yk) in T.items():
        if x <= xk:
            continue
        s = 35.0 + 0.06 * (x - xk)
        f = f * (1 - A[k] * np.exp(-((y - centre(k, x, g1)) ** 2 + (z - H) ** 2) / (2 * s * s)))
    return f


def site(x, y):
    return x * dE + y * lE, x * dN + y * lN


INSTR = {"s1": (-300.0, -700.0), "s2": (-300.0, 1000.0)}
rows = {i: [] for i in INSTR}
for a, b, g1 in WIN:
    for inst, (xi, yi) in INSTR.items():
        oe, on = site(xi, yi)
        o = np.array([oe, on, 3.0])
        n = rng.poisson(8.0 * (b - a))
        t = np.sort(rng.uniform(a, b, n))
        which = rng.integers(0, len(PLANES), n)
        for tk, wk in zip(t, which):
            x = list(PLANES.values())[wk] + rng.uniform(-9, 9)
            y, z = rng.uniform(*Y), rng.uniform(*Z)
            pe, pn = site(x, y)
            v = np.array([pe, pn, z]) - o
            r = float(np.linalg.norm(v))
            nb = v / r
            uu = float(u_at(x, y, z, g1))
            vr = nb[0] * uu * dE + nb[1] * uu * dN + 0.08 * rng.standard_normal()
            az = math.degrees(math.atan2(nb[0], nb[1])) % 360
            el = math.degrees(math.asin(nb[2]))
            rows[inst].append((tk, az, el, r, vr))
for inst, rs in rows.items():
    with open(os.path.join(out, "data", f"{inst}.csv"), "w") as fh:
        fh.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
        for tk, az, el, r, vr in rs:
            fh.write(f"{tk:.2f},{inst},{az:.5f},{el:.5f},{r:.2f},{vr:.3f},-9\n")

for k in T:
    with open(os.path.join(out, "data", f"{k}.csv"), "w") as fh:
        fh.write("time,yaw_deg,power_kw\n")
        for t in np.arange(T0, T0 + 1440, 5.0):
            g = 20.0 if (k == "C-1" and t >= WIN[1][0] - 60) else 0.0
            fh.write(f"{t:.1f},{(WD + g) % 360:.2f},1500\n")
with open(os.path.join(out, "data", "log.csv"), "w") as fh:
    fh.write("start,end,label\n")
    for a, b, g1 in WIN:
        fh.write(f"{a:.1f},{b:.1f},C-1 at {g1:.0f} deg\n")

campaign = {
    "name": "heldback-cross",
    "turbines": [{"id": k, "position_m": [*map(float, site(*T[k])), 0.0], "hubHeight_m": H, "rotorDiameter_m": D, "thrustCoefficient": 0.8,
                  "series": {"file": f"data/{k}.csv"}} for k in T],
    "instruments": [{"id": i, "position_m": [*map(float, site(*p)), 3.0], "kind": "pulsed", "files": [f"data/{i}.csv"]} for i, p in INSTR.items()],
    "planes": [{"id": pid, "orientation": "cross", "frame": "C-1", "x_m": x, "y": {"min": Y[0], "max": Y[1]}, "z": {"min": Z[0], "max": Z[1]},
                "cell_m": [25, 20], "thickness_m": 20} for pid, x in PLANES.items()],
    "windows": {"kind": "list", "file": "data/log.csv"},
    "windDirection": {"kind": "fixed", "deg": WD},
    "inflow": {"kind": "fixed", "speed_ms": U, "height_m": H, "law": "power", "alpha": ALPHA},
    "output": {"dir": "out", "images": False, "netcdf": False},
}
if "--frame-c3" in sys.argv:
    # The same plane P11 given in C-3's frame: 400 m behind C-3's tower base, its y from C-3's axis (C-3 stands at
    # y = 0 of C-1's frame, so the extent is unchanged).
    campaign["planes"][1].update({"frame": "C-3", "x_m": PLANES["P11"] - T["C-3"][0]})
with open(os.path.join(out, "campaign.yaml"), "w") as fh:
    json.dump(campaign, fh, indent=1)

expected = []
for w, (a, b, g1) in enumerate(WIN):
    for pid, x in PLANES.items():
        for k, (xk, yk) in T.items():
            if x <= xk:
                continue
            view = {"window": w, "plane": pid, "turbine": k, "yc_m": centre(k, x, g1) - yk, "zc_m": H}
            if pid == "P11" and k == "C-3":
                view["inflow_hub_ms"] = float(u_at(PLANES["P4"], 0.0, H, g1))
                view["waked_by"] = "C-1"
            expected.append(view)
# Planner check: the straight beam from each scanner to each cell centre of each plane, and whether it crosses a
# rotor disk (radius 50 m about the hub, in the plane normal to the wind: the turbines face the planned 200 deg).
# Beams passing within 1 m of a rim are left out (the decision would hang on rounding).
beams = []
dvec = np.array([dE, dN, 0.0])
hubs = [np.array([*site(*T[k]), H]) for k in T]
for pid, x in PLANES.items():
    for iz, z in enumerate(np.arange(Z[0] + 10.0, Z[1], 20.0)):
        for iy, y in enumerate(np.arange(Y[0] + 12.5, Y[1], 25.0)):
            q = np.array([*site(x, y), z])
            for inst, (xi, yi) in INSTR.items():
                o = np.array([*site(xi, yi), 3.0])
                hit, near = False, False
                for h in hubs:
                    sa, sb = (o - h) @ dvec, (q - h) @ dvec
                    if sa * sb > 0 or sa == sb:
                        continue
                    dist = float(np.linalg.norm(o + sa / (sa - sb) * (q - o) - h))
                    near |= abs(dist - D / 2) < 1.0
                    hit |= dist <= D / 2
                if not near:
                    beams.append([pid, iy, iz, inst, hit])
# --plane6: what a fit of C-1's region of P6 alone gives (README: the region is |y| <= the wake envelope R + 0.1 x
# plus D/2 = 162 m, but never past half the distance to C-2's wake, 150 m), from the exact deficit at the cell
# centres against the fixed inflow: scipy.optimize.curve_fit of the 2-D Gaussian with a constant offset.
crop_fit = {}
if "P6" in PLANES:
    from scipy.optimize import curve_fit

    ycs = np.arange(Y[0] + 12.5, Y[1], 25.0)
    zcs = np.arange(Z[0] + 10.0, Z[1], 20.0)
    YY, ZZ = np.meshgrid(ycs, zcs)

    def gauss(X, A, y0, z0, sy, sz, c):
        return A * np.exp(-(X[0] - y0) ** 2 / (2 * sy * sy) - (X[1] - z0) ** 2 / (2 * sz * sz)) + c

    for w, (a, b, g1) in enumerate(WIN):
        d = 1 - u_at(PLANES["P6"], YY, ZZ, g1) / (U * (ZZ / H) ** ALPHA)
        m = np.abs(YY) <= 150.0
        p, _ = curve_fit(gauss, (YY[m], ZZ[m]), d[m], p0=(0.3, 0.0, H, 80.0, 80.0, 0.0))
        crop_fit[w] = {"yc_m": float(p[1]), "truth_m": centre("C-1", PLANES["P6"], g1)}
with open(os.path.join(out, "expected.json"), "w") as fh:
    json.dump({"views": expected, "beams": beams, "crop_fit": crop_fit}, fh, indent=1)
