"""A reviewer's second held-back wake case, written without wakeplane's code (numpy and scipy only).

Usage: python3 test/reference/heldback_wake2.py OUTDIR
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/data/*.csv and OUTDIR/expected.json.

Invented site: one turbine "Kestrel-4" (rotor D = 130 m, hub H = 95 m) at east/north (-2310, 4075) m on flat ground,
the wind from WD = 200 deg (the rotor frame turns: x downstream towards azimuth 20 deg, y left looking downstream
towards azimuth 290 deg, z up). The thrust coefficient is a curve against hub speed, CT_CURVE below, read by linear
interpolation (np.interp). Two cross planes at non-integer x/D: 3.35 D and 5.8 D, y in [-390, 390] m, z in [5, 275] m,
cells 30 m x 30 m, slabs 24 m thick.

Flow (rotor frame of the window's mean direction WD):
  speed S(z) = U (z / H)^ALPHA, ALPHA = 0.28 (strong shear), direction turning clockwise with height by VEER deg per
  100 m above the hub (veer: at z the wind comes from WD + VEER (z - H) / 100), so in the rotor frame
  u = S(z) cos(d(z)) (1 - C exp(-(y - yc)^2 / (2 sy^2) - (z - zc)^2 / (2 sz^2))), v = -S(z) sin(d(z)) (1 - ...), w = 0,
  with d(z) = VEER (z - H) / 100 in radians. (A clockwise turn of the from-direction, seen from above, turns the
  to-vector clockwise too, i.e. towards -y in a frame with y to the left.)
  Widths s(x)/D = 0.032 x/D + 0.26, sy = 1.15 s, sz = s / 1.15; amplitude of Bastankhah & Porte-Agel (2014,
  Renewable Energy 70, eq. 23 [from memory]) C = 1 - sqrt(1 - Ct(U) / (8 (s/D)^2)); centre zc = H - 4 m,
  yc = YC0 + 2.4 m per degree of yaw offset x tanh(x / 3D) (positive offset: wake to +y, the README's convention;
  YC0 = 6 m, an offset at zero yaw).
Windows (experimenter's log, Unix seconds): seven windows of 300 s; yaw offsets -18, 0, +18, -18, 0, +18 deg with hub
speeds 7.4, 8.1, 8.8, 9.6, 10.3, 11.0 m/s (so the curve gives six different Ct), and a seventh window (0 deg, 8 m/s)
in which the scanners were nearly silent (0.03 rows per second each): too few cells for any analysis, which must be a
flagged row with a reason, not a number.

Condition bins by yaw offset (edges -25, -9, 9, 25 deg): each bin pools two windows of different hub speeds (the
third, 0 deg, also the starved window).

Turbine series ("data/kestrel4.csv"): one row every 4 s at 1.7 s past, ISO times with a -03:00 offset; yaw_deg = WD +
offset (exact to 0.01 deg), power_kw 1800.

A horizontal plane "hub" at z = 95 m (hub height), x from 260 to 920 m (2 to ~7 D), y in [-300, 300] m, cells of
30 m, slab 20 m thick: at that height the deficit across y is a Gaussian centred on yc(x), the lateral track's truth.

Lidar: three scanners at rotor-frame (x, y) = (-420, -880), (-380, 910), (-640, -40) m, 3 m up; every row a point
drawn uniformly in one cross plane's slab (own azimuth, elevation and range) at random times, 8 rows per second each,
and 4 more per second in the horizontal plane's slab (z = 95 +- 9 m);
radial velocity = wind along the beam (positive away) + N(0, 0.08) m/s; CNR uniform in [-18, -8] dB. Scanner "ridge"
writes ISO times with a +05:30 offset (the others Unix seconds). Every scanner adds 5 % junk rows at CNR [-34, -29] dB
with radial velocities uniform in [-20, 20] m/s (a noise population at a CNR level of its own).

expected.json, per plane and window:
- the truths (amplitude, centre, widths, hub speed U, Ct from the curve at U);
- scipy.optimize.curve_fit of the 2-D Gaussian on the cell means (10 x 10 points per cell) of the exact deficit
  1 - u/u_inf(z), with u_inf(z) = S(z) cos d(z) the undisturbed rotor-frame u;
- the rotor-equivalent wind speed by the segment method (IEC 61400-12-1:2017, annex on REWS [from memory]; Wagner
  et al. 2011, Wind Energy 14, 993-1004): v_eq = (sum_i v_i^3 A_i / A)^(1/3) with N equal-height segments over the
  rotor disk, v_i the area mean of u over segment i of the disk, here by a dense quadrature (a 1-m lattice
  over the disk) of the exact u, for N = 2..10 (the run states its N), on the rotor axis (0, H) and on the true
  wake centre (yc, zc);
- the momentum deficit M = integral over the plane of u (u_inf - u) dA of the exact field: with the true u_inf, and,
  so that the run's own fitted inflow law u_ref (z / z_ref)^a can be put in (the test does), I(a) = integral u z^a dA
  on a grid of a (0.20 .. 0.36 by 0.005) and J = integral u^2 dA, all on a 1-m lattice (M = u_ref z_ref^-a I(a) - J);
  the ratio M / ((pi/8) Ct D^2 U^2) (the thrust balance of Bastankhah & Porte-Agel 2014, eq. 2-5 [from memory]);
- per yaw-offset bin (width 10 deg) and plane: the mean, sample standard deviation and Student-t 95 % half-width
  t_{0.975, n-1} sd / sqrt(n) (scipy.stats.t.ppf) of the truth centres yc, and the deflection of Jimenez, Crespo &
  Migoya (2010, Wind Energy 13, 559-572 [from memory]): xi0 = 0.5 cos^2(g) sin(g) Ct, xi(x) = xi0 / (1 + beta x/D)^2,
  delta(x) = integral_0^x tan xi dx (scipy.integrate.quad), beta = 0.1, tabulated for Ct 0.10 .. 0.90 by 0.01 so the
  test can take each bin's Ct (the mean of its windows' Ct, README);
- the number of junk rows written and the truth of the lateral centre (yc0_m, yc_per_deg_m) for the horizontal
  plane's track.
"""
import json
import math
import os
import sys
import warnings

import numpy as np
from scipy.integrate import quad
from scipy.optimize import curve_fit
from scipy.stats import t as student_t

warnings.simplefilter('ignore')
out = sys.argv[1]
os.makedirs(os.path.join(out, "data"), exist_ok=True)
rng = np.random.default_rng(4075)
WD, H, D = 200.0, 95.0, 130.0
ALPHA, VEER = 0.28, 6.0  # shear exponent; veer deg per 100 m
KS, EPS = 0.032, 0.26
YC0, DZC = 6.0, -4.0
CT_CURVE = [[4.0, 0.86], [7.0, 0.82], [9.0, 0.74], [10.5, 0.58], [12.0, 0.42], [20.0, 0.12]]
E0, N0 = -2310.0, 4075.0
dE, dN = -math.sin(math.radians(WD)), -math.cos(math.radians(WD))  # downstream unit vector (site)
lE, lN = -dN, dE  # left looking downstream
PLANES = {"p335": 3.35 * D, "p580": 5.8 * D}
YR, ZR = (-390.0, 390.0), (5.0, 275.0)
HX, HY, HZ = (260.0, 920.0), (-300.0, 300.0), 95.0  # horizontal plane at hub height, 2 D to ~7 D
CELL = 30.0
T0 = 1801234567.25
WIN = []
for k, (g, U) in enumerate([(-18, 7.4), (0, 8.1), (18, 8.8), (-18, 9.6), (0, 10.3), (18, 11.0), (0, 8.0)]):
    a = T0 + k * 420.0
    WIN.append((a, a + 300.0, float(g), U))
STARVED = 6


def ct_of(U):
    c = np.array(CT_CURVE)
    return float(np.interp(U, c[:, 0], c[:, 1]))


def s_of(x):
    return (KS * x / D + EPS) * D


def amp(x, U):
    return 1 - math.sqrt(1 - ct_of(U) / (8 * (s_of(x) / D) ** 2))


def yc_of(x, g):
    return YC0 + 2.4 * g * math.tanh(x / (3 * D))


def shape(x, y, z, g, U):
    s = s_of(x)
    return amp(x, U) * np.exp(-((y - yc_of(x, g)) ** 2) / (2 * (1.15 * s) ** 2) - (z - H - DZC) ** 2 / (2 * (s / 1.15) ** 2))


def speed(z, U):
    return U * (np.maximum(z, 1.0) / H) ** ALPHA


def turn(z):
    return np.radians(VEER * (z - H) / 100.0)


def u_inf(z, U):
    return speed(z, U) * np.cos(turn(z))


def uv(x, y, z, g, U):
    f = 1 - shape(x, y, z, g, U)
    return speed(z, U) * np.cos(turn(z)) * f, -speed(z, U) * np.sin(turn(z)) * f


def site(x, y):
    return E0 + x * dE + y * lE, N0 + x * dN + y * lN


def iso(t, minutes):
    s = np.datetime64(int(round((t + 60 * minutes) * 1000)), "ms")
    sign = "+" if minutes >= 0 else "-"
    m = abs(minutes)
    return f"{str(s)}{sign}{m // 60:02d}:{m % 60:02d}"


INSTR = {"ridge": (-420.0, -880.0), "gully": (-380.0, 910.0), "cairn": (-640.0, -40.0)}
written = 0
junk_rows = 0
for inst, (xi, yi) in INSTR.items():
    oe, on = site(xi, yi)
    o = np.array([oe, on, 3.0])
    lines = []
    for k, (a, b, g, U) in enumerate(WIN):
        rate = 0.03 if k == STARVED else 8.0
        n = rng.poisson(rate * (b - a))
        t = np.sort(rng.uniform(a, b, n))
        which = rng.integers(0, len(PLANES), n)
        # Besides, 4 rows per second each in the horizontal plane's slab (the same rows of the file, in time order).
        nh = rng.poisson(rate / 2 * (b - a))
        t = np.concatenate([t, rng.uniform(a, b, nh)])
        which = np.concatenate([which, np.full(nh, -1)])
        order = np.argsort(t)
        t, which = t[order], which[order]
        for tk, wk in zip(t, which):
            if wk < 0:
                x, y, z = rng.uniform(*HX), rng.uniform(*HY), HZ + rng.uniform(-9, 9)
            else:
                pid = list(PLANES)[wk]
                x = PLANES[pid] + rng.uniform(-12, 12)
                y, z = rng.uniform(*YR), rng.uniform(*ZR)
            pe, pn = site(x, y)
            v = np.array([pe, pn, z]) - o
            r = float(np.linalg.norm(v))
            nb = v / r
            uu, vv = (float(q) for q in uv(x, y, z, g, U))
            we, wn = uu * dE + vv * lE, uu * dN + vv * lN
            junk = rng.uniform() < 0.05
            junk_rows += int(junk)
            vr = rng.uniform(-20, 20) if junk else nb[0] * we + nb[1] * wn + 0.08 * rng.standard_normal()
            cnr = rng.uniform(-34, -29) if junk else rng.uniform(-18, -8)
            az = math.degrees(math.atan2(nb[0], nb[1])) % 360
            el = math.degrees(math.asin(nb[2]))
            ts = iso(tk, 330) if inst == "ridge" else f"{tk:.3f}"
            lines.append(f"{ts},{inst},{az:.5f},{el:.5f},{r:.2f},{vr:.3f},{cnr:.1f}\n")
    written += len(lines)
    with open(os.path.join(out, "data", f"{inst}.csv"), "w") as fh:
        fh.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
        fh.writelines(lines)

with open(os.path.join(out, "data", "kestrel4.csv"), "w") as fh:
    fh.write("time,yaw_deg,power_kw\n")
    for t in np.arange(T0 - 60 + 1.7, WIN[-1][1] + 60, 4.0):
        g = 0.0
        for a, b, gg, U in WIN:
            if a - 60 <= t < b + 60:
                g = gg
        fh.write(f"{iso(t, -180)},{(WD + g) % 360:.2f},1800\n")
with open(os.path.join(out, "data", "log.csv"), "w") as fh:
    fh.write("start,end,label\n")
    for a, b, g, U in WIN:
        fh.write(f"{a:.2f},{b:.2f},yaw {g:+.0f} at {U:.1f} m/s\n")

campaign = {
    "name": "heldback-wake-kestrel",
    "turbines": [{"id": "Kestrel-4", "position_m": [E0, N0, 0.0], "hubHeight_m": H, "rotorDiameter_m": D,
                  "thrustCoefficient": CT_CURVE, "series": {"file": "data/kestrel4.csv"}}],
    "instruments": [{"id": i, "position_m": [*map(float, site(*p)), 3.0], "kind": "pulsed", "files": [f"data/{i}.csv"]}
                    for i, p in INSTR.items()],
    "planes": [{"id": pid, "orientation": "cross", "x_m": x, "y": {"min": YR[0], "max": YR[1]}, "z": {"min": ZR[0], "max": ZR[1]},
                "cell_m": [CELL, CELL], "thickness_m": 24} for pid, x in PLANES.items()]
              + [{"id": "hub", "orientation": "horizontal", "z_m": HZ, "y": {"min": HY[0], "max": HY[1]},
                  "xRange": {"min": HX[0], "max": HX[1]}, "cell_m": [CELL, CELL], "thickness_m": 20}],
    "windows": {"kind": "list", "file": "data/log.csv"},
    "windDirection": {"kind": "fixed", "deg": WD},
    "inflow": {"kind": "plane", "law": "power"},
    "wake": {"yawBin_deg": 10},
    "conditions": {"bins": [{"variable": "yaw_offset_deg", "edges": [-25, -9, 9, 25]}]},
    "output": {"dir": "out", "images": False, "netcdf": False},
}
with open(os.path.join(out, "campaign.yaml"), "w") as fh:
    json.dump(campaign, fh, indent=1)


def gauss(X, A, y0, z0, sy, sz):
    return A * np.exp(-(X[0] - y0) ** 2 / (2 * sy * sy) - (X[1] - z0) ** 2 / (2 * sz * sz))


def rews(x, g, U, cy, cz, N):
    """Segment method on the exact u: a 1-m lattice over the disk, N equal-height segments (IEC 61400-12-1:2017)."""
    R = D / 2
    q = np.arange(-R + 0.5, R, 1.0)
    YY, ZZ = np.meshgrid(q, q)
    inside = YY ** 2 + ZZ ** 2 <= R * R
    u = uv(x, cy + YY, cz + ZZ, g, U)[0]
    seg = np.minimum(N - 1, np.floor((ZZ + R) / (2 * R) * N)).astype(int)
    tot = 0.0
    for i in range(N):
        m = inside & (seg == i)
        za, zb = -R + 2 * R * i / N, -R + 2 * R * (i + 1) / N
        G = lambda s: s * math.sqrt(max(0.0, R * R - s * s)) + R * R * math.asin(max(-1.0, min(1.0, s / R)))
        tot += u[m].mean() ** 3 * (G(zb) - G(za))
    return (tot / (math.pi * R * R)) ** (1 / 3)


views = []
sub = (np.arange(10) - 4.5) * 3.0
# The plane on a 1-m lattice, for the momentum integrals against any power law u_ref (z / z_ref)^a:
# M = u_ref z_ref^-a I(a) - J with I(a) = integral u z^a dA and J = integral u^2 dA (midpoint rule on 1 m^2).
LY, LZ = np.meshgrid(np.arange(YR[0] + 0.5, YR[1], 1.0), np.arange(ZR[0] + 0.5, ZR[1], 1.0))
ALPHAS = np.round(np.arange(0.20, 0.3601, 0.005), 3)
for w, (a, b, g, U) in enumerate(WIN):
    for pid, x in PLANES.items():
        ycs = np.arange(YR[0] + CELL / 2, YR[1], CELL)
        zcs = np.arange(ZR[0] + CELL / 2, ZR[1], CELL)
        YY, ZZ = np.meshgrid(ycs, zcs)
        d = np.mean([shape(x, YY + p, ZZ + q, g, U) for p in sub for q in sub], axis=0)
        ul = uv(x, LY, LZ, g, U)[0]
        M = float(np.sum(ul * (u_inf(LZ, U) - ul)))  # 1-m lattice, true inflow
        p, cov = curve_fit(gauss, (YY.ravel(), ZZ.ravel()), d.ravel(), p0=(0.3, 0.0, H, 60.0, 60.0))
        s = s_of(x)
        ct = ct_of(U)
        views.append({
            "window": w, "plane": pid, "x_m": x, "yaw_offset_deg": g, "U_ms": U, "ct": ct, "starved": w == STARVED,
            "amplitude": amp(x, U), "yc_m": yc_of(x, g), "zc_m": H + DZC, "sigma_y_m": 1.15 * s, "sigma_z_m": s / 1.15,
            "fit": {"amplitude": p[0], "yc_m": p[1], "zc_m": p[2], "sigma_y_m": p[3], "sigma_z_m": p[4]},
            "rews_axis": {str(N): rews(x, g, U, 0.0, H, N) for N in range(2, 11)},
            "rews_centre": {str(N): rews(x, g, U, yc_of(x, g), H + DZC, N) for N in range(2, 11)},
            "momentum_I": [float(np.sum(ul.sum(axis=1) * LZ[:, 0] ** a)) for a in ALPHAS],
            "momentum_J": float(np.sum(ul ** 2)),
            "momentum_m4s2": M, "momentum_ratio": M / (math.pi / 8 * ct * D * D * U * U),
        })

# Steering bins of the truth centres (the starved window has no ok row and is left out).
bins = []
for pid, x in PLANES.items():
    by = {}
    for v in views:
        if v["plane"] == pid and not v["starved"]:
            by.setdefault(int(math.floor(v["yaw_offset_deg"] / 10 + 0.5)), []).append(v["yc_m"])
    for k, ys in sorted(by.items()):
        ys = np.array(ys)
        n = len(ys)
        sd = float(ys.std(ddof=1)) if n > 1 else float("nan")
        bins.append({"plane": pid, "x_m": x, "gamma_centre_deg": 10 * k, "n": n, "yc_m": float(ys.mean()), "sd_m": sd,
                     "t975": float(student_t.ppf(0.975, n - 1)) if n > 1 else float("nan")})


def jimenez(x, g_deg, ct, beta=0.1):
    g = math.radians(g_deg)
    xi0 = 0.5 * math.cos(g) ** 2 * math.sin(g) * ct
    return quad(lambda s: math.tan(xi0 / (1 + beta * s / D) ** 2), 0, x)[0]


# Jimenez deflections on a grid of Ct so the test can take the run's campaign-level Ct (interpolation in Ct is
# linear to 1e-6 relative: xi0 is linear in Ct and tan(xi) ~ xi for these angles).
cts = np.round(np.arange(0.10, 0.901, 0.01), 2)
jim = {pid: {str(gm): [jimenez(x, gm, c) for c in cts] for gm in (-18, 0, 18)} for pid, x in PLANES.items()}
with open(os.path.join(out, "expected.json"), "w") as fh:
    json.dump({"wd_deg": WD, "hub_m": H, "D_m": D, "alpha": ALPHA, "veer_deg_per_100m": VEER, "ct_curve": CT_CURVE,
               "rows_written": written, "yc0_m": YC0, "yc_per_deg_m": 2.4, "horizontal_x_m": list(HX), "momentum_alphas": ALPHAS.tolist(), "junk_rows": junk_rows, "views": views, "bins": bins, "jimenez_ct_grid": cts.tolist(), "jimenez_m": jim},
              fh, indent=1)
