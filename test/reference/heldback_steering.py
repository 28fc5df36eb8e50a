"""A wake-steering campaign written without wakeplane's code (numpy only), as a reviewer's held-back case.

Usage: python3 test/reference/heldback_steering.py OUTDIR [--minutes-scale S] [--direction D] [--direction-every S]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site: one turbine at the origin (hub 100 m, rotor 120 m), wind from exactly D degrees (default 270, so
the rotor frame is x = east, y = north, z = up; the site is turned with D: instruments stand at the same rotor-frame
places, and with D near 0 every direction and nacelle value wraps through north). One cross plane at x = 600 m
(5 D), y in [-180, 180] m, z in [10, 190] m, cells 30 m x 30 m, slab 30 m thick.

Yaw schedule: steps of 17, 23, 31, 19 and 29 minutes (times the scale) starting at 2026-05-09T10:07:43.6Z (aligned
to nothing), yaw offsets 0, +20, -15, +10, 0 degrees; the nacelle turns between steps in a linear ramp of 40 s.
Hub speed per step 7.2, 8.6, 9.4, 8.0, 7.6 m/s.

Flow: u = U (z / 100)^0.14 (1 - 0.35 exp(-((y - yc)^2 + (z - 100)^2) / (2 * 45^2))), v = w = 0 in the rotor frame,
with the wake centre yc = 2 m per degree of yaw offset (positive offset: wake to +y, the README convention) taken at
the time the air left the rotor: yc(t) = 2 * gamma(t - 600 / U). The hub speed changes at the step boundaries.

Turbine series: its own clock, one row every 7 s at 3.3 s past a whole 7 s from the schedule start (no row on a
step boundary); nacelle = D + gamma(t) + N(0, 0.5) deg; power_kw = 2000 (U / 10)^3 cos^2(gamma); a 4-minute gap
(rows missing) in the middle of step 3; a logger dropout 40 % into step 2 (an empty yaw cell, then NaN, then a
power of nan). Direction series: one row every 60 s at 30 s past the minute, D + N(0, 0.3) deg (with --direction-every S, one row every S seconds instead, as a met mast's 10-minute means).

Instruments: three lidars, each steering its beam along its own Lissajous path over the plane (so every row has
its own azimuth, elevation and range), one sample per row at irregular times (gaps uniform in [0.6, 1.4] / 4 s);
radial velocity = wind along the beam (positive away) + N(0, 0.1) m/s; CNR -10 dB.

expected.json holds, computed here from the rows written: the segment spans by the README's rule (a span runs from
the first to the last row of one state, less the settle time; rows in a ramp whose offset is more than the
tolerance from every level are transitions; rows without a yaw are skipped; rows more than maxGap_s apart are a
gap), with each span's level, step, window means of yaw offset, direction and power, and the wake centre as the
window's rotor frame sees it; the gap seconds; and the experimenter's log (data/log.csv) with its windows.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
scale = float(sys.argv[sys.argv.index("--minutes-scale") + 1]) if "--minutes-scale" in sys.argv else 1.0
WD = float(sys.argv[sys.argv.index("--direction") + 1]) if "--direction" in sys.argv else 270.0
DIR_EVERY = int(sys.argv[sys.argv.index("--direction-every") + 1]) if "--direction-every" in sys.argv else 60
# Rotor frame of the true wind: x downstream (towards azimuth WD + 180), y to its left, z up; site = x d + y l.
DE, DN = math.sin(math.radians(WD + 180)), math.cos(math.radians(WD + 180))
LE, LN = -DN, DE


def wrap180(a):
    return (a + 180.0) % 360.0 - 180.0


def circmean(a):
    a = np.radians(np.asarray(a, dtype=float))
    return float(np.degrees(np.arctan2(np.sin(a).mean(), np.cos(a).mean())) % 360.0)
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(20260509)

T0 = 1778321263.6  # 2026-05-09T10:07:43.6Z
assert abs(T0 - (np.datetime64("2026-05-09T10:07:43.6") - np.datetime64("1970-01-01T00:00:00")) / np.timedelta64(1, "s")) < 1e-6
STEP_MIN = [17, 23, 31, 19, 29]
LEVELS = [0, 20, -15, 10, 0]
SPEEDS = [7.2, 8.6, 9.4, 8.0, 7.6]
RAMP = 40.0
PLANE_X, HUB, DEF, SIG = 600.0, 100.0, 0.35, 45.0
starts = [T0]
for m in STEP_MIN:
    starts.append(starts[-1] + 60 * m * scale)
END = starts[-1]


def step_of(t):
    return int(np.clip(np.searchsorted(starts, t, side="right") - 1, 0, len(LEVELS) - 1))


def gamma(t):
    """Yaw offset (deg): a linear ramp of RAMP s from the previous level after each step start."""
    k = step_of(t)
    if k == 0 or t - starts[k] >= RAMP:
        return LEVELS[k]
    f = (t - starts[k]) / RAMP
    return LEVELS[k - 1] + f * (LEVELS[k] - LEVELS[k - 1])


def wind(y, z, t):
    U = SPEEDS[step_of(t)]
    yc = 2.0 * gamma(t - PLANE_X / U)
    g = math.exp(-((y - yc) ** 2 + (z - HUB) ** 2) / (2 * SIG * SIG))
    return U * (max(z, 1.0) / HUB) ** 0.14 * (1 - DEF * g)


def iso(t):
    s = np.datetime64(int(round(t * 1000)), "ms")
    return str(s) + "Z"


# Turbine series: own rate and alignment, with a gap in step 3 (index 2).
gap = (starts[2] + 0.5 * (starts[3] - starts[2]) - 120, starts[2] + 0.5 * (starts[3] - starts[2]) + 120)
rows = []
t = T0 - 120 + 3.3
while t < END + 120:
    if not (gap[0] <= t < gap[1]):
        g = gamma(t)
        U = SPEEDS[step_of(t)]
        rows.append((t, (WD + g + rng.normal(0, 0.5)) % 360.0, 2000 * (U / 10) ** 3 * math.cos(math.radians(g)) ** 2, U))
    t += 7.0
# Logger dropouts in step 2 (index 1), 40 % into it: an empty yaw cell, then "NaN" (what pandas and numpy write
# for a missing float); the power of the next row is "nan". The yaw values are rounded to 0.01 as written.
drop = int(np.searchsorted([r[0] for r in rows], starts[1] + 0.4 * (starts[2] - starts[1])))
rows = [(t, round(y, 2), p, U) for t, y, p, U in rows]
text = []
for i, (t, y, p, U) in enumerate(rows):
    ys = "" if i == drop else "NaN" if i == drop + 1 else f"{y:.2f}"
    ps = "nan" if i == drop + 2 else f"{p:.1f}"
    text.append(f"{iso(t)},{ys},{ps}")
rows = [(t, None if drop <= i <= drop + 1 else y, p, U) for i, (t, y, p, U) in enumerate(rows)]
with open(os.path.join(out, "data", "turbine.csv"), "w") as f:
    f.write("time,yaw_deg,power_kw\n" + "\n".join(text) + "\n")
direction = []
with open(os.path.join(out, "data", "wind_direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = math.floor((T0 - 120) / 60) * 60 + 30
    while t < END + 120:
        d = round((WD + rng.normal(0, 0.3)) % 360.0, 2)  # drawn every minute whatever is written (same stream)
        if (t - 30) % DIR_EVERY == 0 or t + 60 >= END + 120:
            direction.append((t, d))
            f.write(f"{int(t)},{d:.2f}\n")
        t += 60

# Expected segment spans (the README's rule): rows whose offset is within TOL of a level, grouped by level without
# gaps > MAXGAP; rows without a yaw are skipped (the rows around them decide). The wind direction of a row is the
# nearest direction-series row (within MAXGAP), as the README says for segments.
TOL, MAXGAP, SETTLE = 3.0, 60.0, 150.0
levels_set = sorted(set(LEVELS))
spans = []
cur = None
prev_t = None
dir_t = np.array([d[0] for d in direction])
dir_v = np.array([d[1] for d in direction])


def window_direction(a, b):
    """README: the vector mean of the direction rows in [a, b); with none, the nearest row within one window length."""
    inside = dir_v[(dir_t >= a) & (dir_t < b)]
    if inside.size:
        return circmean(inside)
    k = int(np.argmin(abs(dir_t - 0.5 * (a + b))))
    return float(dir_v[k]) if abs(dir_t[k] - 0.5 * (a + b)) <= b - a else float("nan")


for t, y, p, U in rows:
    if y is None:
        continue
    off = wrap180(y - dir_v[np.argmin(abs(dir_t - t))])
    lv = [l for l in levels_set if abs(off - l) <= TOL]
    lv = min(lv, key=lambda l: abs(off - l)) if lv else None
    if cur is not None and lv == cur["level"] and t - prev_t <= MAXGAP:
        cur["last"] = t
    else:
        if cur is not None and cur["level"] is not None:
            spans.append(cur)
        cur = {"level": lv, "first": t, "last": t}
    prev_t = t
if cur is not None and cur["level"] is not None:
    spans.append(cur)
spans = [s for s in spans if s["last"] - s["first"] - SETTLE >= 300]
for s in spans:
    s["start_s"] = s["first"] + SETTLE
    s["end_s"] = s["last"]
    k = step_of(0.5 * (s["start_s"] + s["end_s"]))
    s["step"] = k
    s["yc_m"] = 2.0 * LEVELS[k]
    s["speed_ms"] = SPEEDS[k]
    s["power_kw"] = float(np.mean([p for i, (t, y, p, U) in enumerate(rows) if s["start_s"] <= t < s["end_s"] and i != drop + 2]))
    # the window's wind direction: vector mean of the direction rows inside it; its nacelle: vector mean of the yaw
    # rows; the yaw offset their difference (README conventions)
    wd = window_direction(s["start_s"], s["end_s"])
    s["direction_deg"] = wd
    s["yaw_offset_deg"] = wrap180(circmean([y for t, y, p, U in rows if y is not None and s["start_s"] <= t < s["end_s"]]) - wd)
    # The wake centre as the window's rotor frame sees it: that frame is the true one turned by d = wd - WD
    # (clockwise); the true centre (x = 600, y = yc) has y' = 600 sin(d) + yc cos(d) in it.
    d = math.radians(wrap180(wd - WD))
    s["yc_frame_m"] = PLANE_X * math.sin(d) + s["yc_m"] * math.cos(d)

# Samples.
INSTR = [
    ("west", (450.0, 430.0, 2.0), (41.3, 12.7), 0.3),
    ("east", (780.0, -400.0, 1.0), (37.9, 13.9), 1.9),
    ("back", (1250.0, 60.0, 3.0), (29.3, 9.7), 4.1),
]
nrows = 0
for name, (pe, pn, pu), (p1, p2), ph in INSTR:
    lines = ["time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db"]
    t = T0 - 90 + rng.uniform(0, 0.25)
    while t < END + 90:
        y = 170 * math.sin(2 * math.pi * t / p1 + ph)
        z = 100 + 88 * math.sin(2 * math.pi * t / p2)
        x = PLANE_X + rng.uniform(-12, 12)
        # rotor-frame differences, then the site frame (east, north)
        dx, dy, du = x - pe, y - pn, z - pu
        de, dn = dx * DE + dy * LE, dx * DN + dy * LN
        r = math.sqrt(de * de + dn * dn + du * du)
        az = (math.degrees(math.atan2(de, dn)) + 360) % 360
        el = math.degrees(math.asin(du / r))
        vr = wind(y, z, t) * dx / r + rng.normal(0, 0.1)  # wind along x: u * (beam . x axis)
        lines.append(f"{t:.3f},{name},{az:.4f},{el:.4f},{r:.2f},{vr:.3f},-10.0")
        t += rng.uniform(0.6, 1.4) / 4
    nrows += len(lines) - 1
    with open(os.path.join(out, "data", f"{name}.csv"), "w") as f:
        f.write("\n".join(lines) + "\n")

campaign = {
    "name": "heldback-steering",
    "turbine": {"id": "HB-1", "position_m": [0, 0, 0], "hubHeight_m": HUB, "rotorDiameter_m": 120,
                "thrustCoefficient": 0.78, "series": {"file": "data/turbine.csv"}},
    "instruments": [{"id": n, "position_m": [round(p[0] * DE + p[1] * LE, 6), round(p[0] * DN + p[1] * LN, 6), p[2]],
                     "files": [f"data/{n}.csv"]} for n, p, _, _ in INSTR],
    "planes": [{"id": "x5", "x_m": PLANE_X, "y": {"min": -180, "max": 180}, "z": {"min": 10, "max": 190},
                "cell_m": [30, 30], "thickness_m": 30}],
    "qc": {"cnr_db": {"min": -25, "max": 5}},
    "windows": {"kind": "segments", "levels_deg": levels_set, "tolerance_deg": TOL, "maxGap_s": MAXGAP,
                "settle_s": SETTLE, "minDuration_s": 300},
    "windDirection": {"kind": "series", "file": "data/wind_direction.csv"},
    "inflow": {"kind": "plane", "law": "power"},
    "output": {"images": False, "netcdf": True, "writeRejected": True},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(campaign, f, indent=1)
# The experimenter's log: each step from 3 minutes after its start to 1 minute before its end; ISO times with a
# +02:00 offset on odd lines, Unix seconds on even ones; labels with commas (quoted).
log = []
with open(os.path.join(out, "data", "log.csv"), "w") as f:
    f.write("start,end,label\n")
    for k in range(len(LEVELS)):
        a, b = starts[k] + 180, starts[k + 1] - 60
        label = f"step {k + 1}, yaw {LEVELS[k]:+d}"
        if k % 2 == 0:
            f.write(f"{iso(a + 7200)[:-1]}+02:00,{iso(b + 7200)[:-1]}+02:00,\"{label}\"\n")
        else:
            f.write(f"{a:.1f},{b:.1f},\"{label}\"\n")
        log.append({"start_s": a, "end_s": b, "label": label, "yc_m": 2.0 * LEVELS[k],
                    "direction_deg": window_direction(a, b), "true_direction_deg": WD})
valid_t = [t for t, y, p, U in rows if y is not None]
gap_s = float(sum(b - a for a, b in zip(valid_t, valid_t[1:]) if b - a > MAXGAP))
with open(os.path.join(out, "expected.json"), "w") as f:
    json.dump({"T0": T0, "step_starts": starts, "levels": LEVELS, "speeds": SPEEDS, "gap": gap, "spans": spans,
               "rows": nrows, "series_rows": len(rows), "gap_s": gap_s, "log": log}, f, indent=1)
print(json.dumps([(s["level"], round(s["start_s"], 1), round(s["end_s"], 1)) for s in spans]), nrows)
