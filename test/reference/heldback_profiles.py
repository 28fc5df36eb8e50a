"""Held-back profiler cases (VAD cone and DBS beams) written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_profiles.py OUTDIR [--netcdf]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site "Brackenlow" (no real place), flat ground at 0 m. Wind: horizontally uniform in each window, a
sheared and veering profile S(z) = S_h (z / 100)^alpha, direction D(z) = D_h + 0.09 deg/m (z - 100) (veering with
height), w constant per window; D_h = 352, 4, 11 degrees (the wind through north), S_h = 7.5, 9.0, 8.2 m/s,
alpha = 0.12, 0.21, 0.30, w = +0.12, -0.08, 0.05 m/s. Windows of 600 s anchored at 2026-07-14T10:03:17.25Z, data
starting 41.7 s before the anchor (fixed windows tile backwards too: those rows form a short window before the
anchor, not checked here); the script checks the three whole windows after the anchor.

Instruments (columns and their order differ between the files):
- `cone-7` (VAD), at (40, -60, 2.5) m: rotates continuously at 15 deg/s starting at azimuth 347 deg (every ray its
  own azimuth, through north), elevation 74 deg + N(0, 0.15) deg per ray, one ray every 0.9 +/- 0.2 s, irregular
  gates 52.3, 77.1, 114.4, 140.3, 174.4, 200.3 m (heights 53 .. 196 m, never at the bin centres 50, 80, ..., 200 m);
  ISO 8601 times with milliseconds; neighbouring rays swapped at random (out of order by < 1 s).
  In window 3 the cone stops turning between azimuths 30 and 100 deg (a stuck scanner: only 3 sectors of 10 deg
  at every height): too few azimuths for the fit.
- `dbs-4` (DBS), at (-30, 80, 1.0) m, calibration heading 0: slanted beams at azimuths 10, 100, 190, 280 deg (the
  set turned by 10 deg), elevation 62 deg + N(0, 0.1) deg, and a vertical beam (90 deg); Unix times, renamed
  columns in another order; gates 61, 89, 120, 148, 183 m. In window 2 the beam at 190 deg is missing entirely (a
  missing slanted beam: no fit); in window 3 the vertical beam is missing (fit from the slanted beams, flagged).
- Junk rows in both files: 6 % of rows with CNR -29 +/- 1 dB and v_r uniform in [-18, 18] m/s; good rows have
  CNR -14 +/- 4 dB. Radial velocity = n . U(z) + N(0, 0.12) m/s, positive away from the instrument.

Expected (expected.json), computed here per window and height bin (nearest centre within step / 2):
- the uniform-wind fit of the good rows by ordinary least squares on v_r = u cos(el) sin(az) + v cos(el) cos(az)
  + w sin(el): the velocity-azimuth display fit of Browning & Wexler 1968 (J. Appl. Meteor. 7, 105-113), written
  for per-ray elevations; for DBS the same fit equals the four-beam formulas u = (v_E - v_W) / (2 cos el),
  v = (v_N - v_S) / (2 cos el) of the turned set, w from the vertical beam (common practice);
  its standard errors from the residual variance (ordinary least squares);
- the true wind at the mean height of the bin's slanted-beam samples (those that give u and v), and that height;
- the junk rows written per instrument (to be rejected, not used);
- for the inflow reference (cone-7 window 2, dbs-4 window 1): the true wind at the bins' mean heights projected on
  the hub-height direction and a power law fitted to it in log-log.
With --netcdf (python3-netcdf4) also data/cone7.nc, the cone's rays as written to cone7.csv (same order, values as
printed there) in the NetCDF-4 layout of scanning instruments (radial velocity and CNR on (time, range), angles on
time, range on the gates, times in seconds since 1970 as float64), and campaign-nc.yaml reading it instead.
"""
import json
import math
import os
import sys

import numpy as np

out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(714)

ANCHOR = 1784023397.25  # 2026-07-14T10:03:17.25Z
T_START = ANCHOR - 41.7
W = 600.0
NWIN = 4  # window 0 (partial, before the anchor's whole windows) .. 3; checked: 1, 2, 3 from the anchor
DH = {0: 352.0, 1: 352.0, 2: 4.0, 3: 11.0}
SH = {0: 7.5, 1: 7.5, 2: 9.0, 3: 8.2}
AL = {0: 0.12, 1: 0.12, 2: 0.21, 3: 0.30}
WW = {0: 0.12, 1: 0.12, 2: -0.08, 3: 0.05}
VEER = 0.09
BINS = dict(min=50.0, max=200.0, step=30.0)
DBS_BINS = dict(min=50.0, max=170.0, step=30.0)


def win_of(t):
    """Window number counted from the anchor: k such that ANCHOR + (k - 1) W <= t < ANCHOR + k W (k = 0: before)."""
    return int(math.floor((t - ANCHOR) / W)) + 1


def wind(t, z):
    k = max(0, min(3, win_of(t)))
    s = SH[k] * (z / 100.0) ** AL[k]
    d = math.radians(DH[k] + VEER * (z - 100.0))
    return -s * math.sin(d), -s * math.cos(d), WW[k]


def beam(az, el):
    a, e = math.radians(az), math.radians(el)
    return math.cos(e) * math.sin(a), math.cos(e) * math.cos(a), math.sin(e)


def iso(t):
    s = np.datetime64(int(round(t * 1000)), "ms")
    return str(s) + "Z"


def rows_for(kind, pos, ranges, beams_at, times):
    """Rows (t, az, el, r, vr, cnr, junk) for each ray time and its (az, el)."""
    rows = []
    for t in times:
        az, el = beams_at(t)
        if az is None:
            continue
        n = beam(az, el)
        for r in ranges:
            z = pos[2] + r * n[2]
            u, v, w = wind(t, z)
            junk = rng.random() < 0.06
            if junk:
                vr = rng.uniform(-18, 18)
                cnr = -29 + rng.normal(0, 1)
            else:
                vr = n[0] * u + n[1] * v + n[2] * w + rng.normal(0, 0.12)
                cnr = -14 + rng.normal(0, 4)
                cnr = min(cnr, -3.0)
            rows.append((t, az % 360.0, el, r, vr, cnr, junk))
    return rows


def ray_times():
    t, out_ = T_START, []
    while t < ANCHOR + 3 * W - 0.5:
        out_.append(t)
        t += 0.9 + rng.uniform(-0.2, 0.2)
    return out_


# ---- VAD cone -----------------------------------------------------------------------------------------------
VAD_POS = (40.0, -60.0, 2.5)
VAD_R = [52.3, 77.1, 114.4, 140.3, 174.4, 200.3]


def vad_beam(t):
    az = (347.0 + 15.0 * (t - T_START)) % 360.0
    if win_of(t) == 3:
        # stuck scanner: sweeps back and forth between 30 and 55 degrees only (3 sectors of 10 degrees)
        ph = ((t - T_START) * 5.0) % 50.0
        az = 30.0 + (ph if ph < 25 else 50 - ph)
    return az, 74.0 + rng.normal(0, 0.15)


vad_rows = rows_for("vad", VAD_POS, VAD_R, vad_beam, ray_times())

# ---- DBS ----------------------------------------------------------------------------------------------------
DBS_POS = (-30.0, 80.0, 1.0)
DBS_R = [61.0, 89.0, 120.0, 148.0, 183.0]
DBS_SET = [(10.0, 62.0), (100.0, 62.0), (190.0, 62.0), (280.0, 62.0), (0.0, 90.0)]
dbs_count = [0]


def dbs_beam(t):
    i = dbs_count[0] % 5
    dbs_count[0] += 1
    az, el = DBS_SET[i]
    k = win_of(t)
    if k == 2 and i == 2:
        return None, None
    if k == 3 and i == 4:
        return None, None
    if el < 89:
        el = el + rng.normal(0, 0.1)
    return az, el


dbs_rows = rows_for("dbs", DBS_POS, DBS_R, dbs_beam, ray_times())


def heights(rows, pos):
    return np.array([pos[2] + r[3] * math.sin(math.radians(r[2])) for r in rows])


def expected(rows, pos, bins, name):
    rows_ok = [r for r in rows if not r[6]]
    z = heights(rows_ok, pos)
    t = np.array([r[0] for r in rows_ok])
    res = []
    nb = int(round((bins["max"] - bins["min"]) / bins["step"])) + 1
    for k in (1, 2, 3):
        for hb in range(nb):
            hc = bins["min"] + hb * bins["step"]
            sel = (t >= ANCHOR + (k - 1) * W) & (t < ANCHOR + k * W) & (np.abs(z - hc) <= bins["step"] / 2)
            idx = np.nonzero(sel)[0]
            entry = dict(window=k, height_m=hc, n=int(len(idx)))
            if len(idx) >= 10:
                A = np.array([beam(rows_ok[i][1], rows_ok[i][2]) for i in idx])
                y = np.array([rows_ok[i][4] for i in idx])
                sol, _, rank, _ = np.linalg.lstsq(A, y, rcond=None)
                az = np.array([rows_ok[i][1] for i in idx])
                if rank == 3:
                    resid = y - A @ sol
                    s2 = resid @ resid / (len(y) - 3)
                    cov = s2 * np.linalg.inv(A.T @ A)
                    se = np.sqrt(np.diag(cov))
                    # The height u and v belong to: the mean height of the slanted beams' samples (a DBS set's
                    # vertical beam gives only w, and its gates lie higher: range r at r, not r sin(el)).
                    slanted = [i for i in idx if rows_ok[i][2] < 80]
                    zm = float(z[slanted].mean())
                    tu, tv, tw = wind(ANCHOR + (k - 0.5) * W, zm)
                    entry.update(u=float(sol[0]), v=float(sol[1]), w=float(sol[2]), u_se=float(se[0]), v_se=float(se[1]),
                                 w_se=float(se[2]), mean_height_m=zm, true_u=tu, true_v=tv, true_w=tw,
                                 true_speed=math.hypot(tu, tv), true_dir=(math.degrees(math.atan2(-tu, -tv)) % 360.0),
                                 az_min=float(az.min()), az_max=float(az.max()))
            res.append(entry)
    return res


def write_csv(path, header, lines):
    with open(path, "w") as f:
        f.write(",".join(header) + "\n")
        for ln in lines:
            f.write(",".join(ln) + "\n")


def shuffle_neighbours(rows):
    rows = list(rows)
    i = 0
    # swap whole rays (same time) with their neighbour ray at random: out of order by < 1 s
    ray_starts = [j for j in range(len(rows)) if j == 0 or rows[j][0] != rows[j - 1][0]]
    rays = [rows[a:b] for a, b in zip(ray_starts, ray_starts[1:] + [len(rows)])]
    while i < len(rays) - 1:
        if rng.random() < 0.15:
            rays[i], rays[i + 1] = rays[i + 1], rays[i]
            i += 2
        else:
            i += 1
    return [r for ray in rays for r in ray]


vad_out = shuffle_neighbours(vad_rows)
write_csv(os.path.join(out, "data", "cone7.csv"), ["time", "instrument", "azimuth_deg", "elevation_deg", "range_m", "radial_velocity_ms", "cnr_db"],
          [[iso(r[0]), "cone-7", f"{r[1]:.3f}", f"{r[2]:.3f}", f"{r[3]:.1f}", f"{r[4]:.4f}", f"{r[5]:.2f}"] for r in vad_out])
# DBS file: other headers, other order, Unix seconds; the instrument column last.
write_csv(os.path.join(out, "data", "dbs4.csv"), ["snr", "vel", "rng", "elev", "azim", "t_unix", "unit"],
          [[f"{r[5]:.2f}", f"{r[4]:.4f}", f"{r[3]:.1f}", f"{r[2]:.3f}", f"{r[1]:.3f}", f"{r[0]:.3f}", "dbs-4"] for r in dbs_rows])

# Direction series (needed by the campaign; the profilers do not use it): hub-height direction every 60 s.
with open(os.path.join(out, "data", "direction.csv"), "w") as f:
    f.write("time,direction_deg\n")
    t = T_START - 60
    while t < ANCHOR + 3 * W + 60:
        f.write(f"{t:.1f},{DH[max(0, min(3, win_of(t)))]:.2f}\n")
        t += 60

camp = {
    "name": "brackenlow-heldback",
    "turbine": {"id": "BL-1", "position_m": [400, 0, 0], "hubHeight_m": 100, "rotorDiameter_m": 110, "thrustCoefficient": 0.78},
    "instruments": [
        {"id": "dbs-4", "role": "profiler", "position_m": list(DBS_POS), "files": ["data/dbs4.csv"],
         "columns": {"time": "t_unix", "instrument": "unit", "azimuth_deg": "azim", "elevation_deg": "elev", "range_m": "rng",
                     "radial_velocity_ms": "vel", "cnr_db": "snr"},
         "profile": {"mode": "dbs", "heights_m": DBS_BINS, "pattern": {"elevation_deg": 62, "azimuths_deg": [10, 100, 190, 280], "vertical": True, "ranges_m": DBS_R}}},
        {"id": "cone-7", "role": "profiler", "position_m": list(VAD_POS), "files": ["data/cone7.csv"],
         "profile": {"mode": "vad", "heights_m": BINS, "sectors": 36,
                     "pattern": {"elevation_deg": 74, "azimuths_deg": [10.0 * k for k in range(36)], "ranges_m": VAD_R, "ray_s": 0.9}}},
    ],
    "planes": [],
    "windows": {"kind": "fixed", "length_s": W, "anchor": iso(ANCHOR)},
    "windDirection": {"kind": "series", "file": "data/direction.csv"},
    "inflow": {"kind": "profile", "instrument": "cone-7", "law": "power"},
    "output": {"images": False, "netcdf": False},
    "plan": {"directions_deg": [4]},
}
with open(os.path.join(out, "campaign.yaml"), "w") as f:
    json.dump(camp, f, indent=1)

def inflow_expected(ex, k, hub_dir):
    """The truth an inflow reference should give: at each height bin with a fit, the true wind at the samples' mean
    height projected on the hub-height wind direction (the rotor axis), and the power law u(z) = u_h (z / 100)^alpha
    fitted to those points by least squares in log-log (a straight line through ln u against ln z)."""
    pts = [x for x in ex if x["window"] == k and "mean_height_m" in x]
    z = np.array([x["mean_height_m"] for x in pts])
    d = math.radians(hub_dir)
    proj = np.array([-(x["true_u"] * math.sin(d) + x["true_v"] * math.cos(d)) for x in pts])
    alpha, ln_uh = np.polyfit(np.log(z / 100.0), np.log(proj), 1)
    return dict(window=k, direction_deg=hub_dir, alpha=float(alpha), hub_speed_ms=float(math.exp(ln_uh)))


VAD_EXP = expected(vad_rows, VAD_POS, BINS, "vad")
DBS_EXP = expected(dbs_rows, DBS_POS, DBS_BINS, "dbs")
junk = {"cone-7": sum(r[6] for r in vad_rows), "dbs-4": sum(r[6] for r in dbs_rows)}
json.dump({"anchor_s": ANCHOR, "window_s": W, "junk": junk, "rows": {"cone-7": len(vad_rows), "dbs-4": len(dbs_rows)},
           "vad": VAD_EXP, "dbs": DBS_EXP,
           "inflow": {"cone-7": inflow_expected(VAD_EXP, 2, DH[2]), "dbs-4": inflow_expected(DBS_EXP, 1, DH[1])}},
          open(os.path.join(out, "expected.json"), "w"), indent=1)

if "--netcdf" in sys.argv:
    import netCDF4

    def parse_iso(x):
        return (np.datetime64(x.rstrip("Z"), "ms") - np.datetime64(0, "ms")) / np.timedelta64(1, "s")

    rays = []
    for r in vad_out:
        if rays and rays[-1][0][0] == r[0]:
            rays[-1].append(r)
        else:
            rays.append([r])
    nc = netCDF4.Dataset(os.path.join(out, "data", "cone7.nc"), "w")
    nc.createDimension("time", len(rays))
    nc.createDimension("range", len(VAD_R))
    tv = nc.createVariable("time", "f8", ("time",))
    tv.units = "seconds since 1970-01-01 00:00:00"
    av = nc.createVariable("azimuth", "f8", ("time",))
    av.units = "degrees"
    ev = nc.createVariable("elevation", "f8", ("time",))
    ev.units = "degrees"
    rv = nc.createVariable("range", "f8", ("range",))
    rv.units = "m"
    vv = nc.createVariable("radial_velocity", "f4", ("time", "range"), fill_value=-999.0)
    vv.units = "m s-1"
    vv.standard_name = "radial_velocity_of_scatterers_away_from_instrument"
    cv = nc.createVariable("cnr", "f4", ("time", "range"))
    cv.units = "dB"
    rv[:] = VAD_R
    # the values as printed to the CSV file, so both files hold the same samples
    tv[:] = [parse_iso(iso(ray[0][0])) for ray in rays]
    av[:] = [float(f"{ray[0][1]:.3f}") for ray in rays]
    ev[:] = [float(f"{ray[0][2]:.3f}") for ray in rays]
    vv[:] = [[float(f"{r[4]:.4f}") for r in ray] for ray in rays]
    cv[:] = [[float(f"{r[5]:.2f}") for r in ray] for ray in rays]
    nc.close()
    camp["instruments"][1]["files"] = ["data/cone7.nc"]
    with open(os.path.join(out, "campaign-nc.yaml"), "w") as f:
        json.dump(camp, f, indent=1)
