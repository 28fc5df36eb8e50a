/**
 * Benchmark data without ray structure: every row has its own angles and almost every sample falls in the plane,
 * as with instruments that focus or gate at the plane (continuous-wave lidars focused on the plane, or pulsed ones
 * recording one gate per beam). Deterministic (seeded).
 *
 * An invented turbine (rotor 120 m, hub 100 m) at the site origin, wind from 270 deg, three ground-based
 * instruments (the same positions as bench/generate.ts) each sampling 50 times a second at a random point of a
 * cross plane 360 m downstream (y in [-130, 130] m, z in [10, 190] m, x within +-8 m of the plane), so azimuth,
 * elevation and range change every row. Wind: power-law shear, a slow gust, a meandering Gaussian wake, noise,
 * 0.05 % outliers and 0.02 % hard targets; one malformed row in 200,000. About 18.5 hours of record for
 * 10,000,000 rows. Two campaigns share the files: one whole-record window, and 10-minute windows.
 *
 * Usage: node bin/run-ts.js bench/generateFocus.ts [--rows N]; files under $WAKEPLANE_BENCH_DIR (default
 * <tmp>/wakeplane-bench)/focus-<rows>, reused while the parameters are unchanged.
 */
import { createWriteStream, existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { stringify } from 'yaml';
import { mulberry32 as prng } from '../src/math/random.ts';
import { benchDir, rowsFromArgs } from './generate.ts';

const VERSION = 1;
const INSTRUMENTS = [
  { id: 'south', position: [150, -250, 0] },
  { id: 'north', position: [150, 250, 0] },
  { id: 'east', position: [480, -30, 0] },
] as const;
const PLANE_X = 360, HUB = 100, ROTOR = 120;
const T_START = Date.UTC(2026, 5, 14, 0, 0, 0); // ms
const PERIOD_MS = 20; // 50 samples a second per instrument

export interface FocusData {
  dir: string;
  /** Campaign with one whole-record window, and with 10-minute windows (the same files). */
  record: string;
  tenMinutes: string;
  /** The whole-record campaign with the uncertainty budget off (its cost on these data). */
  recordNoBudget: string;
  /** The whole-record campaign without NetCDF outputs (their cost when the only window ends at the last sample). */
  recordNoNetcdf: string;
  files: string[];
  rows: number;
  bytes: number;
  reused: boolean;
}

function fixed(x: number, p: number, d: number): string {
  const n = Math.round(x * p);
  const a = n < 0 ? -n : n;
  const ip = Math.floor(a / p), fp = a - ip * p;
  let fs = String(fp);
  while (fs.length < d) fs = '0' + fs;
  return (n < 0 ? '-' : '') + ip + '.' + fs;
}

async function writeInstrument(path: string, ins: (typeof INSTRUMENTS)[number], rows: number, seed: number, offset: number): Promise<void> {
  const rnd = prng(seed);
  const gauss = () => {
    const u = 1 - rnd(), v = rnd();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  const [ox, oy, oz] = ins.position;
  const ws = createWriteStream(path);
  const put = (s: string) => (ws.write(s) ? Promise.resolve() : new Promise<void>((r) => ws.once('drain', () => r())));
  await put('time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n');
  let buf = '';
  for (let n = 0; n < rows; n++) {
    const tms = T_START + offset + n * PERIOD_MS;
    const ts = Math.floor(tms / 1000) + '.' + String(tms % 1000).padStart(3, '0');
    const x = PLANE_X + 16 * (rnd() - 0.5), y = -130 + 260 * rnd(), z = 10 + 180 * rnd();
    const dx = x - ox, dy = y - oy, dz = z - oz;
    const r = Math.hypot(dx, dy, dz);
    const az = ((Math.atan2(dx, dy) * 180) / Math.PI + 360) % 360, el = (Math.asin(dz / r) * 180) / Math.PI;
    const ne = dx / r, nn = dy / r;
    const t = (tms - T_START) / 1000;
    const gust = 1 + 0.06 * Math.sin((2 * Math.PI * t) / 3000);
    const yc = 10 * Math.sin((2 * Math.PI * t) / 7200);
    const shear = 8 * Math.pow(z / HUB, 0.14) * gust;
    const u = shear * (1 - 0.35 * Math.exp(-((y - yc) ** 2 + (z - HUB) ** 2) / (2 * 45 * 45)));
    let vr = ne * u + nn * 0.3 + 0.15 * gauss();
    let cnr = -8 + 1.5 * gauss();
    const q = rnd();
    if (q < 5e-4) vr += 16 * (rnd() - 0.5);
    else if (q < 7e-4) cnr = 12 + 3 * rnd();
    if (n % 200_000 === 199_999) buf += `${ts},${ins.id},${fixed(az, 1000, 3)},${fixed(el, 1000, 3)}\n`;
    else buf += `${ts},${ins.id},${fixed(az, 1000, 3)},${fixed(el, 1000, 3)},${fixed(r, 100, 2)},${fixed(vr, 1000, 3)},${fixed(cnr, 100, 2)}\n`;
    if (buf.length > 1 << 18) {
      await put(buf);
      buf = '';
    }
  }
  await put(buf);
  await new Promise<void>((res, rej) => ws.end((err?: Error | null) => (err ? rej(err) : res())));
}

function campaignYaml(sub: string, files: string[], rows: number, windows: object, name: string, extra: object = {}): string {
  const doc = {
    name,
    description: 'Throughput benchmark without ray structure: every row its own angles, almost every sample in the plane (bench/generateFocus.ts).',
    turbine: { id: 'bench-turbine', position_m: [0, 0, 0], hubHeight_m: HUB, rotorDiameter_m: ROTOR, thrustCoefficient: 0.8 },
    instruments: INSTRUMENTS.map((ins, k) => ({ id: ins.id, position_m: [...ins.position], kind: 'pulsed', files: [files[k].slice(sub.length + 1)] })),
    planes: [{ id: 'x3D', orientation: 'cross', x_m: PLANE_X, y: { min: -130, max: 130 }, z: { min: 10, max: 190 }, cell_m: [20, 20], thickness_m: 20 }],
    windows,
    windDirection: { kind: 'fixed', deg: 270 },
    output: { dir: join(sub, 'output'), writeRejected: true, images: false },
    ...extra,
  };
  void rows;
  return `# generated by bench/generateFocus.ts\n${stringify(doc)}`;
}

export async function generateFocus(rows: number, dir = benchDir(), log: (s: string) => void = () => {}): Promise<FocusData> {
  const sub = join(dir, `focus-${rows}`);
  mkdirSync(sub, { recursive: true });
  const per = INSTRUMENTS.map((_, k) => Math.floor(rows / 3) + (k < rows % 3 ? 1 : 0));
  const files = INSTRUMENTS.map((ins) => join(sub, `${ins.id}.csv`));
  const stampPath = join(sub, 'params.json');
  const stamp = JSON.stringify({ version: VERSION, rows, seed: 20261202 });
  const record = join(sub, 'record.yaml'), tenMinutes = join(sub, 'ten-minutes.yaml'), recordNoBudget = join(sub, 'record-no-budget.yaml');
  const reused = existsSync(stampPath) && readFileSync(stampPath, 'utf8') === stamp && files.every((f) => existsSync(f));
  if (!reused) {
    log(`generating ${rows.toLocaleString('en')} rows without ray structure into ${sub} ...`);
    writeFileSync(stampPath, '');
    await Promise.all(INSTRUMENTS.map((ins, k) => writeInstrument(files[k], ins, per[k], 20261202 + 7919 * k, 7 * k)));
    writeFileSync(stampPath, stamp);
  }
  writeFileSync(record, campaignYaml(sub, files, rows, { kind: 'record' }, `focus-record-${rows}`));
  writeFileSync(tenMinutes, campaignYaml(sub, files, rows, { kind: 'fixed', length_s: 600 }, `focus-10min-${rows}`));
  writeFileSync(recordNoBudget, campaignYaml(sub, files, rows, { kind: 'record' }, `focus-record-no-budget-${rows}`, { uncertainty: { budget: false } }));
  const recordNoNetcdf = join(sub, 'record-no-netcdf.yaml');
  writeFileSync(recordNoNetcdf, campaignYaml(sub, files, rows, { kind: 'record' }, `focus-record-no-netcdf-${rows}`, { output: { dir: join(sub, 'output'), writeRejected: true, images: false, netcdf: false } }));
  const bytes = files.reduce((s, f) => s + statSync(f).size, 0);
  return { dir: sub, record, tenMinutes, recordNoBudget, recordNoNetcdf, files, rows, bytes, reused };
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const d = await generateFocus(rowsFromArgs(process.argv), benchDir(), (s) => console.log(s));
  console.log(JSON.stringify(d, null, 2));
}
