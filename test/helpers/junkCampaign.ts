/**
 * A two-instrument horizontal-plane campaign written without our simulator, for the end-to-end check of the
 * data-driven CNR limit: both lidars at hub height scan the plane behind a turbine with every row at its own angles
 * (random azimuth, elevation and range: no rays, no repeated angles), the flow has a Gaussian deficit and a lateral
 * wave, turbulence doubles inside the wake, estimator noise grows as CNR falls, and each instrument has its own junk
 * population (velocities unrelated to the wind) below its own CNR level, at other levels than the simulator's.
 * The truth is the analytic flow at the cell centres (`truthAt`).
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { gaussian, mulberry32 } from '../../src/math/random.ts';

export interface JunkInstrument {
  id: string;
  position: [number, number, number];
  /** CNR at 250 m, dB (falls 30 dB per decade of range, 2.5 dB spread). */
  cnr250_db: number;
  junkBelow_db: number;
  /** Share of the samples below junkBelow_db that are junk. */
  junkShare: number;
  junkKind: 'uniform' | 'gauss';
}

export const HUB = 100, SPEED = 8;

/** True rotor-frame (u, v) at (x, y), m/s: wind from 270, so x is east and y north. */
export function truthAt(x: number, y: number): [number, number] {
  const a = x > 0 ? 0.45 / (1 + x / 600) : 0, s = 40 + 0.05 * Math.max(0, x);
  return [SPEED * (1 - a * Math.exp(-(y * y) / (2 * s * s))), 0.4 * Math.sin((2 * Math.PI * x) / 1000)];
}

function inWake(x: number, y: number): number {
  const s = 40 + 0.05 * Math.max(0, x);
  return x > 0 ? Math.exp(-(y * y) / (2 * s * s)) : 0;
}

export function writeJunkCampaign(instruments: JunkInstrument[], opts: { rowsPerWindow?: number; windows?: number; seed?: number } = {}): { dir: string; file: string; campaign: Record<string, any> } {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-junk-'));
  mkdirSync(join(dir, 'data'));
  const rows = opts.rowsPerWindow ?? 12000, windows = opts.windows ?? 2;
  const t0 = 1.78e9;
  instruments.forEach((ins, k) => {
    const rnd = mulberry32((opts.seed ?? 3) * 977 + k * 131);
    const lines = ['time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db'];
    // Azimuths that cover the plane (x 120..840, y -150..150) from the instrument.
    const [pe, pn] = ins.position;
    const azs = [[120, -150], [840, -150], [120, 150], [840, 150]].map(([x, y]) => (Math.atan2(x - pe, y - pn) * 180) / Math.PI);
    const azMin = Math.min(...azs) - 3, azMax = Math.max(...azs) + 3;
    const dists = [[120, -150], [840, -150], [120, 150], [840, 150], [480, 0]].map(([x, y]) => Math.hypot(x - pe, y - pn));
    const rMin = Math.max(60, Math.min(...dists) - 150), rMax = Math.max(...dists) + 100;
    const n = rows * windows;
    for (let i = 0; i < n; i++) {
      const t = t0 + (i * 600 * windows) / n;
      const az = azMin + (azMax - azMin) * rnd(), el = -0.15 + 0.3 * rnd(), r = rMin + (rMax - rMin) * rnd();
      const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180;
      const ne = Math.cos(e) * Math.sin(a), nn = Math.cos(e) * Math.cos(a);
      const x = pe + r * ne, y = pn + r * nn;
      const [u, v] = truthAt(x, y);
      const cnr = ins.cnr250_db - 30 * Math.log10(r / 250) + 2.5 * gaussian(rnd);
      const noise = 0.1 * Math.max(1, Math.pow(10, (-18 - cnr) / 20));
      let vr = u * ne + v * nn + 0.4 * (1 + inWake(x, y)) * gaussian(rnd) + noise * gaussian(rnd);
      if (cnr < ins.junkBelow_db && rnd() < ins.junkShare) vr = ins.junkKind === 'gauss' ? 4 * gaussian(rnd) : -18 + 36 * rnd();
      lines.push(`${t.toFixed(3)},${ins.id},${az.toFixed(4)},${el.toFixed(4)},${r.toFixed(2)},${vr.toFixed(3)},${cnr.toFixed(2)}`);
    }
    writeFileSync(join(dir, 'data', `${ins.id}.csv`), lines.join('\n') + '\n');
  });
  const campaign: Record<string, any> = {
    name: 'junk-test',
    turbine: { id: 'T1', position_m: [0, 0, 0], hubHeight_m: HUB, rotorDiameter_m: 120 },
    instruments: instruments.map((ins) => ({ id: ins.id, position_m: ins.position, files: [`data/${ins.id}.csv`] })),
    planes: [{ id: 'hub', orientation: 'horizontal', z_m: HUB, y: { min: -150, max: 150 }, xRange: { min: 120, max: 840 }, cell_m: [30, 40], thickness_m: 20 }],
    windows: { kind: 'fixed', length_s: 600, anchor: 'epoch' },
    windDirection: { kind: 'fixed', deg: 270 },
    output: { images: false, netcdf: false, writeRejected: false },
  };
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(campaign));
  return { dir, file, campaign };
}
