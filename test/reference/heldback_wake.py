"""A reviewer's held-back wake-analysis case, written without wakeplane's code (numpy; scipy for the reference fit).

Usage: python3 test/reference/heldback_wake.py OUTDIR [--wd DEG] [--hub H] [--edge] [--nan]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site: one turbine (rotor D = 130 m, hub H, default 117 m; Ct = 0.8) standing at east/north (1234, -567) m
on flat ground at 0, wind from WD (default 45 deg, so the rotor frame turns with it: x downstream towards azimuth
WD + 180, y left looking downstream towards azimuth WD + 90, z up). Cross planes at x = 2.7 D, 4.3 D and 6.1 D,
y in [-420, 420] m (with --edge the first plane stops at y = -60 m, cutting the wake), z in [10, H + 180] m,
cells 30 m x 30 m, slabs 24 m thick.

Flow (rotor frame), v = w = 0:
  u = U (z / H)^ALPHA (1 - C(x) exp(-(y - yc)^2 / (2 sy^2) - (z - H)^2 / (2 sz^2)))
with U = 9.3 m/s at hub, ALPHA = 0.17 (power law), the wake width s(x)/D = k* x/D + eps (k* = 0.03, eps = 0.28)
split sy = 1.2 s, sz = s / 1.2 (so sqrt(sy sz) = s), and the amplitude of Bastankhah & Porte-Agel (2014, Renewable
Energy 70, eq. 23 [from memory]) C = 1 - sqrt(1 - Ct / (8 (s/D)^2)). Wake centre yc = 2.5 m per degree of yaw offset
times tanh(x / 3D) (positive offset: wake to +y, the README's convention); zc = H.
Two logged windows of 10 minutes at yaw offsets 0 and +16 deg; turbine series every 5 s (yaw_deg = WD + offset).

Lidar: three scanners at rotor-frame (x, y) = (-350, -900), (-350, 950), (-600, 60) m, 2 m up; every row a point
drawn uniformly in one plane's slab (own azimuth, elevation and range) at random times, 7 rows per second each;
radial velocity = wind along the beam (positive away) + N(0, 0.07) m/s; CNR -11 dB. With --nan one row in 40 has an
empty radial velocity and one in 40 a NaN (rejected rows, not numbers).

expected.json: the truths per plane and window, plus a scipy.optimize.curve_fit of the 2-D Gaussian (amplitude,
centre, widths) on the cell means of the exact deficit 1 - u/u_inf(z) (30-m cells widen a Gaussian of width s to
about sqrt(s^2 + 30^2 / 12) and lower its peak accordingly), and a curve_fit of s/D = k* x/D + eps
through the per-plane sqrt(sy sz) of those fits (the same model our downstream fit uses).
"""
import json
import math
import os
import sys

import warnings

import numpy as np
from scipy.optimize import curve_fit


def arg(name, default):
    return float(sys.argv[sys.argv.index(name) + 1]) if name in sys.argv else default


warnings.simplefilter('ignore')  # curve_fit on exact data: a covariance it cannot estimate is expected
out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(31)
WD, H = arg("--wd", 45.0), arg("--hub", 117.0)
U, D, ALPHA, CT, KS, EPS = 9.3, 130.0, 0.17, 0.8, 0.03, 0.28
E0, N0 = 1234.0, -567.0
dE, dN = -math.sin(math.radians(WD)), -math.cos(math.radians(WD))  # downstream unit vector
lE, lN = -dN, dE  # left looking downstream
PLANES = {"Q3": 2.7 * D, "Q4": 4.3 * D, "Q6": 6.1 * D}
YR, ZR = (-420.0, 420.0), (10.0, H + 180.0)
T0 = 1795000123.4
WIN = [(T0 + 40.0, T0 + 640.0, 0.0), (T0 + 760.0, T0 + 1360.0, 16.0)]


def s_of(x):
    return (KS * x / D + EPS) * D


def amp(x):
    return 1 - math.sqrt(1 - CT / (8 * (s_of(x) / D) ** 2))


def yc_of(x, g):
    return 2.5 * g * math.tanh(x / (3 * D))


def deficit(x, y, z, g):
    s = s_of(x)
    return amp(x) * np.exp(-((y - yc_of(x, g)) ** 2) / (2 * (1.2 * s) ** 2) - (z - H) ** 2 / (2 * (s / 1.2) ** 2))


def u_at(x, y, z, g):
    return U * (np.maximum(z, 1.0) / H) ** ALPHA * (1 - deficit(x, y, z, g))


def site(x, y):
    return E0 + x * dE + y * lE, N0 + x * dN + y * lN


def yrange(pid):
    return (-60.0, YR[1]) if ("--edge" in sys.argv and pid == "Q3") else YR


INSTR = {"r1": (-350.0, -900.0), "r2": (-350.0, 950.0), "r3": (-600.0, 60.0)}
nan_mode = "--nan" in sys.argv
for inst, (xi, yi) in INSTR.items():
    oe, on = site(xi, yi)
    o = np.array([oe, on, 2.0])
    lines = []
    for a, b, g in WIN:
        n = rng.poisson(7.0 * (b - a))
        t = np.sort(rng.uniform(a, b, n))
        which = rng.integers(0, len(PLANES), n)
        for tk, wk in zip(t, which):
            pid = list(PLANES)[wk]
            x = PLANES[pid] + rng.uniform(-12, 12)
            y, z = rng.uniform(*yrange(pid)), rng.uniform(*ZR)
            pe, pn = site(x, y)
            v = np.array([pe, pn, z]) - o
            r = float(np.linalg.norm(v))
            nb = v / r
            uu = float(u_at(x, y, z, g))
            vr = nb[0] * uu * dE + nb[1] * uu * dN + 0.07 * rng.standard_normal()
            az = math.degrees(math.atan2(nb[0], nb[1])) % 360
            el = math.degrees(math.asin(nb[2]))
            q = rng.integers(0, 40) if nan_mode else -1
            vs = "" if q == 0 else ("NaN" if q == 1 else f"{vr:.3f}")
            lines.append(f"{tk:.2f},{inst},{az:.5f},{el:.5f},{r:.2f},{vs},-11\n")
    with open(os.path.join(out, "data", f"{inst}.csv"), "w") as fh:
        fh.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
        fh.writelines(lines)

with open(os.path.join(out, "data", "T1.csv"), "w") as fh:
    fh.write("time,yaw_deg,power_kw\n")
    for t in np.arange(T0, T0 + 1400, 5.0):
        g = 16.0 if t >= WIN[1][0] - 60 else 0.0
        fh.write(f"{t:.1f},{(WD + g) % 360:.2f},2100\n")
with open(os.path.join(out, "data", "log.csv"), "w") as fh:
    fh.write("start,end,label\n")
    for a, b, g in WIN:
        fh.write(f"{a:.1f},{b:.1f},offset {g:.0f}\n")

campaign = {
    "name": "heldback-wake",
    "turbines": [{"id": "T1", "position_m": [E0, N0, 0.0], "hubHeight_m": H, "rotorDiameter_m": D, "thrustCoefficient": CT,
                  "series": {"file": "data/T1.csv"}}],
    "instruments": [{"id": i, "position_m": [*map(float, site(*p)), 2.0], "kind": "pulsed", "files": [f"data/{i}.csv"]} for i, p in INSTR.items()],
    "planes": [{"id": pid, "orientation": "cross", "x_m": x, "y": {"min": yrange(pid)[0], "max": yrange(pid)[1]}, "z": {"min": ZR[0], "max": ZR[1]},
                "cell_m": [30, 30], "thickness_m": 24} for pid, x in PLANES.items()],
    "windows": {"kind": "list", "file": "data/log.csv"},
    "windDirection": {"kind": "fixed", "deg": WD},
    "inflow": {"kind": "plane", "law": "power"},
    "output": {"dir": "out", "images": False, "netcdf": False},
}
with open(os.path.join(out, "campaign.yaml"), "w") as fh:
    json.dump(campaign, fh, indent=1)


def gauss(X, A, y0, z0, sy, sz):
    return A * np.exp(-(X[0] - y0) ** 2 / (2 * sy * sy) - (X[1] - z0) ** 2 / (2 * sz * sz))


views = []
fits = {}
for w, (a, b, g) in enumerate(WIN):
    for pid, x in PLANES.items():
        y0, y1 = yrange(pid)
        ycs = np.arange(y0 + 15.0, y1, 30.0)
        zcs = np.arange(ZR[0] + 15.0, ZR[1], 30.0)
        YY, ZZ = np.meshgrid(ycs, zcs)
        # Cell means of the exact deficit (10 x 10 points per 30-m cell): what a perfect retrieval of the cells gives.
        sub = (np.arange(10) - 4.5) * 3.0
        d = np.mean([deficit(x, YY + a1, ZZ + b1, g) for a1 in sub for b1 in sub], axis=0)
        hub_cell = float(np.mean([deficit(x, a1, H + b1, g) for a1 in sub for b1 in sub]))
        p, cov = curve_fit(gauss, (YY.ravel(), ZZ.ravel()), d.ravel(), p0=(0.3, 0.0, H, 60.0, 60.0))
        fits.setdefault(pid, []).append(math.sqrt(p[3] * p[4]) / D)
        s = s_of(x)
        views.append({"window": w, "plane": pid, "x_m": x, "yaw_offset_deg": g, "amplitude": amp(x), "yc_m": yc_of(x, g), "zc_m": H,
                      "sigma_y_m": 1.2 * s, "sigma_z_m": s / 1.2, "hub_deficit": float(deficit(x, 0.0, H, g)),
                      "hub_cell_deficit": hub_cell,
                      "fit": {"amplitude": p[0], "yc_m": p[1], "zc_m": p[2], "sigma_y_m": p[3], "sigma_z_m": p[4]}})
xs = np.array([PLANES[k] / D for k in PLANES])
sig = np.array([np.mean(fits[k]) for k in PLANES])
(k_fit, e_fit), _ = curve_fit(lambda xx, k, e: k * xx + e, xs, sig)
with open(os.path.join(out, "expected.json"), "w") as fh:
    json.dump({"wd_deg": WD, "hub_m": H, "U_ms": U, "alpha": ALPHA, "ct": CT, "D_m": D, "k_star": KS, "eps": EPS,
               "k_star_curve_fit": float(k_fit), "eps_curve_fit": float(e_fit), "views": views}, fh, indent=1)
