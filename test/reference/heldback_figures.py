"""Held-back cases for the figures and the report (issues 4 and 15), written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_figures.py OUTDIR
Writes OUTDIR/<case>/campaign.yaml (JSON text, which YAML reads), OUTDIR/<case>/data/*.csv and
OUTDIR/expected.json.

Invented site "Brackwater Sill" (no real place), flat ground at 0 m. Turbine BS-2 at the origin, hub 80 m, rotor
80 m. Wind direction fixed at 250 deg (from), so the rotor frame is turned: x downstream points to azimuth 70 deg,
y (left looking downstream) to azimuth 340 deg, z up. Rotor-frame axes in the site frame (east, north, up):
x = (sin 70, cos 70, 0), y = (-cos 70, sin 70, 0) (the left of x), z = (0, 0, 1).

Wind in the rotor frame (a uniform in-plane flow of known sense, so that arrows have a known direction):
  u = S(z) (1 - 0.35 exp(-(y - 12)^2 / (2 30^2) - (z - 78)^2 / (2 26^2))), S(z) = 9 (z / 80)^0.12 m/s
  window 1: v = +1.6 m/s (to the left), w = +0.9 m/s (up); window 2: v = -1.2 m/s (to the right), w = -0.7 m/s.
The campaign's inflow is fixed at 9 m/s at 80 m with the power law alpha 0.12, so u/u_inf is the bracket above.

Cases (all share the turbine and the four scanners; every row aims at its own random point of the plane's area, so
every row has its own azimuth, elevation and range; one sample per row):
- `cross`: cross plane at x = 240 m, y in [-97.5, 97.5] m, z in [5, 155] m, cells 15 m (y) x 25 m (z), non-square;
  no samples in the upper left corner (y > 52.5 m and z > 105 m: 2 x 2 cells no data). Two listed windows with long
  unicode labels and a gap between them; instrument files with Unix seconds, ISO 8601 with milliseconds and ISO
  without fraction; 5 % junk rows at CNR -26 +/- 1 dB with random radial velocities (good rows -8 +/- 3 dB).
  Not georeferenced (no site.origin_wgs84).
- `narrow`: a cross plane one cell wide (y in [-10, 10] m, one 20-m cell) and 3 cells high (z 50..110 m, 20 m),
  one window over the whole record, 24,000 samples in each cell (about 22,800 good: more than 20,000), georeferenced
  (site.origin_wgs84 in open ocean).
- `twoplanes`: two cross planes, at x = 240 m with 40-m cells (5 x 4) and at x = 400 m with 8-m cells (12 x 10),
  one window over the whole record (the arrows of a run share one length; the fine plane must thin its arrows).
- `horizontal`: a horizontal plane at 80 m (y -200..200 m, x -300..900 m, cells 20 m x 25 m) with samples only in
  y -120..120 m, x 100..700 m, and a second turbine BS-3 400 m straight downstream of BS-2 (rotor frame x = 400,
  y = 0), one window over the record.
- `strong`: the `cross` data with the inflow fixed at 1.5 m/s, so u/u_inf is between 3.9 and 6.3 (extreme values).

Expected (expected.json), per case: the true in-plane (v, w) per window, the cells without samples, and the
number of good samples per cell of `narrow`.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
rng = np.random.default_rng(4150)

T0 = 1796000000.0  # 2026-11-29T00:53:20Z
DIR = 250.0
XE = np.array([math.sin(math.radians(DIR + 180)), math.cos(math.radians(DIR + 180)), 0.0])
YE = np.array([-XE[1], XE[0], 0.0])
ZE = np.array([0.0, 0.0, 1.0])
INS = {
    "bs-up": np.array([0.0, 0.0, 0.0]) - 520 * XE + np.array([0, 0, 2.0]),
    "bs-left": 240 * XE + 380 * YE + np.array([0, 0, 1.5]),
    "bs-right": 240 * XE - 380 * YE + np.array([0, 0, 1.5]),
    "bs-under": 300 * XE + 5 * YE + np.array([0, 0, 1.0]),
}
INFLOW = dict(speed=9.0, height=80.0, alpha=0.12)
INPLANE = {1: (1.6, 0.9), 2: (-1.2, -0.7)}


def S(z):
    return 9.0 * (z / 80.0) ** 0.12


def wind_rotor(y, z, k):
    g = np.exp(-((y - 12.0) ** 2) / (2 * 30.0**2) - ((z - 78.0) ** 2) / (2 * 26.0**2))
    v, w = INPLANE[k]
    return S(z) * (1 - 0.35 * g), np.full_like(y, v), np.full_like(y, w)


def rows_for(ins, times, x, y, z, k):
    """Rows of one instrument aiming at rotor-frame points (x, y, z) at the given times in window k."""
    p = np.outer(x, XE) + np.outer(y, YE) + np.outer(z, ZE)
    d = p - INS[ins]
    rng_m = np.linalg.norm(d, axis=1)
    unit = d / rng_m[:, None]
    az = np.degrees(np.arctan2(unit[:, 0], unit[:, 1])) % 360.0
    el = np.degrees(np.arcsin(unit[:, 2]))
    u, v, w = wind_rotor(y, z, k)
    wind = np.outer(u, XE) + np.outer(v, YE) + np.outer(w, ZE)
    vr = np.sum(unit * wind, axis=1) + rng.normal(0, 0.1, len(x))
    cnr = rng.normal(-8, 3, len(x))
    junk = rng.random(len(x)) < 0.05
    vr[junk] = rng.uniform(-15, 15, junk.sum())
    cnr[junk] = rng.normal(-26, 1, junk.sum())
    return times, az, el, rng_m, vr, cnr, junk


def fmt_time(t, style):
    if style == "unix":
        return f"{t:.3f}"
    s = np.datetime64(int(round(t * 1000)), "ms").astype(str) + "Z"
    return s if style == "iso_ms" else s[:19] + "Z"


def write_csv(path, recs, style):
    with open(path, "w", encoding="utf-8") as fh:
        fh.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
        for t, ins, az, el, r, vr, cnr in sorted(recs, key=lambda q: q[0]):
            fh.write(f"{fmt_time(t, style)},{ins},{az:.4f},{el:.4f},{r:.2f},{vr:.3f},{cnr:.1f}\n")


def campaign(name, planes, windows, inflow_speed, extra=None):
    c = {
        "name": name,
        "description": "Held-back figure case ⟨Brackwater Sill⟩ — Σ wake & <b>not bold</b> \"quoted\" ✓",
        "site": {"groundLevel_m": 0},
        "turbine": {"id": "BS-2", "position_m": [0, 0, 0], "hubHeight_m": 80, "rotorDiameter_m": 80, "thrustCoefficient": 0.78},
        "instruments": [
            {"id": i, "position_m": [float(v) for v in INS[i]], "kind": "pulsed", "files": [f"data/{i}.csv"]} for i in INS
        ],
        "planes": planes,
        "qc": {"cnr_db": {"min": "auto", "max": 5}, "radialVelocityLimit_ms": 30, "groundClearance_m": 2},
        "windows": windows,
        "windDirection": {"kind": "fixed", "deg": DIR},
        "retrieval": {"maxAmplification": 4, "minSamplesPerInstrument": 3},
        "inflow": {"kind": "fixed", "speed_ms": inflow_speed, "height_m": 80, "law": "power", "alpha": INFLOW["alpha"]},
        "output": {"dir": "out", "netcdf": False, "figures": {"windowImages": "all"}},
    }
    if extra:
        c.update(extra)
    return c


expected = {"inplane": {str(k): v for k, v in INPLANE.items()}, "rotor_axes": {"x": XE.tolist(), "y": YE.tolist()}}

# ---- cross (and strong, same data) -------------------------------------------------------------------------------
Y0, Y1, Z0, Z1 = -97.5, 97.5, 5.0, 155.0
styles = {"bs-up": "unix", "bs-left": "iso_ms", "bs-right": "iso_s", "bs-under": "unix"}
spans = {1: (T0, T0 + 600), 2: (T0 + 900, T0 + 1500)}
recs = {i: [] for i in INS}
for k, (a, b) in [(1, spans[1]), (2, spans[2]), (1, (T0 + 620, T0 + 880))]:  # the last: data in the gap
    for ins in INS:
        n = 5200 if b - a > 300 else 600
        y = rng.uniform(Y0, Y1, 3 * n)
        z = rng.uniform(Z0, Z1, 3 * n)
        keep = ~((y > 52.5) & (z > 105.0))
        y, z = y[keep][:n], z[keep][:n]
        x = 240.0 + rng.uniform(-8, 8, n)
        times = np.sort(rng.uniform(a + 0.5, b - 0.5, n))
        t, az, el, r, vr, cnr, _ = rows_for(ins, times, x, y, z, k)
        recs[ins] += [(t[j], ins, az[j], el[j], r[j], vr[j], cnr[j]) for j in range(n)]
for case, speed in [("cross", 9.0), ("strong", 1.5)]:
    d = os.path.join(out, case)
    os.makedirs(os.path.join(d, "data"), exist_ok=True)
    for ins in INS:
        write_csv(os.path.join(d, "data", f"{ins}.csv"), recs[ins], styles[ins])
    iso = lambda t: fmt_time(t, "iso_s")
    windows = {
        "kind": "list",
        "items": [
            {"start": iso(spans[1][0]), "end": iso(spans[1][1]), "label": "Ωmega-Lauf № 1 — yaw +0° (北風) with a deliberately very long label that will not fit on one line"},
            {"start": iso(spans[2][0]), "end": iso(spans[2][1]), "label": "Ωmega-Lauf № 2 <i>&amp;</i> \"ünïcödé\""},
        ],
    }
    plane = {"id": "x3D", "x_m": 240, "y": {"min": Y0, "max": Y1}, "z": {"min": Z0, "max": Z1}, "cell_m": [15, 25], "thickness_m": 16}
    with open(os.path.join(d, "campaign.yaml"), "w", encoding="utf-8") as fh:
        json.dump(campaign(f"hb-figures-{case}", [plane], windows, speed), fh, ensure_ascii=False, indent=1)
ys = Y0 + 7.5 + 15 * np.arange(13)
zs = Z0 + 12.5 + 25 * np.arange(6)
expected["cross"] = {
    "empty_cells": [[float(yy), float(zz)] for zz in zs for yy in ys if yy > 52.5 and zz > 105.0],
    "y_centres": ys.tolist(),
    "z_centres": zs.tolist(),
}
# u/u_inf of the strong case at the cell centres (u / (1.5 (z/80)^0.12)): the range the colour scale must cover.
YY, ZZ = np.meshgrid(ys, zs)
un = wind_rotor(YY, ZZ, 1)[0] / (1.5 * (ZZ / 80.0) ** 0.12)
expected["strong"] = {"u_norm_min": float(un.min()), "u_norm_max": float(un.max())}

# ---- narrow: one cell wide, > 20,000 samples per cell -----------------------------------------------------------
d = os.path.join(out, "narrow")
os.makedirs(os.path.join(d, "data"), exist_ok=True)
N_CELL = 24000
recs = {i: [] for i in INS}
good_per_cell = np.zeros(3, dtype=int)
for ins in INS:
    n = N_CELL // 4  # each instrument a quarter of each cell's samples
    y = rng.uniform(-9.5, 9.5, 3 * n)
    z = np.repeat(60.0 + 20 * np.arange(3), n) + rng.uniform(-9.5, 9.5, 3 * n)
    x = 240.0 + rng.uniform(-5, 5, 3 * n)
    times = np.sort(rng.uniform(T0, T0 + 1200, 3 * n))
    perm = rng.permutation(3 * n)
    t, az, el, r, vr, cnr, junk = rows_for(ins, times, x, y[perm], z[perm], 1)
    cell = np.floor((z[perm] - 50.0) / 20.0).astype(int)
    for c in range(3):
        good_per_cell[c] += int(np.sum((cell == c) & ~junk))
    recs[ins] = [(t[j], ins, az[j], el[j], r[j], vr[j], cnr[j]) for j in range(3 * n)]
    write_csv(os.path.join(d, "data", f"{ins}.csv"), recs[ins], "unix")
plane = {"id": "thin", "x_m": 240, "y": {"min": -10, "max": 10}, "z": {"min": 50, "max": 110}, "cell_m": [20, 20], "thickness_m": 12}
extra = {"site": {"groundLevel_m": 0, "origin_wgs84": {"lat_deg": -52.5, "lon_deg": -140.25, "alt_m": 0}}}
with open(os.path.join(d, "campaign.yaml"), "w", encoding="utf-8") as fh:
    json.dump(campaign("hb-figures-narrow", [plane], {"kind": "record"}, 9.0, extra), fh, ensure_ascii=False, indent=1)
expected["narrow"] = {"good_per_cell": good_per_cell.tolist()}

# ---- twoplanes: two cross planes with very different cells, one window over the record -------------------------
d = os.path.join(out, "twoplanes")
os.makedirs(os.path.join(d, "data"), exist_ok=True)
PLANES2 = [
    {"id": "coarse", "x_m": 240, "y": {"min": -100, "max": 100}, "z": {"min": 0, "max": 160}, "cell_m": [40, 40], "thickness_m": 16},
    {"id": "fine", "x_m": 400, "y": {"min": -48, "max": 48}, "z": {"min": 40, "max": 120}, "cell_m": [8, 8], "thickness_m": 6},
]
for ins in INS:
    rows = []
    for pl, n in zip(PLANES2, (3000, 6000)):
        y = rng.uniform(pl["y"]["min"], pl["y"]["max"], n)
        z = rng.uniform(max(pl["z"]["min"], 3.0), pl["z"]["max"], n)
        x = pl["x_m"] + rng.uniform(-0.4, 0.4, n) * pl["thickness_m"]
        times = np.sort(rng.uniform(T0, T0 + 900, n))
        t, az, el, r, vr, cnr, _ = rows_for(ins, times, x, y, z, 1)
        rows += [(t[j], ins, az[j], el[j], r[j], vr[j], cnr[j]) for j in range(n)]
    write_csv(os.path.join(d, "data", f"{ins}.csv"), rows, "unix")
with open(os.path.join(d, "campaign.yaml"), "w", encoding="utf-8") as fh:
    json.dump(campaign("hb-figures-twoplanes", PLANES2, {"kind": "record"}, 9.0), fh, ensure_ascii=False, indent=1)

# ---- horizontal: a horizontal plane at hub height with a second turbine in it, data in part of the plane ---------
d = os.path.join(out, "horizontal")
os.makedirs(os.path.join(d, "data"), exist_ok=True)
HP = {"id": "hub", "orientation": "horizontal", "z_m": 80, "y": {"min": -200, "max": 200}, "xRange": {"min": -300, "max": 900}, "cell_m": [20, 25], "thickness_m": 20}
DATA = dict(ymin=-120.0, ymax=120.0, xmin=100.0, xmax=700.0)
for ins in INS:
    n = 6000
    y = rng.uniform(DATA["ymin"], DATA["ymax"], n)
    x = rng.uniform(DATA["xmin"], DATA["xmax"], n)
    z = 80.0 + rng.uniform(-8, 8, n)
    times = np.sort(rng.uniform(T0, T0 + 900, n))
    t, az, el, r, vr, cnr, _ = rows_for(ins, times, x, y, z, 1)
    write_csv(os.path.join(d, "data", f"{ins}.csv"), [(t[j], ins, az[j], el[j], r[j], vr[j], cnr[j]) for j in range(n)], "iso_ms")
c = campaign("hb-figures-horizontal", [HP], {"kind": "record"}, 9.0)
second = 400.0 * XE  # 400 m straight downstream of BS-2 in the wind of 250 deg
c.pop("turbine")
c["turbines"] = [
    {"id": "BS-2", "position_m": [0, 0, 0], "hubHeight_m": 80, "rotorDiameter_m": 80, "thrustCoefficient": 0.78},
    {"id": "BS-3", "position_m": [float(second[0]), float(second[1]), 0], "hubHeight_m": 80, "rotorDiameter_m": 80, "thrustCoefficient": 0.78},
]
with open(os.path.join(d, "campaign.yaml"), "w", encoding="utf-8") as fh:
    json.dump(c, fh, ensure_ascii=False, indent=1)
expected["horizontal"] = {"data": DATA, "turbines": {"BS-2": [0.0, 0.0], "BS-3": [400.0, 0.0]}}

with open(os.path.join(out, "expected.json"), "w") as fh:
    json.dump(expected, fh, indent=1)
