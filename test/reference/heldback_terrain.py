"""A reviewer's held-back terrain case, written without wakeplane's code (numpy only).

Usage: python3 test/reference/heldback_terrain.py OUTDIR --raster {xyz,tiepoint,transform,rotated} [--epsg N] [--curvature] [--heights-site]
Writes OUTDIR/campaign.yaml (JSON text, which YAML reads), OUTDIR/terrain.(csv|tif), OUTDIR/a.csv, OUTDIR/b.csv and
OUTDIR/expected.json.

Invented site: flat ground at 12 m (site-frame up) with a Gaussian hill h(e, n) = 12 + 45 exp(-((e - 520)^2 +
(n - 140)^2) / (2 * 110^2)) m. The same ground is written four ways:
- xyz: an XYZ grid (x, y, z columns renamed e_m, n_m, alt_m) with its own origin (-333.3, -417.7) and spacing
  12.5 m x 9.0 m, rows in shuffled order (the reader must not need them sorted);
- tiepoint: a GeoTIFF (float32, one strip, written byte by byte here: TIFF 6.0 baseline tags and the GeoTIFF 1.0
  tags ModelTiepointTag 33922, ModelPixelScaleTag 33550, GeoKeyDirectoryTag 34735 with GTRasterTypeGeoKey = 1,
  PixelIsArea) in site-frame metres, north up;
- transform: the same raster georeferenced by ModelTransformationTag 34264 alone (GeoTIFF 1.0 section 2.6.1: the
  4x4 affine matrix from raster (I, J) to model (X, Y): X = a I + b J + d, Y = e I + f J + h; north up: f < 0);
- rotated: a raster whose columns run 30 degrees north of east (a = 10 cos 30, e = 10 sin 30, b = 10 sin 30,
  f = -10 cos 30), so the model transformation has rotation terms.
With --heights-site the plane lies at a fixed altitude (site-frame up 60 +/- 15 m) instead of 40 m above the ground.
With --curvature (XYZ only) everything is ten times as wide (the ridge 30 m high, 5.2 km away, the XYZ spacing 100 x
90 m, ranges to 14 km, elevations a tenth) and the beams follow the 4/3 Earth: height h(r) = sqrt(r^2 + (k a)^2 +
2 r k a sin(el)) - k a and ground distance s(r) = k a asin(r cos(el) / (k a + h)), k a = 4/3 x 6371 km (Doviak &
Zrnic 1993, eq. 2.28b, c [from memory]); the campaign sets site.earthCurvature.
The heights of each raster are the hill's at its pixel centres (PixelIsArea: the centre of pixel (I, J) is at
raster coordinates (I + 0.5, J + 0.5)).

Instruments: "a" at (0, 0, 14) and "b" at (1100, 300, 14) m. Every row its own beam: 65 % aimed at the hill
(azimuth within 25 deg of it, elevation 0.3 .. 6 deg, range 100 .. 1000 m), the others azimuth and elevation drawn at
random, range 60 .. 1400 m. For each row the script computes, from its own bilinear interpolation of the raster
nodes (or the exact hill for the rotated raster, where wakeplane resamples), by ray marching in 0.5-m steps (5 m
with --curvature, where the ridge is ten times as wide):
- outside_terrain: the point lies outside the raster's extent;
- below_ground: the point lies below the ground plus the 2-m clearance (qc.groundClearance_m);
- beam_blocked: the point is above that, but the beam passes below the ground somewhere before it;
- else the point lies in the terrain-following plane (40 +/- 15 m above the ground, within its lateral extent) or
  outside it (outside_planes).
For the planner: per cell of the plane and instrument, whether the straight beam to the cell centre (40 m above the
ground there) passes below the ground (the same march; beams within 1.5 m of touching left out).
Rows whose decision lies within 1.5 m of a threshold (point clearance, plane slab and edges, lowest beam clearance), or
for the turned raster within two pixels of its edge (wakeplane resamples it onto a site grid), are not written, so
the expected counts do not hang on interpolation or the march step. Radial velocity 3 m/s, CNR -8 dB.
"""
import json
import math
import os
import struct
import sys

import numpy as np

out = sys.argv[1]
KIND = sys.argv[sys.argv.index("--raster") + 1]
rng = np.random.default_rng(16)
os.makedirs(out, exist_ok=True)

CURVED = "--curvature" in sys.argv
BASE, AMP, HE, HN, HS = 12.0, 45.0, 520.0, 140.0, 110.0
# The 4/3 effective Earth radius (Doviak & Zrnic 1993, eq. 2.28b and 2.28c [equation numbers from memory]).
KA = 4.0 / 3.0 * 6371000.0
SCALE = 10.0 if CURVED else 1.0
if CURVED:
    # A ridge across a valley, kilometres away: the same shapes, ten times as wide, 30 m high.
    AMP, HE, HN, HS = 30.0, 5200.0, 1400.0, 1100.0
CLEAR, PLANE_Z, SLAB = 2.0, 40.0, 15.0
# --heights site: the plane at an altitude (site-frame up 60 m), not following the ground.
SITE_HEIGHTS = "--heights-site" in sys.argv
if SITE_HEIGHTS:
    PLANE_Z = 60.0


def hill(e, n):
    return BASE + AMP * np.exp(-((e - HE) ** 2 + (n - HN) ** 2) / (2 * HS * HS))


def bilinear(Z, e0, n0, de, dn, e, n):
    """Bilinear interpolation of nodes Z[j, i] at (e0 + i de, n0 + j dn); NaN outside. Arrays or scalars."""
    e, n = np.asarray(e, dtype=float), np.asarray(n, dtype=float)
    fx, fy = (e - e0) / de, (n - n0) / dn
    ok = (fx >= 0) & (fx <= Z.shape[1] - 1) & (fy >= 0) & (fy <= Z.shape[0] - 1)
    fx, fy = np.clip(fx, 0, Z.shape[1] - 1), np.clip(fy, 0, Z.shape[0] - 1)
    i, j = np.minimum(fx.astype(int), Z.shape[1] - 2), np.minimum(fy.astype(int), Z.shape[0] - 2)
    s, t = fx - i, fy - j
    v = (1 - t) * ((1 - s) * Z[j, i] + s * Z[j, i + 1]) + t * ((1 - s) * Z[j + 1, i] + s * Z[j + 1, i + 1])
    return np.where(ok, v, np.nan)


# ---- rasters
if KIND == "xyz":
    e0, n0, de, dn, ne, nn = -333.3, -417.7, 12.5, 9.0, 170, 140
    if CURVED:
        e0, n0, de, dn, ne, nn = -3333.0, -4177.0, 100.0, 90.0, 213, 140
elif KIND in ("tiepoint", "transform"):
    # GeoTIFF pixels: corner at (x0, y0), pixel size 10 m, rows southwards; pixel centres half a pixel in.
    x0, y0, px, nx, ny = -350.0, 850.0, 10.0, 200, 140
elif KIND == "rotated":
    th = math.radians(30.0)
    px, nx, ny = 10.0, 190, 160
    # Corner of pixel (0, 0) chosen so that the raster covers the site; I runs 30 deg north of east, J 30 deg east of south.
    a, b, e_, f = px * math.cos(th), px * math.sin(th), px * math.sin(th), -px * math.cos(th)
    x0, y0 = -700.0, 450.0
else:
    raise SystemExit("unknown --raster")


def raster_nodes():
    """Node coordinates (model X, Y) and heights, row-major (I fastest), for the GeoTIFF kinds."""
    I, J = np.meshgrid(np.arange(nx) + 0.5, np.arange(ny) + 0.5)
    if KIND == "rotated":
        X = x0 + a * I + b * J
        Y = y0 + e_ * I + f * J
    else:
        X = x0 + px * I
        Y = y0 - px * J
    return X, Y, hill(X, Y).astype(np.float32)


def write_tiff(path, heights, geo_tags):
    """Little-endian baseline TIFF, one float32 strip, plus GeoTIFF tags (tag, type, values)."""
    h, w = heights.shape
    data = heights.astype("<f4").tobytes()
    tags = [
        (256, 3, [w]), (257, 3, [h]), (258, 3, [32]), (259, 3, [1]), (262, 3, [1]),
        (273, 4, [0]), (277, 3, [1]), (278, 3, [h]), (279, 4, [len(data)]), (284, 3, [1]), (339, 3, [3]),
    ] + geo_tags
    tags.sort()
    fmt = {3: "H", 4: "I", 12: "d"}
    size = {3: 2, 4: 4, 12: 8}
    ifd_off = 8
    ifd_len = 2 + 12 * len(tags) + 4
    extra_off = ifd_off + ifd_len
    extra = b""
    entries = b""
    data_off_pos = None
    for tag, typ, vals in tags:
        raw = struct.pack("<" + fmt[typ] * len(vals), *vals)
        if len(raw) <= 4:
            field = raw.ljust(4, b"\0")
            if tag == 273:
                data_off_pos = len(entries) + 8
        else:
            while (extra_off + len(extra)) % 8:
                extra += b"\0"
            field = struct.pack("<I", extra_off + len(extra))
            extra += raw
        entries += struct.pack("<HHI", tag, typ, len(vals)) + field
    data_off = extra_off + len(extra)
    entries = bytearray(entries)
    entries[data_off_pos:data_off_pos + 4] = struct.pack("<I", data_off)
    with open(path, "wb") as fh:
        fh.write(b"II*\0" + struct.pack("<I", ifd_off))
        fh.write(struct.pack("<H", len(tags)) + bytes(entries) + struct.pack("<I", 0))
        fh.write(extra)
        fh.write(data)


# GeoKeyDirectory: version 1.1.0, keys GTModelTypeGeoKey (1024) = 1 projected, GTRasterTypeGeoKey (1025) = 1 area;
# no coordinate-system code: the campaign states crs "site".
GEOKEYS = (34735, 3, [1, 1, 0, 2, 1024, 0, 1, 1, 1025, 0, 1, 1])
if "--epsg" in sys.argv:
    # With --epsg N the file states ProjectedCSTypeGeoKey (3072) = N (a bad-input case: the campaign then drops crs).
    GEOKEYS = (34735, 3, [1, 1, 0, 3, 1024, 0, 1, 1, 1025, 0, 1, 1, 3072, 0, 1, int(sys.argv[sys.argv.index("--epsg") + 1])])
if KIND == "xyz":
    E = e0 + de * np.arange(ne)
    N = n0 + dn * np.arange(nn)
    EE, NN = np.meshgrid(E, N)
    Z = np.round(hill(EE, NN), 3)
    rows = [(x, y, z) for x, y, z in zip(EE.ravel(), NN.ravel(), Z.ravel())]
    order = rng.permutation(len(rows))
    with open(os.path.join(out, "terrain.csv"), "w") as fh:
        fh.write("e_m,n_m,alt_m\n")
        for k in order:
            x, y, z = rows[k]
            fh.write(f"{x:.1f},{y:.1f},{z:.3f}\n")
    terrain = {"file": "terrain.csv", "format": "xyz", "columns": {"x": "e_m", "y": "n_m", "z": "alt_m"}}

    def ground(e, n):
        return bilinear(Z, e0, n0, de, dn, e, n)

    def extent(e, n):
        return (e0 <= e <= e0 + (ne - 1) * de) and (n0 <= n <= n0 + (nn - 1) * dn)
else:
    X, Y, H = raster_nodes()
    if KIND == "tiepoint":
        geo = [(33550, 12, [px, px, 0.0]), (33922, 12, [0.0, 0.0, 0.0, x0, y0, 0.0]), GEOKEYS]
    elif KIND == "transform":
        geo = [(34264, 12, [px, 0.0, 0.0, x0, 0.0, -px, 0.0, y0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 1.0]), GEOKEYS]
    else:
        geo = [(34264, 12, [a, b, 0.0, x0, e_, f, 0.0, y0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 1.0]), GEOKEYS]
    write_tiff(os.path.join(out, "terrain.tif"), H, geo)
    terrain = {"file": "terrain.tif", "crs": "site"}
    if KIND == "rotated":
        # Raster coordinates of a site point: invert the affine map; the extent is that of the pixel centres.
        M = np.array([[a, b], [e_, f]])
        Minv = np.linalg.inv(M)

        def rc(e, n):
            I, J = Minv @ np.array([e - x0, n - y0])
            return I - 0.5, J - 0.5

        def extent(e, n):
            I, J = rc(e, n)
            return 0 <= I <= nx - 1 and 0 <= J <= ny - 1

        def ground(e, n):
            e, n = np.asarray(e, dtype=float), np.asarray(n, dtype=float)
            IJ = np.tensordot(Minv, np.stack([e - x0, n - y0]), axes=1) - 0.5
            ok = (IJ[0] >= 0) & (IJ[0] <= nx - 1) & (IJ[1] >= 0) & (IJ[1] <= ny - 1)
            return np.where(ok, hill(e, n), np.nan)
    else:
        xs, ys = x0 + px * (np.arange(nx) + 0.5), y0 - px * (np.arange(ny) + 0.5)
        Hd = H.astype(float)

        def extent(e, n):
            return xs[0] <= e <= xs[-1] and ys[-1] <= n <= ys[0]

        # North-up nodes: flip the rows so that n ascends, then the same bilinear interpolation.
        Hn = Hd[::-1, :]

        def ground(e, n):
            return bilinear(Hn, xs[0], ys[-1], px, px, e, n)

# ---- rows
INSTR = {"a": np.array([0.0, 0.0, 14.0]), "b": np.array([1100.0 * SCALE, 300.0 * SCALE, 14.0])}
# Plane: site frame, wind from 270 (x = east, y = north), terrain-following at 40 m, x -200..1300, y -300..600.
PX, PY = (-200.0 * SCALE, 1300.0 * SCALE), (-300.0 * SCALE, 600.0 * SCALE)


def beam(o, az, el, r):
    """Points at ranges r along a beam: straight, or over the 4/3 Earth (height h(r), ground distance s(r))."""
    r = np.asarray(r, dtype=float)
    ca, sa = math.cos(math.radians(az)), math.sin(math.radians(az))
    if not CURVED:
        ce, se = math.cos(math.radians(el)), math.sin(math.radians(el))
        return o[0] + r * ce * sa, o[1] + r * ce * ca, o[2] + r * se
    h = np.sqrt(r * r + KA * KA + 2 * r * KA * math.sin(math.radians(el))) - KA
    sg = KA * np.arcsin(r * math.cos(math.radians(el)) / (KA + h))
    return o[0] + sg * sa, o[1] + sg * ca, o[2] + h
expected = {k: {"read": 0, "accepted": 0, "below_ground": 0, "beam_blocked": 0, "outside_terrain": 0, "outside_planes": 0} for k in INSTR}
T0 = 1790000000.0
written = {k: [] for k in INSTR}
tries = 0
while min(len(v) for v in written.values()) < 400 and tries < 200000:
    tries += 1
    inst = "a" if tries % 2 else "b"
    if len(written[inst]) >= 400:
        continue
    o = INSTR[inst]
    if rng.uniform() < 0.65:
        # Towards the hill, low: the rows that meet its flanks.
        az = math.degrees(math.atan2(HE - o[0], HN - o[1])) + rng.uniform(-25, 25)
        el = rng.uniform(0.3, 6.0) / SCALE
        rr = rng.uniform(100, 1000) * SCALE
    else:
        az = rng.uniform(0, 360)
        el = rng.uniform(0.5, 9.0) / SCALE
        rr = rng.uniform(60, 1400) * SCALE
    nb = np.array([math.cos(math.radians(el)) * math.sin(math.radians(az)), math.cos(math.radians(el)) * math.cos(math.radians(az)), math.sin(math.radians(el))])
    p = np.array(beam(o, az, el, rr), dtype=float)
    if KIND == "rotated":
        # wakeplane resamples a turned raster onto a site grid of its pixel size: within two pixels of the raster's
        # edge, whether a point has ground depends on that grid. Such rows are not written.
        I, J = rc(p[0], p[1])
        if min(abs(I), abs(I - (nx - 1)), abs(J), abs(J - (ny - 1))) < 2 and -2 < I < nx + 1 and -2 < J < ny + 1:
            continue
    if not extent(p[0], p[1]):
        reason = "outside_terrain"
    else:
        g = float(ground(p[0], p[1]))
        c = p[2] - (g + CLEAR)
        if abs(c) < 1.5:
            continue
        if c < 0:
            reason = "below_ground"
        else:
            s = np.arange(0.0, rr, 0.5 * SCALE)
            be, bn, bz = beam(o, az, el, s)
            lowest = float(np.nanmin(bz - ground(be, bn)))
            if abs(lowest) < 1.5:
                continue
            if lowest < 0:
                reason = "beam_blocked"
            else:
                hz = p[2] if SITE_HEIGHTS else p[2] - g
                if abs(hz - (PLANE_Z - SLAB)) < 1.5 or abs(hz - (PLANE_Z + SLAB)) < 1.5:
                    continue
                if min(abs(p[0] - PX[0]), abs(p[0] - PX[1]), abs(p[1] - PY[0]), abs(p[1] - PY[1])) < 1.5:
                    continue
                inside = PX[0] < p[0] < PX[1] and PY[0] < p[1] < PY[1] and abs(hz - PLANE_Z) < SLAB
                reason = "accepted" if inside else "outside_planes"
    expected[inst]["read"] += 1
    expected[inst][reason] += 1
    if "--debug" in sys.argv:
        print(inst, len(written[inst]), reason, [round(float(v), 2) for v in p], file=sys.stderr)
    written[inst].append((T0 + 0.25 * len(written[inst]), az, el, rr))

for inst, rows in written.items():
    with open(os.path.join(out, f"{inst}.csv"), "w") as fh:
        fh.write("time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n")
        for t, az, el, rr in rows:
            fh.write(f"{t:.2f},{inst},{az:.6f},{el:.6f},{rr:.3f},3.0,-8\n")

campaign = {
    "name": f"heldback-terrain-{KIND}",
    "site": {"terrain": terrain, "earthCurvature": CURVED},
    "turbine": {"id": "H-1", "position_m": [650.0, 200.0, float(hill(650.0, 200.0))], "hubHeight_m": 80, "rotorDiameter_m": 80},
    "instruments": [{"id": k, "position_m": [float(v[0]), float(v[1]), float(v[2])], "files": [f"{k}.csv"]} for k, v in INSTR.items()],
    "planes": [{"id": "tf", "orientation": "horizontal", "frame": "site", "heights": "site" if SITE_HEIGHTS else "terrain", "z_m": PLANE_Z, "thickness_m": 2 * SLAB,
                "y": {"min": PY[0], "max": PY[1]}, "xRange": {"min": PX[0], "max": PX[1]}, "cell_m": [100 * SCALE, 100 * SCALE]}],
    "qc": {"groundClearance_m": CLEAR, "cnr_db": {"min": -30}},
    "windows": {"kind": "record"},
    "windDirection": {"kind": "fixed", "deg": 270},
    "output": {"dir": "out", "images": False, "netcdf": False},
}
with open(os.path.join(out, "campaign.yaml"), "w") as fh:
    json.dump(campaign, fh, indent=1)
# Planner check (flat Earth only): the straight beam from each instrument to each cell centre of the plane (40 m above the ground
# under the centre), marched in 0.5-m steps: blocked when it passes below the ground. Cells whose lowest clearance
# lies within 1.5 m of zero, or off the raster, are left out.
plan_beams = []
for iy, y in enumerate(np.arange(PY[0] + 50.0, PY[1], 100.0)) if not (CURVED or SITE_HEIGHTS) else []:
    for ix, x in enumerate(np.arange(PX[0] + 50.0, PX[1], 100.0)):
        g = float(ground(x, y))
        if not math.isfinite(g):
            continue
        q = np.array([x, y, g + PLANE_Z])
        for inst, o in INSTR.items():
            L = float(np.linalg.norm(q - o))
            s = np.arange(0.0, L, 0.5 * SCALE)
            v = (q - o) / L
            gg = ground(o[0] + s * v[0], o[1] + s * v[1])
            if np.isnan(gg).any():
                continue
            lowest = float(np.min(o[2] + s * v[2] - gg))
            if abs(lowest) >= 1.5:
                plan_beams.append([iy, ix, inst, lowest < 0])
expected["plan_beams"] = plan_beams
with open(os.path.join(out, "expected.json"), "w") as fh:
    json.dump(expected, fh, indent=1)
print(json.dumps({k: v for k, v in expected.items() if k != "plan_beams"}))
