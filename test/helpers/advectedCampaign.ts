/**
 * A cross-plane campaign written without our simulator (src/sim), with a known truth, for the coverage of the
 * uncertainty budget on data the simulator did not shape.
 *
 * Site: an invented turbine at the origin (hub 100 m, rotor 120 m), wind from 270 degrees, so the rotor frame is
 * x = east, y = north, z = up. Cross plane at x = 480 m (4 D), y in [-150, 150] m, z in [20, 180] m, cells of
 * 30 m x 40 m, slab +-15 m.
 *
 * Wind: a mean flow (power-law shear, a Gaussian wake deficit 10 m left of the rotor axis with a swirl, meanCell)
 * plus a turbulent field frozen in the mean flow and advected with U = 8 m/s (Taylor's hypothesis): per component
 * a sum of 48 random Fourier modes, wavelengths log-uniform between 12 and 240 m, random directions, equal energy,
 * standard deviations 0.5, 0.4 and 0.3 m/s for u, v, w. A point thus sees a fluctuation correlated in time over
 * the passage of its eddies (seconds), the same for every instrument looking there at the same time.
 *
 * Instruments: three ground-based lidars at their own positions, each steering its beam continuously along its own
 * Lissajous path through the plane (incommensurate periods, so every row has its own azimuth, elevation and
 * range), with the focus point jittered across the slab; one sample per ray, at irregular times (gaps uniform in
 * [0.6, 1.4] x 1/9 s, neither the simulator's rate nor its grid). Radial velocity = wind at the point along the
 * beam (positive away) + estimator noise 0.08 m/s x max(1, 10^((-16 - CNR)/20)). CNR = -12 dB - 20 log10(r / 300
 * m) + 3.5 dB x N(0, 1). Below JUNK_BELOW_DB = -21 dB (not a level wakeplane knows) every sample is junk: uniform
 * in +-15 m/s.
 *
 * Truth per cell and window (`truthOf`): the mean of the true wind (mean flow + turbulence) over the window's time
 * [start, end) and over the cell's box (its y and z extent, x within the slab's +-15 m), i.e. the space-time
 * average a perfect instrument sampling the box uniformly would measure. The turbulence part is exact (the box
 * and window average of a Fourier mode is a product of sinc factors, the advection entering as x - U t); the mean
 * flow is averaged by an 8 x 8 midpoint rule over the cell (its variation over 30 m x 40 m is smooth, the rule's
 * error below 1e-3 m/s).
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { gaussian, mulberry32 } from '../../src/math/random.ts';

export const PLANE_X = 480, HALF_SLAB = 15, U_ADV = 8, HUB = 100;
export const Y_RANGE: [number, number] = [-150, 150];
export const Z_RANGE: [number, number] = [20, 180];
export const CELL: [number, number] = [30, 40];
export const JUNK_BELOW_DB = -21;
export const WINDOW_S = 600;
const T0 = 1.79e9; // a multiple of 600 s: windows anchored at the epoch start at T0
const MODES = 48;
const SIGMA = [0.5, 0.4, 0.3];

interface Mode { kx: number; ky: number; kz: number; phase: number; amp: number }

/** Mean flow (u, v, w) at (y, z), rotor frame, m/s. */
export function meanFlow(y: number, z: number, out: number[]): number[] {
  const dy = y - 10, dz = z - HUB, s = 45;
  const g = Math.exp(-(dy * dy + dz * dz) / (2 * s * s));
  const swirl = 0.5 / s; // peak tangential speed about 0.5 m/s near r = s
  out[0] = 8 * Math.pow(Math.max(z, 1) / HUB, 0.14) * (1 - 0.35 * g);
  out[1] = -swirl * dz * g + 0.2;
  out[2] = swirl * dy * g;
  return out;
}

export interface AdvectedCampaign {
  dir: string;
  file: string;
  windows: number;
  /** Truth (u, v, w) of the cell with centre (y, z) in the window starting at start_s (Unix s). */
  truthOf(start_s: number, y: number, z: number): [number, number, number];
  /** Share of the rows that are junk. */
  junkShare: number;
}

function modes(rnd: () => number): Mode[][] {
  return SIGMA.map((sd) =>
    Array.from({ length: MODES }, () => {
      const lambda = 12 * Math.pow(20, rnd()); // 12 .. 240 m, log-uniform
      const k = (2 * Math.PI) / lambda;
      const cz = 2 * rnd() - 1, ph = 2 * Math.PI * rnd(), sz = Math.sqrt(1 - cz * cz);
      return { kx: k * sz * Math.cos(ph), ky: k * sz * Math.sin(ph), kz: k * cz, phase: 2 * Math.PI * rnd(), amp: sd * Math.sqrt(2 / MODES) };
    }),
  );
}

/** Turbulent velocity at (x, y, z) and time t (s from T0), m/s. */
function turbulence(ms: Mode[][], x: number, y: number, z: number, t: number, out: number[]): number[] {
  const xs = x - U_ADV * t;
  for (let c = 0; c < 3; c++) {
    let a = 0;
    for (const m of ms[c]) a += m.amp * Math.cos(m.kx * xs + m.ky * y + m.kz * z + m.phase);
    out[c] = a;
  }
  return out;
}

/** E[exp(i k X)] for X uniform on [a, b]: exp(i k (a + b) / 2) sinc(k (b - a) / 2), as [re, im]. */
function charUniform(k: number, a: number, b: number): [number, number] {
  const h = (k * (b - a)) / 2, c = (k * (a + b)) / 2;
  const s = Math.abs(h) < 1e-12 ? 1 : Math.sin(h) / h;
  return [s * Math.cos(c), s * Math.sin(c)];
}

/** Mean of the turbulent field over x in [x0, x1], y in [y0, y1], z in [z0, z1], t in [t0, t1] (exact). */
function turbulenceMean(ms: Mode[][], box: number[], t0: number, t1: number, out: number[]): number[] {
  const [x0, x1, y0, y1, z0, z1] = box;
  for (let c = 0; c < 3; c++) {
    let a = 0;
    for (const m of ms[c]) {
      // cos(kx x - kx U t + ky y + kz z + phase): Re[e^{i phase} E e^{i kx x} E e^{-i kx U t} E e^{i ky y} E e^{i kz z}]
      let re = Math.cos(m.phase), im = Math.sin(m.phase);
      for (const [k, lo, hi] of [[m.kx, x0, x1], [-m.kx * U_ADV, t0, t1], [m.ky, y0, y1], [m.kz, z0, z1]] as const) {
        const [cr, ci] = charUniform(k, lo, hi);
        const r2 = re * cr - im * ci;
        im = re * ci + im * cr;
        re = r2;
      }
      a += m.amp * re;
    }
    out[c] = a;
  }
  return out;
}

const INSTRUMENTS = [
  { id: 'west', position: [300, 420, 2], periods: [41.3, 12.7], phase: 0.3 },
  { id: 'east', position: [640, -390, 1], periods: [37.9, 13.9], phase: 1.9 },
  { id: 'back', position: [1060, 70, 3], periods: [29.3, 9.7], phase: 4.1 },
] as const;

export function writeAdvectedCampaign(opts: { seed?: number; windows?: number; rate_hz?: number } = {}): AdvectedCampaign {
  const seed = opts.seed ?? 5, windows = opts.windows ?? 8, rate = opts.rate_hz ?? 9;
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-advected-'));
  mkdirSync(join(dir, 'data'));
  const ms = modes(mulberry32(seed * 7919 + 17));
  const mean = [0, 0, 0], tu = [0, 0, 0];
  let rows = 0, junk = 0;
  const T = windows * WINDOW_S;
  INSTRUMENTS.forEach((ins, k) => {
    const rnd = mulberry32(seed * 104729 + k * 613);
    const [pe, pn, pu] = ins.position;
    const lines = ['time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db'];
    let t = rnd() / rate;
    while (t < T) {
      // The beam's focus point: a Lissajous path over the plane (a little beyond its edges), jittered across the slab.
      const y = 165 * Math.sin((2 * Math.PI * t) / ins.periods[0] + ins.phase);
      const z = 100 + 88 * Math.sin((2 * Math.PI * t) / ins.periods[1]);
      const x = PLANE_X + (2 * rnd() - 1) * 12;
      const de = x - pe, dn = y - pn, du = z - pu;
      const r = Math.hypot(de, dn, du);
      const ne = de / r, nn = dn / r, nu = du / r;
      const az = ((Math.atan2(de, dn) * 180) / Math.PI + 360) % 360;
      const el = (Math.asin(nu) * 180) / Math.PI;
      meanFlow(y, z, mean);
      turbulence(ms, x, y, z, t, tu);
      const cnr = -12 - 20 * Math.log10(r / 300) + 3.5 * gaussian(rnd);
      const noise = 0.08 * Math.max(1, Math.pow(10, (-16 - cnr) / 20));
      // Rotor frame = (east, north, up) for wind from 270.
      let vr = (mean[0] + tu[0]) * ne + (mean[1] + tu[1]) * nn + (mean[2] + tu[2]) * nu + noise * gaussian(rnd);
      if (cnr < JUNK_BELOW_DB) { vr = -15 + 30 * rnd(); junk++; }
      lines.push(`${(T0 + t).toFixed(3)},${ins.id},${az.toFixed(4)},${el.toFixed(4)},${r.toFixed(2)},${vr.toFixed(3)},${cnr.toFixed(2)}`);
      rows++;
      t += (0.6 + 0.8 * rnd()) / rate;
    }
    writeFileSync(join(dir, 'data', `${ins.id}.csv`), lines.join('\n') + '\n');
  });
  const campaign = {
    name: 'advected',
    turbine: { id: 'T1', position_m: [0, 0, 0], hubHeight_m: HUB, rotorDiameter_m: 120 },
    instruments: INSTRUMENTS.map((ins) => ({ id: ins.id, position_m: [...ins.position], files: [`data/${ins.id}.csv`] })),
    planes: [{ id: 'x4', x_m: PLANE_X, y: { min: Y_RANGE[0], max: Y_RANGE[1] }, z: { min: Z_RANGE[0], max: Z_RANGE[1] }, cell_m: [...CELL], thickness_m: 2 * HALF_SLAB }],
    windows: { kind: 'fixed', length_s: WINDOW_S, anchor: 'epoch' },
    windDirection: { kind: 'fixed', deg: 270 },
    output: { images: false, netcdf: false, writeRejected: false },
  };
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(campaign));
  const truthOf = (start_s: number, yc: number, zc: number): [number, number, number] => {
    const [hy, hz] = [CELL[0] / 2, CELL[1] / 2];
    const acc = [0, 0, 0];
    const N = 8;
    for (let a = 0; a < N; a++)
      for (let b = 0; b < N; b++) {
        meanFlow(yc - hy + ((a + 0.5) * 2 * hy) / N, zc - hz + ((b + 0.5) * 2 * hz) / N, mean);
        for (let c = 0; c < 3; c++) acc[c] += mean[c] / (N * N);
      }
    const t0 = start_s - T0;
    turbulenceMean(ms, [PLANE_X - HALF_SLAB, PLANE_X + HALF_SLAB, yc - hy, yc + hy, zc - hz, zc + hz], t0, t0 + WINDOW_S, tu);
    return [acc[0] + tu[0], acc[1] + tu[1], acc[2] + tu[2]];
  };
  return { dir, file, windows, truthOf, junkShare: junk / rows };
}
