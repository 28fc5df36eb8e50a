"""Held-back wake tracking from the nacelle: a rear-looking scanner turning with the nacelle under a yaw offset,
written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_tracker_nacelle.py OUTDIR
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Tolvercombe" (no real place), flat ground at 0 m. Turbine TC-4 at the origin, hub 90 m, rotor 100 m.
Wind from 185 deg (window 1) and 172 deg (window 2; the wake runs through north). Turbine series on its own 5-s
clock: the nacelle faces the wind in window 1 and is turned 12 deg clockwise of it in window 2 (yaw offset +12).

Tracker `rear`, mounted on the nacelle 5 m behind the tower (mount [-5, 0, 92] m), beams given relative to the
nacelle axis: azimuth sweeping 160 .. 200 deg back and forth at 2.5 deg/s, elevation N(0, 0.2) deg per ray, one ray
every 0.4 +/- 0.05 s, gates every 25 m from 150 m to 575 m. Each beam is turned with the nacelle: site azimuth =
nacelle direction + reported azimuth, origin = tower base + mount turned with the nacelle (the README's nacelle
frame). Unix times, columns in another order. Junk: 5 % of rows at CNR -30 dB with random v_r (good -11 +/- 3 dB).

Flow in the rotor frame of the window's wind direction: S = 8 m/s, the streamwise speed reduced by
A exp(-((y - yc)^2 + (z - 90)^2) / (2 s^2)), A = 0.35 exp(-x / 1000), yc = 6 + 0.04 x m, s = 28 + 0.06 x m
(a Gaussian wake, e.g. Bastankhah & Porte-Agel 2014, Renew. Energy 70 [from memory]); the direction series gives the
wind direction exactly. Radial velocity = beam . wind + N(0, 0.12) m/s.

Expected (expected.json) per window and downstream bin (200 .. 500 m): the true centre and width at the bin's mean
x; and, per bin, the largest across-wake coordinate the sweep reaches there (in window 2 the yawed sweep stops short
of the wake's far side at 200 m: a Gaussian centred within one bin of the last data must be flagged, not reported).
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(3131)

W = 600.0
WIN0 = 1796000000.0 - (1796000000.0 % 600)
DIRS = {1: 185.0, 2: 172.0}
YAW = {1: 0.0, 2: 12.0}
H = 90.0
MOUNT = (-5.0, 0.0, 92.0)
RANGES = [150.0 + 25.0 * k for k in range(18)]


def win(t):
    return min(2, max(1, int((t - WIN0) // W) + 1))


def axes(d):
    x = np.array([math.sin(math.radians(d + 180)), math.cos(math.radians(d + 180)), 0.0])
    return x, np.array([-x[1], x[0], 0.0])


def wake(x):
    return 0.35 * math.exp(-x / 1000), 6 + 0.04 * x, 28 + 0.06 * x


def wind(t, p):
    d = DIRS[win(t)]
    xh, yh = axes(d)
    x, y = float(p @ xh), float(p @ yh)
    s = 8.0
    if x > 0:
        A, yc, sg = wake(x)
        s *= 1 - A * math.exp(-((y - yc) ** 2 + (p[2] - H) ** 2) / (2 * sg * sg))
    f = math.radians(d)
    return np.array([-s * math.sin(f), -s * math.cos(f), 0.0])


rows = []
t, az, sgn = WIN0 + 1.3, 160.0, 1
while t < WIN0 + 2 * W:
    psi = (DIRS[win(t)] + YAW[win(t)]) % 360
    s_, c_ = math.sin(math.radians(psi)), math.cos(math.radians(psi))
    o = np.array([MOUNT[0] * s_ - MOUNT[1] * c_, MOUNT[0] * c_ + MOUNT[1] * s_, MOUNT[2]])
    el = rng.normal(0, 0.2)
    a, e = math.radians(psi + az), math.radians(el)
    n = np.array([math.cos(e) * math.sin(a), math.cos(e) * math.cos(a), math.sin(e)])
    for r in RANGES:
        p = o + r * n
        if rng.random() < 0.05:
            vr, cnr, junk = rng.uniform(-15, 15), -30 + rng.normal(0, 0.8), True
        else:
            vr, cnr, junk = float(n @ wind(t, p)) + rng.normal(0, 0.12), min(-2.0, -11 + rng.normal(0, 3)), False
        rows.append((t, az, el, r, vr, cnr, junk, p))
    dt = 0.4 + rng.uniform(-0.05, 0.05)
    t += dt
    az += sgn * 2.5 * dt
    if az > 200:
        az, sgn = 400 - az, -1
    if az < 160:
        az, sgn = 320 - az, 1

with open(os.path.join(out, "data", "rear.csv"), "w") as f:
    f.write("radial_velocity_ms,range_m,azimuth_deg,elevation_deg,cnr_db,time,instrument\n")
    for s in rows:
        f.write(f"{s[4]:.4f},{s[3]:.1f},{s[1]:.3f},{s[2]:.3f},{s[5]:.2f},{s[0]:.3f},rear\n")
with open(os.path.join(out, "data", "turbine.csv"), "w") as f:
    f.write("time,yaw_deg\n")
    t = WIN0 - 9
    while t < WIN0 + 2 * W + 20:
        f.write(f"{t:.1f},{(DIRS[win(t)] + YAW[win(t)]) % 360:.2f}\n")
        t += 5
with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = WIN0 - 9
    while t < WIN0 + 2 * W + 20:
        f.write(f"{t:.1f},{DIRS[win(t)]:.2f}\n")
        t += 30

exp = []
good = [s for s in rows if not s[6]]
for k in (1, 2):
    xh, yh = axes(DIRS[k])
    lo, hi = WIN0 + (k - 1) * W, WIN0 + k * W
    for xc in (200.0, 300.0, 400.0, 500.0):
        pts = [(float(s[7] @ xh), float(s[7] @ yh)) for s in good if lo <= s[0] < hi]
        pts = [(x, y) for x, y in pts if abs(x - xc) <= 50 and abs(y) <= 157.5]
        xm = float(np.mean([x for x, _ in pts]))
        A, yc, sg = wake(xm)
        exp.append(dict(window=k, start_s=lo, x_m=xc, centre_m=yc, width_m=sg, amplitude=A,
                        across_min_m=min(y for _, y in pts), across_max_m=max(y for _, y in pts)))

camp = {
    "name": "tolvercombe-heldback",
    "turbine": {"id": "TC-4", "position_m": [0, 0, 0], "hubHeight_m": H, "rotorDiameter_m": 100, "thrustCoefficient": 0.8,
                "series": {"file": "data/turbine.csv"}},
    "instruments": [
        {"id": "rear", "role": "tracker", "beamFrame": "nacelle", "mount_m": list(MOUNT), "files": ["data/rear.csv"],
         "track": {"sector": "horizontal", "x_m": {"min": 200, "max": 500, "step": 100}, "across_m": {"min": -150, "max": 150, "step": 15},
                   "scan_s": 32}},
    ],
    "planes": [],
    "windows": {"kind": "fixed", "length_s": W, "anchor": "epoch"},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "output": {"images": False, "netcdf": False},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)
json.dump({"bins": exp, "junk": int(sum(s[6] for s in rows)), "rows": len(rows)}, open(os.path.join(out, "expected.json"), "w"), indent=1)
