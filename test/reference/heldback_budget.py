#!/usr/bin/env python3
"""Held-back coverage cases for the uncertainty budget (issue 11), written with numpy only (no code shared with
src/sim or the TypeScript test helpers).

  python3 test/reference/heldback_budget.py write DIR --case NAME [--windows N] [--seed S]
      writes DIR/campaign.yaml, DIR/data/<instrument>.csv and DIR/truth.csv
      [--tau S] [--junk DB]; environment HB_SYNC=1: every scanner on one schedule of aim points (synchronised
      scanning, the instruments looking at one point together); HB_NO_W=1: no vertical wind (mean and fluctuation)
  python3 test/reference/heldback_budget.py coverage RUNDIR TRUTH.csv
      prints JSON: per component n, share within 2 u_combined and within 2 u_se, binomial standard error,
      and the instruments' resolved CNR limits

Model (all SI; site frame east/north/up; wind from 270 degrees, so the rotor frame is x = east, y = north, z = up):
- mean flow: uniform 8 m/s with power-law shear (alpha 0.14, hub 100 m), a Gaussian wake deficit (0.35, sigma 45 m,
  centred 10 m left of the axis), a small swirl and v = 0.3 m/s, w = 0.1 m/s;
- turbulence: one fluctuation vector per cell, constant over the cell's box, a first-order autoregressive (AR(1),
  discretised Ornstein-Uhlenbeck) process in time on a 0.05 s grid with integral time scale tau (exp(-dt/tau)
  lag correlation; tau = 0: independent draws per sample), standard deviations 0.6, 0.45, 0.35 m/s for u, v, w,
  independent between cells and components;
- truth of a cell and window: the mean flow averaged over the cell's box (8 x 8 midpoint rule) plus the time mean of
  the cell's fluctuation over the window's grid points (0 for independent draws, their expectation);
- scanners: each visits aim points (random points of random cells of the plane, inside the slab) in bursts of
  three rays 0.4-0.7 s apart, then moves on; one range gate per ray at the aim point; every scanner at its own pace;
- pulsed probe volume: radial velocity of the mean flow = its average along the beam with the range weighting
  function of a pulsed lidar, a Gaussian pulse (FWHM 200 ns) convolved with a 30 m gate (Banakh & Smalikho 1997;
  also Lindeloew 2007, eq. 2.26: W(s) = [erf((s + dp/2)/rp) - erf((s - dp/2)/rp)] / (2 dp), rp = c tau_p /
  (4 sqrt(ln 2))), by a 41-point quadrature over +-90 m;
- pointing errors: per instrument and window, azimuth and elevation offsets drawn from N(0, sigma) (sigma declared in
  the campaign), the beam points along the offset direction while the file reports the nominal angles;
- noise: 0.06 m/s x max(1, 10^((edge + 4 - CNR)/20)); CNR = c0 - 20 log10(r / r0) + 3 N(0, 1); below JUNK_DB
  (a case parameter, not a level the project's demos use) the radial velocity is junk, uniform in +-15 m/s.
"""
import json, math, os, sys
import numpy as np

C_LIGHT = 299792458.0
SIG = np.array([0.6, 0.45, 0.0 if os.environ.get('HB_NO_W') else 0.35])
HUB, D = 100.0, 120.0
T0 = 1.8e9  # a multiple of 600 s
WIN = 600.0
DT = 0.05
SYNC = bool(os.environ.get('HB_SYNC'))

CASES = {
    # Cross plane at 4 D, three scanners, crossing angles near 90 degrees, elevations up to about 30 degrees.
    'wide': dict(plane='cross', tau=1.0, junk=-18.0, c0=-10.0, r0=300.0,
                 ins=[('sw', (300, -280, 2)), ('nw', (260, 300, 1)), ('ea', (760, 40, 3))], point=(0.1, 0.1)),
    # Far scanners: crossing angles about 30-40 degrees, elevations below 8 degrees, so w is poorly resolved.
    'narrow': dict(plane='cross', tau=1.0, junk=-31.0, c0=-25.0, r0=1000.0,
                   ins=[('fa', (-700, 450, 2)), ('fb', (-700, -450, 1)), ('fc', (1600, 250, 3))], point=(0.05, 0.05)),
    # Horizontal plane at hub height, two scanners crossing at about 60 degrees.
    'horiz': dict(plane='horizontal', tau=1.0, junk=-18.0, c0=-11.0, r0=400.0,
                  ins=[('hs', (300, -520, 2)), ('hn', (560, 480, 1))], point=(0.1, 0.1)),
    # The same with 30 m cells: about seven samples per instrument, cell and window (few degrees of freedom).
    'sparse': dict(plane='horizontal', tau=0.0, junk=-18.0, c0=-11.0, r0=400.0, cell=(30.0, 30.0),
                   ins=[('hs', (300, -520, 2)), ('hn', (560, 480, 1))], point=(0.1, 0.1)),
}

def mean_flow(y, z):
    dy, dz, s = y - 10.0, z - HUB, 45.0
    g = np.exp(-(dy * dy + dz * dz) / (2 * s * s))
    u = 8.0 * (np.maximum(z, 1.0) / HUB) ** 0.14 * (1 - 0.35 * g)
    sw = 0.5 / s
    wm = 0.0 if os.environ.get('HB_NO_W') else sw * dy * g + 0.1
    return np.stack([u, -sw * dz * g + 0.3, wm + 0 * u], axis=-1)

def weighting(s, fwhm_ns=200.0, gate=30.0):
    rp = C_LIGHT * fwhm_ns * 1e-9 / (4 * math.sqrt(math.log(2)))
    from scipy.special import erf
    return (erf((s + gate / 2) / rp) - erf((s - gate / 2) / rp)) / (2 * gate)

def plane_geom(case):
    if case['plane'] == 'cross':
        return dict(level=480.0, y=(-120.0, 120.0), s=(30.0, 170.0), cell=(30.0, 35.0), half=15.0)
    return dict(level=HUB, y=(-120.0, 120.0), s=(240.0, 720.0), cell=case.get('cell', (40.0, 40.0)), half=15.0)

def to_site(case, g, y, s, off):
    """Rotor-frame point of plane coordinates (y, s) and offset across the plane -> site (east, north, up)."""
    if case['plane'] == 'cross':
        return np.stack([g['level'] + off, y, s], axis=-1)
    return np.stack([s, y, g['level'] + off], axis=-1)

def write(out, name, windows, seed, tau=None, junk=None):
    case = dict(CASES[name])
    if tau is not None: case['tau'] = tau
    if junk is not None: case['junk'] = junk
    rng = np.random.default_rng(seed)
    g = plane_geom(case)
    ny = int(round((g['y'][1] - g['y'][0]) / g['cell'][0])); ns = int(round((g['s'][1] - g['s'][0]) / g['cell'][1]))
    ncell = ny * ns
    T = windows * WIN
    nt = int(round(T / DT)) + 1
    tau = case['tau']
    # Cell fluctuations on the time grid (AR(1)); or none for independent draws.
    if tau > 0:
        phi = math.exp(-DT / tau)
        turb = np.empty((nt, ncell, 3))
        turb[0] = rng.standard_normal((ncell, 3)) * SIG
        e = rng.standard_normal((nt, ncell, 3)) * SIG * math.sqrt(1 - phi * phi)
        for k in range(1, nt):
            turb[k] = phi * turb[k - 1] + e[k]
    os.makedirs(os.path.join(out, 'data'), exist_ok=True)
    sw_deg = case['point']
    offs = rng.standard_normal((len(case['ins']), windows, 2)) * np.array(sw_deg)
    sq = np.linspace(-90, 90, 41)
    wq = weighting(sq); wq /= wq.sum()
    rows_all = 0; junk_n = 0
    for i, (iid, pos) in enumerate(case['ins']):
        pos = np.array(pos, float)
        # Burst schedule (sync: every scanner on the same schedule and aim points, looking at one point together).
        srng = np.random.default_rng(seed + 99) if SYNC else rng
        times = []; t = srng.uniform(0, 1)
        while t < T:
            for _ in range(3):
                times.append(t); t += srng.uniform(0.4, 0.7)
            t += srng.uniform(0.3, 1.0)
        times = np.array([x for x in times if x < T])
        n = len(times)
        # Aim points: a random cell per burst, a random point in it.
        burst = np.arange(n) // 3
        cb = srng.integers(0, ncell, burst.max() + 1)[burst]
        iy, js = cb % ny, cb // ny
        y = g['y'][0] + (iy + srng.uniform(0.05, 0.95, n)) * g['cell'][0]
        s = g['s'][0] + (js + srng.uniform(0.05, 0.95, n)) * g['cell'][1]
        off = srng.uniform(-0.8, 0.8, n) * g['half']
        p = to_site(case, g, y, s, off)
        d = p - pos; r = np.linalg.norm(d, axis=1); nvec = d / r[:, None]
        az = np.degrees(np.arctan2(nvec[:, 0], nvec[:, 1])) % 360
        el = np.degrees(np.arcsin(nvec[:, 2]))
        # True beam: offset angles of this instrument's window.
        wi = np.minimum((times // WIN).astype(int), windows - 1)
        azt = np.radians(az + offs[i, wi, 0]); elt = np.radians(el + offs[i, wi, 1])
        nt_ = np.stack([np.sin(azt) * np.cos(elt), np.cos(azt) * np.cos(elt), np.sin(elt)], axis=1)
        # Mean flow along the true beam, weighted by the pulsed range weighting.
        pts = pos[None, None, :] + (r[:, None, None] + sq[None, :, None]) * nt_[:, None, :]
        if case['plane'] == 'cross':
            mf = mean_flow(pts[..., 1], pts[..., 2])
        else:
            mf = mean_flow(pts[..., 1], pts[..., 2])
        vmean = np.einsum('nq,nqc,nc->n', np.broadcast_to(wq, (n, len(sq))), mf, nt_)
        if tau > 0:
            k = np.minimum(np.round(times / DT).astype(int), nt - 1)
            tv = turb[k, cb]
        else:
            tv = rng.standard_normal((n, 3)) * SIG
        cnr = case['c0'] - 20 * np.log10(r / case['r0']) + 3 * rng.standard_normal(n)
        sn = 0.06 * np.maximum(1, 10 ** ((case['junk'] + 4 - cnr) / 20))
        vr = vmean + np.einsum('nc,nc->n', tv, nt_) + sn * rng.standard_normal(n)
        bad = cnr < case['junk']
        vr[bad] = rng.uniform(-15, 15, bad.sum())
        junk_n += bad.sum(); rows_all += n
        with open(os.path.join(out, 'data', f'{iid}.csv'), 'w') as f:
            f.write('time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n')
            for a in range(n):
                f.write(f'{T0 + times[a]:.3f},{iid},{az[a]:.4f},{el[a]:.4f},{r[a]:.2f},{vr[a]:.3f},{cnr[a]:.2f}\n')
    # Truth per window and cell.
    with open(os.path.join(out, 'truth.csv'), 'w') as f:
        f.write('window_start_s,a_m,b_m,u,v,w\n')
        m = 8
        for c in range(ncell):
            iy, js = c % ny, c // ny
            ya = g['y'][0] + (iy + (np.arange(m) + 0.5) / m) * g['cell'][0]
            sa = g['s'][0] + (js + (np.arange(m) + 0.5) / m) * g['cell'][1]
            Y, S = np.meshgrid(ya, sa)
            mf = mean_flow(Y, S) if case['plane'] == 'cross' else mean_flow(Y, np.full_like(Y, HUB))
            base = mf.reshape(-1, 3).mean(axis=0)
            yc = g['y'][0] + (iy + 0.5) * g['cell'][0]; sc = g['s'][0] + (js + 0.5) * g['cell'][1]
            for wdx in range(windows):
                tm = np.zeros(3)
                if tau > 0:
                    k0, k1 = int(round(wdx * WIN / DT)), int(round((wdx + 1) * WIN / DT))
                    tm = turb[k0:k1, c].mean(axis=0)
                u = base + tm
                f.write(f'{T0 + wdx * WIN:.0f},{yc:.3f},{sc:.3f},{u[0]:.6f},{u[1]:.6f},{u[2]:.6f}\n')
    ins_yaml = ''.join(
        f"  - id: {iid}\n    position_m: [{p[0]}, {p[1]}, {p[2]}]\n    kind: pulsed\n    pulsed: {{pulseFwhm_ns: 200, gateLength_m: 30}}\n"
        f"    pointingUncertainty: {{azimuth_deg: {sw_deg[0]}, elevation_deg: {sw_deg[1]}}}\n    files: [data/{iid}.csv]\n"
        for iid, p in case['ins'])
    if case['plane'] == 'cross':
        plane = (f"  - id: p4\n    x_m: {g['level']}\n    y: {{min: {g['y'][0]}, max: {g['y'][1]}}}\n"
                 f"    z: {{min: {g['s'][0]}, max: {g['s'][1]}}}\n    cell_m: [{g['cell'][0]}, {g['cell'][1]}]\n    thickness_m: {2 * g['half']}\n")
    else:
        plane = (f"  - id: h1\n    orientation: horizontal\n    z_m: {g['level']}\n    y: {{min: {g['y'][0]}, max: {g['y'][1]}}}\n"
                 f"    xRange: {{min: {g['s'][0]}, max: {g['s'][1]}}}\n    cell_m: [{g['cell'][0]}, {g['cell'][1]}]\n    thickness_m: {2 * g['half']}\n")
    with open(os.path.join(out, 'campaign.yaml'), 'w') as f:
        f.write(f"name: hb{name}\nturbine: {{id: T9, position_m: [0, 0, 0], hubHeight_m: {HUB}, rotorDiameter_m: {D}}}\n"
                f"instruments:\n{ins_yaml}planes:\n{plane}windows: {{kind: fixed, length_s: {WIN:.0f}, anchor: epoch}}\n"
                f"windDirection: {{kind: fixed, deg: 270}}\noutput: {{images: false, netcdf: false, writeRejected: false}}\n")
    print(json.dumps(dict(rows=rows_all, junk_share=junk_n / rows_all, junk_db=case['junk'])))

def coverage(run, truth_file):
    import csv, glob
    truth = {}
    with open(truth_file) as f:
        for r in csv.DictReader(f):
            truth[(round(float(r['window_start_s'])), round(float(r['a_m']), 1), round(float(r['b_m']), 1))] = [float(r[k]) for k in 'uvw']
    out = {k: dict(n=0, budget=0, scatter=0) for k in 'uvw'}
    terms = {}
    for fn in sorted(glob.glob(os.path.join(run, 'fields', '*.csv'))):
        with open(fn) as f:
            for r in csv.DictReader(f):
                t0 = round(np.datetime64(r['window_start'].replace('Z', '')).astype('datetime64[ms]').astype(float) / 1000)
                b = r['z_m'] if r.get('z_m', '') != '' and 'x_m' not in r else r['x_m']
                key = (t0, round(float(r['y_m']), 1), round(float(b), 1))
                if key not in truth:
                    continue
                tv = truth[key]
                for i, k in enumerate('uvw'):
                    if r.get(f'{k}_ms', '') in ('', None) or r.get(f'{k}_unc_combined_ms', '') in ('', None):
                        continue
                    e = abs(float(r[f'{k}_ms']) - tv[i]); uc = float(r[f'{k}_unc_combined_ms'])
                    o = out[k]; o['n'] += 1
                    o['budget'] += e <= 2 * uc
                    o['scatter'] += e <= 2 * float(r[f'{k}_se_ms'])
                    o.setdefault('z2', 0.0); o['z2'] += (e / uc) ** 2 if uc > 0 else 0
                    for col, val in r.items():
                        if col.startswith(f'{k}_unc_') and val not in ('', None):
                            terms.setdefault(col, []).append(float(val))
    res = {}
    for k, o in out.items():
        if o['n'] == 0:
            continue
        p = o['budget'] / o['n']
        res[k] = dict(n=o['n'], coverage=round(p, 4), se=round(math.sqrt(p * (1 - p) / o['n']), 4),
                      scatter_only=round(o['scatter'] / o['n'], 4), rms_z=round(math.sqrt(o['z2'] / o['n']), 3))
    res['terms_rms'] = {c: round(float(np.sqrt(np.mean(np.square(v)))), 4) for c, v in sorted(terms.items())}
    man = json.load(open(os.path.join(run, 'manifest.json')))
    res['cnr_limits_db'] = man['settings']['qc']['cnr_db'].get('resolved_db')
    print(json.dumps(res))

if __name__ == '__main__':
    a = sys.argv[1:]
    opt = {a[i][2:]: a[i + 1] for i in range(len(a)) if a[i].startswith('--')}
    if a[0] == 'write':
        write(a[1], opt['case'], int(opt.get('windows', 10)), int(opt.get('seed', 1)),
              float(opt['tau']) if 'tau' in opt else None, float(opt['junk']) if 'junk' in opt else None)
    else:
        coverage(a[1], a[2])
