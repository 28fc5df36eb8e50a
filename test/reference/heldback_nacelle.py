"""Held-back nacelle case: a four-beam forward-looking instrument under changing misalignment and shear, written
without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_nacelle.py OUTDIR [--two-beams]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Ottersike" (no real place), flat ground at 0 m. Turbine OS-3 at the origin, hub 95 m, rotor 100 m,
thrust coefficient 0.75 at every speed, so the axial induction factor is a = (1 - sqrt(1 - Ct)) / 2 = 0.25
(one-dimensional momentum theory, Burton et al., Wind Energy Handbook, section 3.2 [from memory]).

Instrument `fwd-4` on the nacelle, mount [1.5, 0.4, 96.5] m (forward, left, up from the tower base), beams given
in another order than upper/lower pairs: (+17, -5), (-17, +7), (-17, -5), (+17, +7) degrees (nacelle-relative
azimuth clockwise, elevation), irregular gates 80, 130, 205, 260, 340 m; reported angles jitter by N(0, 0.2) deg
per row (within the 1-degree beam tolerance) and each row's beam follows its own reported angles. Unix times.
An inclinometer series on its own 2.3-s clock: tilt 0.4 .. 1.4 deg (slowly varying), roll 0.2 deg.

Turbine series (own 3-s clock, ISO times with a +02:00 offset): the nacelle direction
- window 1: wind from 262 deg, the nacelle turns linearly from 268 to 258 deg over the window (changing misalignment);
- window 2: wind from 355 deg, nacelle 3 deg (through north) + N(0, 0.3);
- window 3: wind from 8 deg, nacelle 358 deg + N(0, 0.3);
- window 4: wind from 300 deg, nacelle 300 deg, with the turbine series missing for 260 s (a logger gap: the
  samples between the two rows around it have no nacelle direction).
Hub speeds U_inf 8.4, 10.1, 6.9, 9.0 m/s; shear exponents 0.10, 0.22, 0.32, 0.15 (power law about the hub).

Flow: horizontal, from the window's direction, S(z, x) = U_inf (z / 95)^alpha * r(x), with r(x) = 1 - a (1 - xi /
sqrt(1 + xi^2)), xi = x / R, x = upstream distance along the nacelle axis (the on-axis vortex-sheet induction, as
used by Medici et al. 2011, Wind Energy 14, applied across the whole upstream region: a simplification of this case);
w = 0. Radial velocity = beam . wind + N(0, 0.1) m/s, positive away. Beams: b = (cos e sin a, cos e cos a, sin e)
turned by roll, then tilt, then the nacelle heading (the README's nacelle frame: tilt raises beams along the axis,
roll raises the right-hand beams), origin = tower base + mount turned with the nacelle.
Junk rows: 5 % of rows at CNR -31 dB with random v_r; good rows CNR -12 +/- 3 dB.
Rows are written shuffled within blocks of 8 (out of order by < 2 s).

Expected (expected.json), from the flow written here, per window k = 1..4 (windows of 600 s anchored at
2026-09-02T06:11:53.4Z, data from the anchor):
- yaw misalignment = circular mean of the turbine-series nacelle values in the window minus the wind direction
  (the README's sign: positive when the nacelle is turned clockwise from the wind);
- hub-height speed at 2.5 D = 250 m upstream: U_inf r(250 m); shear exponent alpha; free stream U_inf;
- the samples inside the turbine-series gap (to be rejected as no_nacelle_direction) and the junk rows;
- with --two-beams: the height of the pair's speed at 250 m upstream (from the rows) and the true speed there.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(902)

ANCHOR = 1788329513.4  # 2026-09-02T06:11:53.4Z
W = 600.0
H, D, CT = 95.0, 100.0, 0.75
A_IND = (1 - math.sqrt(1 - CT)) / 2
MOUNT = (1.5, 0.4, 96.5)
BEAMS = [(17.0, -5.0), (-17.0, 7.0), (-17.0, -5.0), (17.0, 7.0)]
TWO = "--two-beams" in sys.argv
if TWO:
    # --two-beams: one pair, opened asymmetrically (25 and -10 deg) and looking 2 deg down: its speed at 2.5 D is
    # measured below the hub, at the height the script reports for it (speed_height_m).
    BEAMS = [(25.0, -2.0), (-10.0, -2.0)]
RANGES = [80.0, 130.0, 205.0, 260.0, 340.0]
WIND = {1: 262.0, 2: 355.0, 3: 8.0, 4: 300.0}
UINF = {1: 8.4, 2: 10.1, 3: 6.9, 4: 9.0}
ALPHA = {1: 0.10, 2: 0.22, 3: 0.32, 4: 0.15}
GAP = (ANCHOR + 3 * W + 170.0, ANCHOR + 3 * W + 430.0)  # no turbine-series rows strictly inside


def ratio(x):
    xi = x / (D / 2)
    return 1 - A_IND * (1 - xi / math.sqrt(1 + xi * xi))


def win(t):
    return int(math.floor((t - ANCHOR) / W)) + 1


def nacelle_true(t):
    k = max(1, min(4, win(t)))
    if k == 1:
        f = (t - ANCHOR) / W
        return 268.0 - 10.0 * f
    return {2: 3.0, 3: 358.0, 4: 300.0}[k]


def tilt_at(t):
    return 0.9 + 0.5 * math.sin((t - ANCHOR) / 377.0)


ROLL = 0.2


def rot_beam(psi, az, el, tilt, roll):
    a, e = math.radians(az), math.radians(el)
    x0, y0, z0 = math.cos(e) * math.sin(a), math.cos(e) * math.cos(a), math.sin(e)
    r, p, h = math.radians(roll), math.radians(tilt), math.radians(psi)
    # roll about the forward axis (raises the right-hand beams), tilt about the right axis (raises the forward beams)
    x1, z1 = math.cos(r) * x0 - math.sin(r) * z0, math.sin(r) * x0 + math.cos(r) * z0
    y2, z2 = math.cos(p) * y0 - math.sin(p) * z1, math.sin(p) * y0 + math.cos(p) * z1
    # heading: instrument north axis (forward) to azimuth psi, clockwise
    e_ = math.cos(h) * x1 + math.sin(h) * y2
    n_ = -math.sin(h) * x1 + math.cos(h) * y2
    return e_, n_, z2


# ---- turbine series: own 3-s clock, ISO with +02:00, the rows inside the gap left out -----------------------
series_t = []
t = ANCHOR - 7.7
while t < ANCHOR + 4 * W + 10:
    if not (GAP[0] < t < GAP[1]):
        series_t.append(t)
    t += 3.0
series_yaw = []
for t in series_t:
    v = nacelle_true(t) if win(t) >= 1 else nacelle_true(ANCHOR)
    if win(t) == 1:
        v = nacelle_true(max(ANCHOR, min(ANCHOR + W, t)))
    if win(t) in (2, 3):
        v += rng.normal(0, 0.3)
    series_yaw.append(v % 360.0)
gap_rows = [t for t in series_t if GAP[0] - 3.5 < t < GAP[1] + 3.5]
GAP_LO = max(t for t in series_t if t <= GAP[0])
GAP_HI = min(t for t in series_t if t >= GAP[1])


def iso_offset(t):
    s = np.datetime64(int(round((t + 7200) * 1000)), "ms")
    return str(s) + "+02:00"


with open(os.path.join(out, "data", "turbine.csv"), "w") as f:
    f.write("time,yaw_deg\n")
    for t, y in zip(series_t, series_yaw):
        f.write(f"{iso_offset(t)},{y:.3f}\n")

# ---- inclinometer series: 2.3-s clock --------------------------------------------------------------------
with open(os.path.join(out, "data", "incl.csv"), "w") as f:
    f.write("stamp,pitch,bank\n")
    t = ANCHOR - 5.0
    while t < ANCHOR + 4 * W + 10:
        f.write(f"{t:.2f},{tilt_at(t):.4f},{ROLL:.4f}\n")
        t += 2.3


def interp_yaw(t):
    """The nacelle direction between series rows (linear, circular), as a turbine logger's rows describe it."""
    i = np.searchsorted(series_t, t) - 1
    i = max(0, min(len(series_t) - 2, i))
    t0, t1 = series_t[i], series_t[i + 1]
    y0, y1 = series_yaw[i], series_yaw[i + 1]
    d = (y1 - y0 + 180) % 360 - 180
    return (y0 + (t - t0) / (t1 - t0) * d) % 360


# ---- samples -------------------------------------------------------------------------------------------------
rows = []
t = ANCHOR + 0.37
b = 0
gap_rejected = 0
while t < ANCHOR + 4 * W:
    az0, el0 = BEAMS[b % len(BEAMS)]
    az, el = az0 + rng.normal(0, 0.2), el0 + rng.normal(0, 0.2)
    psi = interp_yaw(t)
    tilt = tilt_at(t)
    n = rot_beam(psi, az, el, tilt, ROLL)
    s, c = math.sin(math.radians(psi)), math.cos(math.radians(psi))
    o = (MOUNT[0] * s - MOUNT[1] * c, MOUNT[0] * c + MOUNT[1] * s, MOUNT[2])
    k = win(t)
    dr = math.radians(WIND[k])
    ingap = GAP_LO < t < GAP_HI
    for r in RANGES:
        p = (o[0] + r * n[0], o[1] + r * n[1], o[2] + r * n[2])
        # upstream distance along the nacelle axis
        x_up = p[0] * s + p[1] * c
        spd = UINF[k] * (p[2] / H) ** ALPHA[k] * ratio(x_up)
        u, v = -spd * math.sin(dr), -spd * math.cos(dr)
        junk = rng.random() < 0.05
        if junk:
            vr, cnr = rng.uniform(-15, 15), -31 + rng.normal(0, 0.8)
        else:
            vr, cnr = n[0] * u + n[1] * v + rng.normal(0, 0.1), min(-2.0, -12 + rng.normal(0, 3))
        if ingap:
            gap_rejected += 1
        rows.append((t, az % 360.0, el, r, vr, cnr, junk, ingap, p[2], r * math.cos(math.radians(el)) * math.cos(math.radians(az))))
    b += 1
    t += 0.25 + rng.uniform(-0.05, 0.05)

# shuffle within blocks of 8 rows
order = []
for i in range(0, len(rows), 8):
    blk = list(range(i, min(i + 8, len(rows))))
    rng.shuffle(blk)
    order += blk
with open(os.path.join(out, "data", "fwd4.csv"), "w") as f:
    f.write("instrument,time,range_m,azimuth_deg,elevation_deg,cnr_db,radial_velocity_ms\n")
    for i in order:
        r = rows[i]
        f.write(f"fwd-4,{r[0]:.3f},{r[3]:.1f},{r[1]:.3f},{r[2]:.3f},{r[5]:.2f},{r[4]:.4f}\n")

with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = ANCHOR - 30
    while t < ANCHOR + 4 * W + 60:
        f.write(f"{t:.1f},{WIND[max(1, min(4, win(t)))]:.2f}\n")
        t += 60


def circmean(a):
    a = np.radians(np.asarray(a))
    return float(np.degrees(np.arctan2(np.sin(a).mean(), np.cos(a).mean())) % 360)


def speed_height(lo, hi):
    """Two beams: the height of the pair's speed at 250 m upstream. Per gate the mean height and the mean upstream
    distance (r cos(el) cos(az) of the reported angles, the README's definition) of the good rows in the window,
    then linear interpolation in upstream distance between the gates around 250 m."""
    g = []
    for r_ in RANGES:
        sel = [x for x in rows if x[3] == r_ and not x[6] and not x[7] and lo <= x[0] < hi]
        g.append((float(np.mean([x[9] for x in sel])), float(np.mean([x[8] for x in sel]))))
    g.sort()
    for (u0, z0), (u1, z1) in zip(g, g[1:]):
        if u0 <= 250.0 <= u1:
            return z0 + (250.0 - u0) / (u1 - u0) * (z1 - z0)
    return float("nan")


exp = []
for k in (1, 2, 3, 4):
    lo, hi = ANCHOR + (k - 1) * W, ANCHOR + k * W
    ys = [y for t, y in zip(series_t, series_yaw) if lo <= t < hi]
    nac = circmean(ys)
    exp.append(dict(window=k, start_s=lo, wind_deg=WIND[k], nacelle_deg=nac, yaw_misalignment_deg=(nac - WIND[k] + 180) % 360 - 180,
                    hub_speed_ms=UINF[k] * ratio(250.0), free_stream_ms=UINF[k], alpha=ALPHA[k], ratio_250=ratio(250.0)))
    if TWO:
        zs = speed_height(lo, hi)
        exp[-1].update(speed_height_m=zs, speed_at_height_ms=UINF[k] * (zs / H) ** ALPHA[k] * ratio(250.0))

camp = {
    "name": "ottersike-heldback",
    "turbine": {"id": "OS-3", "position_m": [0, 0, 0], "hubHeight_m": H, "rotorDiameter_m": D, "thrustCoefficient": CT,
                "series": {"file": "data/turbine.csv"}},
    "instruments": [
        {"id": "fwd-4", "role": "nacelle", "mount_m": list(MOUNT), "files": ["data/fwd4.csv"],
         "orientationSeries": {"file": "data/incl.csv", "columns": {"time": "stamp", "tilt_deg": "pitch", "roll_deg": "bank"}},
         "nacelle": {"beams": [{"azimuth_deg": a, "elevation_deg": e} for a, e in BEAMS], "ranges_m": RANGES, "distance_D": 2.5}},
    ],
    "planes": [],
    "windows": {"kind": "fixed", "length_s": W, "anchor": "2026-09-02T06:11:53.4Z"},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "output": {"images": False, "netcdf": False},
    "plan": {"directions_deg": [355]},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)
json.dump({"anchor_s": ANCHOR, "windows": exp, "junk": int(sum(r[6] for r in rows)), "rows": len(rows),
           "gap_rows": int(sum(r[7] for r in rows)), "gap_junk": int(sum(r[7] and r[6] for r in rows)),
           "gap": [GAP_LO, GAP_HI]}, open(os.path.join(out, "expected.json"), "w"), indent=1)
