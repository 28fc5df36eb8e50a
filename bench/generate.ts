/**
 * Benchmark data: a large, deterministic (seeded) campaign of raw line-of-sight samples.
 *
 * An invented turbine (rotor 120 m, hub 100 m) at the site origin, wind from 270 deg (blowing east), three ground-
 * based pulsed lidars ("south" (150, -250, 0), "north" (150, 250, 0), "east" (480, -30, 0) m) steering in turn through
 * the 13 x 9 points of a cross plane 360 m (3 D) downstream, y in [-120, 120] m, z in [20, 180] m. Every ray
 * (0.5 s) gives 40 range gates at 60, 70, ..., 450 m; only the two or three gates near the plane fall inside its
 * 20 m thickness, the rest are rejected as outside_planes, as in a real campaign. Wind: power-law shear (alpha 0.14,
 * 8 m/s at hub height), a slow gust, a meandering Gaussian wake (deficit 0.35, sigma 45 m), 0.3 m/s northward veer,
 * radial-velocity noise 0.15 m/s, rare outliers and hard-target returns, CNR falling with range, and one malformed
 * row in 200,000. Times are Unix seconds with milliseconds, angles and velocities with 3 decimals.
 *
 * Usage: node bin/run-ts.js bench/generate.ts [--rows N] [--dir DIR]
 * (default rows 10,000,000 or $WAKEPLANE_BENCH_ROWS; default dir $WAKEPLANE_BENCH_DIR or <tmp>/wakeplane-bench).
 * Files already generated with the same parameters are reused.
 */
import { createReadStream, createWriteStream, existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { createInterface } from 'node:readline';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { stringify } from 'yaml';
import { mulberry32 as prng } from '../src/math/random.ts';

export interface BenchParams {
  rows: number;
  seed: number;
  gates: number;
  rowsPerFile: number;
}

export interface BenchData {
  dir: string;
  campaign: string;
  files: string[];
  rows: number;
  bytes: number;
  reused: boolean;
}

const GENERATOR_VERSION = 1;
const INSTRUMENTS = [
  { id: 'south', position: [150, -250, 0] },
  { id: 'north', position: [150, 250, 0] },
  { id: 'east', position: [480, -30, 0] },
] as const;
const PLANE_X = 360, HUB = 100, ROTOR = 120;
const T_START = Date.UTC(2026, 5, 14, 0, 0, 0); // ms
const DWELL_MS = 500;

export function benchDir(): string {
  return resolve(process.env.WAKEPLANE_BENCH_DIR || join(tmpdir(), 'wakeplane-bench'));
}


/** Fixed-point text with `d` decimals (faster than toFixed for the 50 million numbers written). */
function fixed(x: number, p: number, d: number): string {
  const n = Math.round(x * p);
  const a = n < 0 ? -n : n;
  const ip = Math.floor(a / p), fp = a - ip * p;
  let fs = String(fp);
  while (fs.length < d) fs = '0' + fs;
  return (n < 0 ? '-' : '') + ip + '.' + fs;
}

/** The plane's target points, in the serpentine order the scanners visit them. */
function targets(): [number, number, number][] {
  const pts: [number, number, number][] = [];
  for (let iz = 0; iz < 9; iz++) {
    const z = 20 + 20 * iz;
    for (let k = 0; k < 13; k++) {
      const iy = iz % 2 === 0 ? k : 12 - k;
      pts.push([PLANE_X, -120 + 20 * iy, z]); // rotor frame = site frame here: x east, y north, z up
    }
  }
  return pts;
}

async function writeInstrument(
  files: string[],
  ins: (typeof INSTRUMENTS)[number],
  rows: number,
  p: BenchParams,
  seed: number,
): Promise<void> {
  const rnd = prng(seed);
  const gauss = () => {
    const u = 1 - rnd(), v = rnd();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  const pts = targets();
  const [ox, oy, oz] = ins.position;
  const rays = pts.map(([x, y, z]) => {
    const dx = x - ox, dy = y - oy, dz = z - oz;
    const h = Math.hypot(dx, dy);
    const az = ((Math.atan2(dx, dy) * 180) / Math.PI + 360) % 360;
    const el = (Math.atan2(dz, h) * 180) / Math.PI;
    return { az, el };
  });
  let written = 0, ray = 0, fileIdx = 0;
  while (written < rows) {
    const path = files[fileIdx++];
    const ws = createWriteStream(path);
    const put = (s: string) => (ws.write(s) ? Promise.resolve() : new Promise<void>((r) => ws.once('drain', () => r())));
    await put('time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db\n');
    const inFile = Math.min(p.rowsPerFile, rows - written);
    let n = 0, buf = '';
    while (n < inFile) {
      const tms = T_START + ray * DWELL_MS + Math.floor(rnd() * 20); // a little timing jitter
      const ts = Math.floor(tms / 1000) + '.' + String(tms % 1000).padStart(3, '0');
      const tr = rays[ray % rays.length];
      ray++;
      // reported angles: the steering angles plus 0.01 deg pointing noise
      const az = tr.az + 0.01 * gauss(), el = tr.el + 0.01 * gauss();
      const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180;
      const ne = Math.cos(e) * Math.sin(a), nn = Math.cos(e) * Math.cos(a), nu = Math.sin(e);
      const t = (tms - T_START) / 1000;
      const gust = 1 + 0.06 * Math.sin((2 * Math.PI * t) / 3000);
      const yc = 10 * Math.sin((2 * Math.PI * t) / 7200); // wake meandering, m
      const azs = fixed(az, 1000, 3), els = fixed(el, 1000, 3);
      for (let g = 0; g < p.gates && n < inFile; g++, n++) {
        const r = 60 + 10 * g;
        const y = oy + r * nn, z = Math.max(1, oz + r * nu);
        const shear = 8 * Math.pow(z / HUB, 0.14) * gust;
        const d2 = (y - yc) ** 2 + (z - HUB) ** 2;
        const u = shear * (1 - 0.35 * Math.exp(-d2 / (2 * 45 * 45)));
        let vr = ne * u + nn * 0.3 + 0.15 * gauss();
        let cnr = -4 - 0.055 * r + 1.5 * gauss();
        const q = rnd();
        if (q < 5e-4) vr += 16 * (rnd() - 0.5); // outlier
        else if (q < 7e-4) cnr = 12 + 3 * rnd(); // hard target
        if ((written + n) % 200_000 === 199_999) {
          buf += `${ts},${ins.id},${azs},${els},${r}\n`; // malformed: truncated row
        } else {
          buf += `${ts},${ins.id},${azs},${els},${r},${fixed(vr, 1000, 3)},${fixed(cnr, 100, 2)}\n`;
        }
      }
      if (buf.length > 1 << 18) {
        await put(buf);
        buf = '';
      }
    }
    await put(buf);
    await new Promise<void>((res, rej) => ws.end((err?: Error | null) => (err ? rej(err) : res())));
    written += inFile;
  }
}

function campaignYaml(dir: string, files: string[][], p: BenchParams): string {
  const doc = {
    name: `bench-${p.rows}`,
    description: 'Throughput benchmark: three scanning lidars behind an invented turbine (generated by bench/generate.ts).',
    turbine: { id: 'bench-turbine', position_m: [0, 0, 0], hubHeight_m: HUB, rotorDiameter_m: ROTOR, thrustCoefficient: 0.8 },
    instruments: INSTRUMENTS.map((ins, k) => ({
      id: ins.id,
      position_m: [...ins.position],
      kind: 'pulsed',
      files: files[k].map((f) => f.slice(dir.length + 1)),
    })),
    planes: [{ id: 'x3D', orientation: 'cross', x_m: PLANE_X, y: { min: -130, max: 130 }, z: { min: 10, max: 190 }, cell_m: [20, 20], thickness_m: 20 }],
    windows: { kind: 'fixed', length_s: 600 },
    windDirection: { kind: 'fixed', deg: 270 },
    output: { dir: join(dir, 'output'), writeRejected: true, images: false },
  };
  return `# generated by bench/generate.ts; parameters in params.json\n${stringify(doc)}`;
}

/** Generates the benchmark campaign into `dir` unless it is there already with the same parameters. */
export async function generateBench(rows: number, dir = benchDir(), log: (s: string) => void = () => {}): Promise<BenchData> {
  const p: BenchParams = { rows, seed: 20260614, gates: 40, rowsPerFile: 2_000_000 };
  const sub = join(dir, `rows-${rows}`);
  mkdirSync(sub, { recursive: true });
  const per = INSTRUMENTS.map((_, k) => Math.floor(rows / 3) + (k < rows % 3 ? 1 : 0));
  const files = INSTRUMENTS.map((ins, k) =>
    Array.from({ length: Math.max(1, Math.ceil(per[k] / p.rowsPerFile)) }, (_, j) => join(sub, `${ins.id}-${String(j).padStart(2, '0')}.csv`)),
  );
  const stampPath = join(sub, 'params.json');
  const stamp = JSON.stringify({ version: GENERATOR_VERSION, ...p });
  const campaign = join(sub, 'campaign.yaml');
  const all = files.flat();
  const reused = existsSync(stampPath) && readFileSync(stampPath, 'utf8') === stamp && existsSync(campaign) && all.every((f) => existsSync(f));
  if (!reused) {
    log(`generating ${rows.toLocaleString('en')} rows into ${sub} ...`);
    writeFileSync(stampPath, ''); // invalid until finished
    await Promise.all(INSTRUMENTS.map((ins, k) => writeInstrument(files[k], ins, per[k], p, p.seed + 7919 * k)));
    writeFileSync(campaign, campaignYaml(sub, files, p));
    writeFileSync(stampPath, stamp);
  }
  const bytes = all.reduce((s, f) => s + statSync(f).size, 0);
  return { dir: sub, campaign, files: all, rows, bytes, reused };
}

/**
 * A copy of `file` with ISO 8601 times (millisecond precision, 'Z') instead of Unix seconds, written beside it
 * once (iso-<name>) and reused; for measuring the reader on ISO stamps.
 */
export async function isoCopy(file: string): Promise<string> {
  const out = join(resolve(file, '..'), `iso-${file.split('/').pop()}`);
  if (existsSync(out) && statSync(out).mtimeMs >= statSync(file).mtimeMs) return out;
  const tmp = `${out}.${process.pid}.tmp`;
  const ws = createWriteStream(tmp);
  let first = true, buf = '';
  for await (const line of createInterface({ input: createReadStream(file), crlfDelay: Infinity })) {
    if (first) {
      buf += line + '\n';
      first = false;
      continue;
    }
    const c = line.indexOf(',');
    buf += new Date(Math.round(Number(line.slice(0, c)) * 1000)).toISOString() + line.slice(c) + '\n';
    if (buf.length > 1 << 18) {
      if (!ws.write(buf)) await new Promise<void>((r) => ws.once('drain', () => r()));
      buf = '';
    }
  }
  ws.write(buf);
  await new Promise<void>((res, rej) => ws.end((err?: Error | null) => (err ? rej(err) : res())));
  renameSync(tmp, out);
  return out;
}

export function rowsFromArgs(argv: string[]): number {
  const k = argv.indexOf('--rows');
  const text = k >= 0 ? argv[k + 1] : process.env.WAKEPLANE_BENCH_ROWS;
  const n = text === undefined ? 10_000_000 : Number(text.replace(/_/g, ''));
  if (!Number.isInteger(n) || n < 1000) throw new Error(`--rows: expected an integer >= 1000, got ${JSON.stringify(text)}`);
  return n;
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const k = process.argv.indexOf('--dir');
  const d = await generateBench(rowsFromArgs(process.argv), k >= 0 ? resolve(process.argv[k + 1]) : benchDir(), (s) => console.log(s));
  console.log(JSON.stringify(d, null, 2));
}
