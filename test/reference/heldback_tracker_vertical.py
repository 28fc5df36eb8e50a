"""Held-back single-instrument wake tracking in a vertical sector under shear, written without wakeplane's code
(numpy only).

Usage: python3 test/reference/heldback_tracker_vertical.py OUTDIR
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Sallowmere" (no real place), flat ground at 0 m. Turbine SM-2 at the origin, hub 90 m, rotor 100 m,
wind from 178 deg (the wake runs north; the scan azimuth 358 deg is close to north). No inflow reference: the run
must take the free stream from the sector's own outer bins.

Flow: S(z) = 8 (z / 90)^0.2 m/s (power-law shear), horizontal, from 178 deg; behind the rotor the streamwise speed
is reduced by A(x) exp(-((z - 95)^2 + (y - 3)^2) / (2 s(x)^2)), A = 0.35 exp(-x / 1000), s = 30 + 0.06 x m (a
Gaussian wake, e.g. Bastankhah & Porte-Agel 2014, Renew. Energy 70 [from memory]), in the rotor frame of 178 deg.

Tracker `trk-v`, a ground scanner at (0, -20, 2) m: range-height sweeps at azimuth 358 deg + N(0, 0.05) per ray,
elevation back and forth between 1 and 30 deg at 1 deg/s, one ray every 0.4 +/- 0.05 s; gates from 200 m every
20 m to 620 m plus an irregular one at 457 m. Columns in another order, times in ISO 8601 with a -05:00 offset.
Radial velocity = beam . wind + N(0, 0.12) m/s; junk: 5 % of rows at CNR -29 dB with random v_r (good -12 +/- 3).

Expected (expected.json) per downstream bin (300, 400, 500 m): the true centre height (95 m), width s(x) at the bin's
mean x and amplitude A(x). With shear, a free stream taken as one mean speed of the bottom and top bins reads the
shear as a deficit (the bottom 26 % slower than the top): the centre must still come out at the wake's height.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(1778)

W = 600.0
WIN0 = 1795500000.0  # a multiple of 600 s: windows anchored at the epoch start here
D = 178.0
XH = np.array([math.sin(math.radians(D + 180)), math.cos(math.radians(D + 180)), 0.0])
YH = np.array([-XH[1], XH[0], 0.0])
POS = np.array([0.0, -20.0, 2.0])
RANGES = [200.0 + 20.0 * k for k in range(22)] + [457.0]


def wake(x):
    return 0.35 * math.exp(-x / 1000), 30 + 0.06 * x


def wind(p):
    x, y, z = float(p @ XH), float(p @ YH), float(p[2])
    s = 8.0 * (max(z, 0.5) / 90.0) ** 0.2
    if x > 0:
        A, sg = wake(x)
        s *= 1 - A * math.exp(-((z - 95) ** 2 + (y - 3) ** 2) / (2 * sg * sg))
    f = math.radians(D)
    return np.array([-s * math.sin(f), -s * math.cos(f), 0.0])


rows = []
t, el, sgn = WIN0 + 3.1, 1.0, 1
while t < WIN0 + W:
    az = 358.0 + rng.normal(0, 0.05)
    a, e = math.radians(az), math.radians(el)
    n = np.array([math.cos(e) * math.sin(a), math.cos(e) * math.cos(a), math.sin(e)])
    for r in RANGES:
        p = POS + r * n
        if rng.random() < 0.05:
            vr, cnr, junk = rng.uniform(-15, 15), -29 + rng.normal(0, 0.8), True
        else:
            vr, cnr, junk = float(n @ wind(p)) + rng.normal(0, 0.12), min(-2.0, -12 + rng.normal(0, 3)), False
        rows.append((t, az % 360.0, el, r, vr, cnr, junk, p))
    dt = 0.4 + rng.uniform(-0.05, 0.05)
    t += dt
    el += sgn * dt
    if el > 30:
        el, sgn = 60 - el, -1
    if el < 1:
        el, sgn = 2 - el, 1


def iso_minus5(t):
    return str(np.datetime64(int(round((t - 5 * 3600) * 1000)), "ms")) + "-05:00"


with open(os.path.join(out, "data", "trkv.csv"), "w") as f:
    f.write("elevation_deg,azimuth_deg,range_m,time,radial_velocity_ms,cnr_db,instrument\n")
    for s in rows:
        f.write(f"{s[2]:.4f},{s[1]:.4f},{s[3]:.1f},{iso_minus5(s[0])},{s[4]:.4f},{s[5]:.2f},trk-v\n")
with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = WIN0 - 20
    while t < WIN0 + W + 30:
        f.write(f"{t:.1f},{D:.2f}\n")
        t += 30

exp = []
good = [s for s in rows if not s[6]]
for xc in (300.0, 400.0, 500.0):
    xs = [float(s[7] @ XH) for s in good]
    xs = [x for x, s in zip(xs, good) if abs(x - xc) <= 50 and 15 <= s[7][2] <= 175]
    xm = float(np.mean(xs))
    A, sg = wake(xm)
    exp.append(dict(x_m=xc, mean_x_m=xm, centre_m=95.0, width_m=sg, amplitude=A))

camp = {
    "name": "sallowmere-heldback",
    "turbine": {"id": "SM-2", "position_m": [0, 0, 0], "hubHeight_m": 90, "rotorDiameter_m": 100, "thrustCoefficient": 0.8},
    "instruments": [
        {"id": "trk-v", "role": "tracker", "position_m": POS.tolist(), "files": ["data/trkv.csv"],
         "track": {"sector": "vertical", "x_m": {"min": 300, "max": 500, "step": 100}, "across_m": {"min": 20, "max": 170, "step": 10},
                   "scan_s": 60, "directionUncertainty_deg": 2}},
    ],
    "planes": [],
    "windows": {"kind": "fixed", "length_s": W, "anchor": "epoch"},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "output": {"images": False, "netcdf": False},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)
json.dump({"start_s": WIN0, "bins": exp, "junk": int(sum(s[6] for s in rows)), "rows": len(rows)},
          open(os.path.join(out, "expected.json"), "w"), indent=1)
