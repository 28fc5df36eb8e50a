"""Held-back two-instrument case (dual-Doppler, horizontal plane at hub height), written without wakeplane's code
(numpy only), and the planner's expected geometry for it.

Usage: python3 test/reference/heldback_dualdoppler.py OUTDIR
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Harrowfold" (no real place), flat ground at 0 m. Turbine HX-1 at the origin, hub 90 m, rotor 100 m.
Wind direction series (every 45 s, its own clock): from 357 deg in window 1 and from 6 deg in window 2 (through
north). The true flow comes from 2 deg clockwise of the series' direction (so the rotor-frame v is not zero:
v = -S sin 2 deg, y to the left looking downstream), S(z) = 8.5 (z / 90)^0.15 m/s, with a wake deficit
0.3 exp(-x / 900) exp(-(y - 12)^2 / (2 (35 + 0.05 x)^2)) in the rotor frame of the series direction; w = 0.

Horizontal plane `hh` at 90 m: y in [-150, 150] m, x in [200, 500] m, cells 30 m x 30 m, slab 30 m thick.
Instruments, columns in another order and the instrument id in the second-to-last column:
- `dd-b`, on a 140-m tower at (-300, -420, 140) m: looks down at the plane (negative elevations);
- `dd-a`, at (260, -480, 2) m on the ground;
- `vad-n`, a VAD cone (elevation 65 deg + N(0, 0.15), turning 12 deg/s, irregular gates) upstream at (40, 420, 1.5),
  the inflow reference of the plane (campaign inflow: profile).
Each ray aims at its own random point of the plane's area (x 185..515 m, y -165..165 m, z 90 +/- 10 m), so every
row has its own azimuth and elevation, with gates at irregular offsets (-41, -13, 0, +17, +52 m) from the aimed
range (gates off the slab are outside the plane). Rays every 0.3 +/- 0.1 s; ISO 8601 times without fractional
seconds for dd-a (several rays share one stamp) and Unix seconds for dd-b. Radial velocity = beam . wind +
N(0, 0.15) m/s. Junk: 4 % of rows at CNR -33 dB with random v_r; good rows -15 +/- 4 dB.

Expected (expected.json):
- per window and cell with both instruments (at least 10 good samples each): the mean of the true rotor-frame u, v
  over the cell's good samples (the field is smooth: this is the cell's truth within 0.05 m/s) and the dual-Doppler
  error amplification of the cell centre from the two beam directions, sqrt(diag((A^T A)^-1)) with A the rows
  (n_x, n_y) of the unit beams in the rotor frame, w = 0 (the two-beam least squares; e.g. Stawiarski et al. 2013,
  J. Atmos. Oceanic Technol. 30, on dual-Doppler lidar error geometry [from memory]), and the crossing angle of the
  two instruments' mean beams over the cell's good samples projected on the u, v plane;
- for the planner (direction 0 deg, the campaign's plan.directions_deg): the same amplification at every cell
  centre of the plane, the crossing angle of the two beams' horizontal projections (the plane of u and v, the
  components a two-beam system with w = 0 resolves), the beams' elevations and whether the cell should be trusted.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(1311)

T0 = 1790500000.0  # 2026-09-27T08:26:40Z, windows of 600 s anchored at the epoch: start at 08:20:00 and 08:30:00
W = 600.0
WIN_START = math.floor(T0 / W) * W
DIRS = {1: 357.0, 2: 6.0}
INS = {"dd-b": (-300.0, -420.0, 140.0), "dd-a": (260.0, -480.0, 2.0)}
GATES = [-41.0, -13.0, 0.0, 17.0, 52.0]
PLANE = dict(z=90.0, ymin=-150.0, ymax=150.0, xmin=200.0, xmax=500.0, cell=30.0, thick=30.0)


def win(t):
    return int(math.floor((t - WIN_START) / W)) + 1


def axes(d):
    """Rotor-frame axes in the site frame for a wind from d: x downstream, y left looking downstream."""
    xe, xn = math.sin(math.radians(d + 180)), math.cos(math.radians(d + 180))
    return (xe, xn), (-xn, xe)


def true_wind(t, p):
    """Site-frame wind (east, north, up) at point p: from DIRS + 2 deg, sheared, with the wake of the series frame."""
    k = min(2, max(1, win(t)))
    (xe, xn), (ye, yn) = axes(DIRS[k])
    x = p[0] * xe + p[1] * xn
    y = p[0] * ye + p[1] * yn
    s = 8.5 * (p[2] / 90.0) ** 0.15
    if x > 0:
        s *= 1 - 0.3 * math.exp(-x / 900) * math.exp(-((y - 12) ** 2) / (2 * (35 + 0.05 * x) ** 2))
    f = math.radians(DIRS[k] + 2.0)
    return -s * math.sin(f), -s * math.cos(f), 0.0


def to_rotor(d, v):
    (xe, xn), (ye, yn) = axes(d)
    return v[0] * xe + v[1] * xn, v[0] * ye + v[1] * yn


def amplification(d, cell_pt):
    rows = []
    (xe, xn), (ye, yn) = axes(d)
    for pos in INS.values():
        r = np.array(cell_pt) - np.array(pos)
        n = r / np.linalg.norm(r)
        rows.append([n[0] * xe + n[1] * xn, n[0] * ye + n[1] * yn])
    A = np.array(rows)
    inv = np.linalg.inv(A.T @ A)
    h = [np.array(rows[0]) / np.linalg.norm(rows[0]), np.array(rows[1]) / np.linalg.norm(rows[1])]
    cross = math.degrees(math.acos(abs(float(h[0] @ h[1]))))
    return float(math.sqrt(inv[0, 0])), float(math.sqrt(inv[1, 1])), cross


samples = {k: [] for k in INS}
for name, pos in INS.items():
    t = T0 + rng.uniform(0, 0.3)
    while t < WIN_START + 3 * W - 1:
        k = min(2, max(1, win(t)))
        (xe, xn), (ye, yn) = axes(DIRS[k])
        x, y, z = rng.uniform(185, 515), rng.uniform(-165, 165), 90 + rng.uniform(-10, 10)
        tgt = np.array([x * xe + y * ye, x * xn + y * yn, z])
        r0 = float(np.linalg.norm(tgt - np.array(pos)))
        n = (tgt - np.array(pos)) / r0
        az = math.degrees(math.atan2(n[0], n[1])) % 360
        el = math.degrees(math.asin(n[2]))
        for g in GATES:
            r = r0 + g
            p = np.array(pos) + r * n
            u = true_wind(t, p)
            junk = rng.random() < 0.04
            if junk:
                vr, cnr = rng.uniform(-20, 20), -33 + rng.normal(0, 1)
            else:
                vr, cnr = float(n @ np.array(u)) + rng.normal(0, 0.15), min(-2.0, -15 + rng.normal(0, 4))
            samples[name].append((t, az, el, r, vr, cnr, junk, p, n))
        t += 0.3 + rng.uniform(-0.1, 0.1)


# ---- a VAD cone upstream (north of the turbine), the inflow reference of the plane --------------------------
VAD = np.array([40.0, 420.0, 1.5])
VAD_R = [48.0, 83.0, 101.0, 127.0, 152.0]
vad_rows = []
t = T0 + 0.2
while t < WIN_START + 3 * W - 1:
    az = (350.0 + 12.0 * (t - T0)) % 360.0
    el = 65.0 + rng.normal(0, 0.15)
    a, e_ = math.radians(az), math.radians(el)
    n = np.array([math.cos(e_) * math.sin(a), math.cos(e_) * math.cos(a), math.sin(e_)])
    for r in VAD_R:
        p = VAD + r * n
        junk = rng.random() < 0.04
        if junk:
            vr, cnr = rng.uniform(-20, 20), -33 + rng.normal(0, 1)
        else:
            vr, cnr = float(n @ np.array(true_wind(t, p))) + rng.normal(0, 0.12), min(-2.0, -15 + rng.normal(0, 4))
        vad_rows.append((t, az, el, r, vr, cnr))
    t += 1.1 + rng.uniform(-0.2, 0.2)
with open(os.path.join(out, "data", "vadn.csv"), "w") as f:
    f.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
    for s in vad_rows:
        f.write(f"{s[0]:.2f},vad-n,{s[1]:.3f},{s[2]:.3f},{s[3]:.1f},{s[4]:.4f},{s[5]:.2f}\n")


def iso_s(t):
    return str(np.datetime64(int(math.floor(t)), "s")) + "Z"


with open(os.path.join(out, "data", "ddb.csv"), "w") as f:
    f.write("t,vr_ms,rng_m,az,el,id,snr_db\n")
    for s in samples["dd-b"]:
        f.write(f"{s[0]:.3f},{s[4]:.4f},{s[3]:.2f},{s[1]:.4f},{s[2]:.4f},dd-b,{s[5]:.2f}\n")
with open(os.path.join(out, "data", "dda.csv"), "w") as f:
    f.write("t,vr_ms,rng_m,az,el,id,snr_db\n")
    for s in samples["dd-a"]:
        f.write(f"{iso_s(s[0])},{s[4]:.4f},{s[3]:.2f},{s[1]:.4f},{s[2]:.4f},dd-a,{s[5]:.2f}\n")

with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = WIN_START - 13.0
    while t < WIN_START + 3 * W + 45:
        f.write(f"{t:.1f},{DIRS[min(2, max(1, win(t)))]:.2f}\n")
        t += 45.0

with open(os.path.join(out, "data", "turbine.csv"), "w") as f:
    f.write("time,yaw_deg\n")
    t = WIN_START - 7.0
    while t < WIN_START + 3 * W + 30:
        f.write(f"{t:.1f},{DIRS[min(2, max(1, win(t)))]:.2f}\n")
        t += 10.0

# ---- expected per window and cell -------------------------------------------------------------------------
ny = int(round((PLANE["ymax"] - PLANE["ymin"]) / PLANE["cell"]))
nx = int(round((PLANE["xmax"] - PLANE["xmin"]) / PLANE["cell"]))
cells = []
for k in (1, 2):
    d = DIRS[k]
    (xe, xn), (ye, yn) = axes(d)
    lo, hi = WIN_START + (k - 1) * W, WIN_START + k * W
    acc, beams_in = {}, {}
    for name in INS:
        for s in samples[name]:
            if s[6] or not (lo <= s[0] < hi):
                continue
            p = s[7]
            x, y = p[0] * xe + p[1] * xn, p[0] * ye + p[1] * yn
            if abs(p[2] - PLANE["z"]) > PLANE["thick"] / 2:
                continue
            ix, iy = math.floor((x - PLANE["xmin"]) / PLANE["cell"]), math.floor((y - PLANE["ymin"]) / PLANE["cell"])
            if not (0 <= ix < nx and 0 <= iy < ny):
                continue
            a = acc.setdefault((ix, iy), {n: [] for n in INS})
            a[name].append(to_rotor(d, true_wind(s[0], p)))
            bm = beams_in.setdefault((ix, iy), {n: np.zeros(3) for n in INS})
            bm[name] += s[8]
    for (ix, iy), a in sorted(acc.items()):
        if min(len(v) for v in a.values()) < 10:
            continue
        allv = np.array(a["dd-a"] + a["dd-b"])
        xc, yc = PLANE["xmin"] + (ix + 0.5) * PLANE["cell"], PLANE["ymin"] + (iy + 0.5) * PLANE["cell"]
        au, av, cross = amplification(d, (xc * xe + yc * ye, xc * xn + yc * yn, PLANE["z"]))
        h = []
        for name in INS:
            m = beams_in[(ix, iy)][name]
            hx, hy = to_rotor(d, m)
            h.append(np.array([hx, hy]) / math.hypot(hx, hy))
        cross_mean = math.degrees(math.acos(min(1.0, abs(float(h[0] @ h[1])))))
        cells.append(dict(window=k, x_m=xc, y_m=yc, u=float(allv[:, 0].mean()), v=float(allv[:, 1].mean()),
                          u_amp=au, v_amp=av, crossing_deg=cross, crossing_mean_deg=cross_mean, n=[len(a["dd-a"]), len(a["dd-b"])]))

# Good rows of the two scanners whose point lies outside the plane (beyond its x or y extent in the window's rotor
# frame, or more than half the slab thickness from 90 m): the run counts them as outside_planes.
outside = {n: 0 for n in INS}
for name in INS:
    for s in samples[name]:
        if s[6]:
            continue
        d = DIRS[min(2, max(1, win(s[0])))]
        (xe, xn), (ye, yn) = axes(d)
        p = s[7]
        x, y = p[0] * xe + p[1] * xn, p[0] * ye + p[1] * yn
        if abs(p[2] - PLANE["z"]) > PLANE["thick"] / 2 or not (PLANE["xmin"] <= x < PLANE["xmax"]) or not (PLANE["ymin"] <= y < PLANE["ymax"]):
            outside[name] += 1

plan_cells = []
(xe, xn), (ye, yn) = axes(0.0)
for ix in range(nx):
    for iy in range(ny):
        xc, yc = PLANE["xmin"] + (ix + 0.5) * PLANE["cell"], PLANE["ymin"] + (iy + 0.5) * PLANE["cell"]
        pt = (xc * xe + yc * ye, xc * xn + yc * yn, PLANE["z"])
        au, av, cross = amplification(0.0, pt)
        elev = [math.degrees(math.atan2(pt[2] - pos[2], math.hypot(pt[0] - pos[0], pt[1] - pos[1]))) for pos in INS.values()]
        usable = all(e_ >= -10.0 for e_ in elev)
        # README planner rules for a two-scanner plane (w = 0): both beams usable (elevation at least
        # plan.minElevation_deg), u and v amplification at most retrieval.maxAmplification (3), the beams crossing at
        # least plan.minCrossing_deg (30) in the plane of the two resolved components.
        trusted = usable and au <= 3 and av <= 3 and cross >= 30
        plan_cells.append(dict(x_m=xc, y_m=yc, u_amp=au, v_amp=av, crossing_deg=cross, elevations_deg=elev, usable=usable, trusted=trusted))

camp = {
    "name": "harrowfold-heldback",
    "turbine": {"id": "HX-1", "position_m": [0, 0, 0], "hubHeight_m": 90, "rotorDiameter_m": 100, "thrustCoefficient": 0.8,
                "series": {"file": "data/turbine.csv"}},
    "instruments": [
        {"id": "dd-b", "position_m": list(INS["dd-b"]), "files": ["data/ddb.csv"],
         "columns": {"time": "t", "instrument": "id", "azimuth_deg": "az", "elevation_deg": "el", "range_m": "rng_m", "radial_velocity_ms": "vr_ms", "cnr_db": "snr_db"}},
        {"id": "dd-a", "position_m": list(INS["dd-a"]), "files": ["data/dda.csv"],
         "columns": {"time": "t", "instrument": "id", "azimuth_deg": "az", "elevation_deg": "el", "range_m": "rng_m", "radial_velocity_ms": "vr_ms", "cnr_db": "snr_db"}},
        {"id": "vad-n", "role": "profiler", "position_m": VAD.tolist(), "files": ["data/vadn.csv"],
         "profile": {"mode": "vad", "heights_m": {"min": 45, "max": 145, "step": 25}, "sectors": 24}},
    ],
    "inflow": {"kind": "profile", "instrument": "vad-n", "law": "power"},
    "planes": [{"id": "hh", "orientation": "horizontal", "z_m": 90, "y": {"min": -150, "max": 150}, "xRange": {"min": 200, "max": 500},
                "cell_m": [30, 30], "thickness_m": 30}],
    "windows": {"kind": "fixed", "length_s": W, "anchor": "epoch"},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "retrieval": {"maxAmplification": 3, "minSamplesPerInstrument": 3, "twoInstrumentAssumption": "w-zero"},
    "output": {"images": False, "netcdf": False},
    "plan": {"directions_deg": [0], "minElevation_deg": -10, "minCrossing_deg": 30},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)
# The inflow the planes should get from vad-n: its wind projected on the series direction (the rotor axis), the
# true flow being 2 deg off it: u_inf(z) = 8.5 (z / 90)^0.15 cos(2 deg), a power law with exponent 0.15 and hub
# speed 8.5 cos(2 deg) at 90 m (the upstream cone sees no wake).
inflow = dict(alpha=0.15, hub_speed_ms=8.5 * math.cos(math.radians(2.0)))
json.dump({"outside": outside, "inflow": inflow, "window_starts": [WIN_START + (k - 1) * W for k in (1, 2, 3)], "cells": cells, "plan_cells": plan_cells,
           "junk": {n: int(sum(s[6] for s in samples[n])) for n in INS}, "rows": {n: len(samples[n]) for n in INS}},
          open(os.path.join(out, "expected.json"), "w"), indent=1)
