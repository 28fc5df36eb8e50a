"""Held-back single-instrument wake-tracking case, written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_tracker.py OUTDIR
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Quernbeck" (no real place), flat ground at 0 m. Turbine QB-5 at the origin, hub 90 m, rotor 100 m.
Wind from 178 deg (window 1) and 171 deg (window 2): the wake runs towards the north, so the tracker's azimuths
pass through north. Direction series every 30 s (its own clock) gives these values; in window 2 the true flow
comes from 174 deg (3 deg off the series: the direction assumption is wrong by its stated standard uncertainty).

Tracker `trk-q` on a hub-height platform at (60, -30, 90) m (site frame), sweeping a horizontal sector back and
forth between azimuths 322 and 38 deg at 2.5 deg/s (every ray its own azimuth), elevation N(0, 0.3) deg per ray
(negative: looking slightly down), gates every 25 m from 150 to 650 m plus an irregular one at 437 m; one ray
every 0.4 +/- 0.1 s; ISO times with microseconds; the instrument column first, cnr before the velocity.

Flow in the rotor frame of the series direction (x downstream, y left looking downstream): the free stream S = 8 m/s
from the true direction, the streamwise speed reduced by A(x) exp(-(y - yc(x))^2 / (2 s(x)^2)) with
A = 0.35 exp(-x / 1000), yc = 6 + 0.04 x m, s = 28 + 0.06 x m (Gaussian wake, e.g. Bastankhah & Porte-Agel 2014,
Renew. Energy 70, for the shape [from memory]); w = 0, no shear. Radial velocity = beam . wind + N(0, 0.12) m/s.
Junk: 5 % of rows at CNR -30 dB with random v_r; good rows -13 +/- 3 dB. Rows swapped with their neighbour ray
at random (out of order by < 0.6 s).

Expected (expected.json) per window and downstream bin (x = 300, 400, 500 m, bins 100 m wide): the true centre
and width at the mean x of the bin's good samples, and the amplitude; the direction error of the window (0 or 3
deg). The tracker sees only the line-of-sight component: a flow 3 deg off the assumed direction tilts the apparent
deficit profile (S cos(beta - delta) read as S cos beta, beta the beam's angle from the assumed direction) and
moves the fitted centre; the run must state that bias (direction_bias_centre_m) and the centre must lie within it
plus the noise.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(4242)

T0 = 1795000000.0 + 17.3  # windows of 600 s anchored at the epoch; data from 17.3 s past a window start
W = 600.0
WIN0 = math.floor(T0 / W) * W
DIRS = {1: 178.0, 2: 171.0}
TRUE_OFF = {1: 0.0, 2: 3.0}
POS = np.array([60.0, -30.0, 90.0])
RANGES = [150.0 + 25.0 * k for k in range(21)] + [437.0]
S = 8.0


def win(t):
    return min(2, max(1, int(math.floor((t - WIN0) / W)) + 1))


def axes(d):
    xe, xn = math.sin(math.radians(d + 180)), math.cos(math.radians(d + 180))
    return np.array([xe, xn, 0.0]), np.array([-xn, xe, 0.0])


def wake(x):
    return 0.35 * math.exp(-x / 1000), 6 + 0.04 * x, 28 + 0.06 * x


def wind(t, p):
    k = win(t)
    xh, yh = axes(DIRS[k])
    x, y = float(p @ xh), float(p @ yh)
    s = S
    if x > 0:
        A, yc, sg = wake(x)
        s *= 1 - A * math.exp(-((y - yc) ** 2) / (2 * sg * sg))
    f = math.radians(DIRS[k] + TRUE_OFF[k])
    return np.array([-s * math.sin(f), -s * math.cos(f), 0.0])


rays = []
t, az, sgn = T0, 322.0, 1
while t < WIN0 + 2 * W:
    el = rng.normal(0, 0.3)
    rays.append((t, az % 360.0, el))
    dt = 0.4 + rng.uniform(-0.1, 0.1)
    t += dt
    az += sgn * 2.5 * dt
    if az > 398.0:
        az, sgn = 398.0 - (az - 398.0), -1
    if az < 322.0:
        az, sgn = 322.0 + (322.0 - az), 1

rows = []
for (t, az, el) in rays:
    a, e = math.radians(az), math.radians(el)
    n = np.array([math.cos(e) * math.sin(a), math.cos(e) * math.cos(a), math.sin(e)])
    ray = []
    for r in RANGES:
        p = POS + r * n
        junk = rng.random() < 0.05
        if junk:
            vr, cnr = rng.uniform(-15, 15), -30 + rng.normal(0, 0.8)
        else:
            vr, cnr = float(n @ wind(t, p)) + rng.normal(0, 0.12), min(-2.0, -13 + rng.normal(0, 3))
        ray.append((t, az, el, r, vr, cnr, junk, p))
    rows.append(ray)

i = 0
while i < len(rows) - 1:
    if rng.random() < 0.1:
        rows[i], rows[i + 1] = rows[i + 1], rows[i]
        i += 2
    else:
        i += 1


def iso_us(t):
    return str(np.datetime64(int(round(t * 1e6)), "us")) + "Z"


with open(os.path.join(out, "data", "trkq.csv"), "w") as f:
    f.write("instrument,time,cnr_db,radial_velocity_ms,range_m,elevation_deg,azimuth_deg\n")
    for ray in rows:
        for s in ray:
            f.write(f"trk-q,{iso_us(s[0])},{s[5]:.2f},{s[4]:.4f},{s[3]:.1f},{s[2]:.4f},{s[1]:.4f}\n")

with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = WIN0 - 11.0
    while t < WIN0 + 2 * W + 30:
        f.write(f"{t:.1f},{DIRS[win(t)]:.2f}\n")
        t += 30.0

exp = []
flat = [s for ray in rows for s in ray if not s[6]]
for k in (1, 2):
    xh, yh = axes(DIRS[k])
    lo, hi = WIN0 + (k - 1) * W, WIN0 + k * W
    for xc in (300.0, 400.0, 500.0):
        xs = [float((s[7] - np.array([0, 0, 0])) @ xh) for s in flat if lo <= s[0] < hi]
        xs = [x for x in xs if abs(x - xc) <= 50]
        xm = float(np.mean(xs))
        A, yc, sg = wake(xm)
        exp.append(dict(window=k, start_s=lo, x_m=xc, mean_x_m=xm, centre_m=yc, width_m=sg, amplitude=A, direction_error_deg=TRUE_OFF[k]))

# Planner (wind from 178 deg, the campaign's plan.directions_deg): the declared sweep (azimuths 322 .. 398 deg in
# 0.5-deg steps, elevation 0, the gates above) seen in the rotor frame; per downstream bin, the gates that fall in
# the tracker's bins (x within 50 m of the centre, y within the across bins -157.5 .. 157.5 m): their across span,
# the largest angle between a beam and the flow axis, and tan(beta) pi / 180, the first-order fractional error of the
# apparent speed per degree of direction error (from S cos(beta - delta) ~ S cos beta (1 + delta tan beta)).
xh, yh = axes(178.0)
plan_rows = []
for xc in (300.0, 400.0, 500.0):
    lo, hi, beta, n = math.inf, -math.inf, 0.0, 0
    for k in range(int(round((398 - 322) / 0.5)) + 1):
        a = math.radians(322 + 0.5 * k)
        nb = np.array([math.sin(a), math.cos(a), 0.0])
        for r in RANGES:
            p = POS + r * nb
            x, y = float(p @ xh), float(p @ yh)
            if abs(x - xc) <= 50 and abs(y) <= 157.5:
                lo, hi, n = min(lo, y), max(hi, y), n + 1
                beta = max(beta, math.degrees(math.acos(min(1.0, abs(float(nb @ xh))))))
    plan_rows.append(dict(x_m=xc, across_min_m=lo, across_max_m=hi, max_beam_angle_deg=beta, rays=n,
                          speed_error_per_deg=math.tan(math.radians(beta)) * math.pi / 180))

camp = {
    "name": "quernbeck-heldback",
    "turbine": {"id": "QB-5", "position_m": [0, 0, 0], "hubHeight_m": 90, "rotorDiameter_m": 100, "thrustCoefficient": 0.8},
    "instruments": [
        {"id": "trk-q", "role": "tracker", "position_m": POS.tolist(), "files": ["data/trkq.csv"],
         "track": {"sector": "horizontal", "x_m": {"min": 300, "max": 500, "step": 100}, "across_m": {"min": -150, "max": 150, "step": 15},
                   "scan_s": 30.4, "directionUncertainty_deg": 3,
                   "pattern": {"azimuth_deg": {"min": 322, "max": 398, "step": 0.5}, "elevation_deg": {"min": 0, "max": 0, "step": 1},
                               "ranges_m": RANGES, "ray_s": 0.4}}},
    ],
    "planes": [],
    "windows": {"kind": "fixed", "length_s": W, "anchor": "epoch"},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "output": {"images": False, "netcdf": False},
    "plan": {"directions_deg": [178]},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)
json.dump({"bins": exp, "plan": plan_rows, "junk": int(sum(s[6] for ray in rows for s in ray)), "rows": sum(len(r) for r in rows)},
          open(os.path.join(out, "expected.json"), "w"), indent=1)
