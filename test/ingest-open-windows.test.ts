/**
 * Windows finish while an instrument's next file has not begun: memory must not grow with the length of the files.
 * Instrument a has two files (the second starts half-way through the campaign), instrument b one file over the whole
 * campaign. Before, no window could finish until a's second file was begun (every window of the first half stayed
 * open: 43 windows and 90 MB on the 10-million-row benchmark). Hand-made rows (not the simulator): a steady wind,
 * every row its own angles, 10 rows a second, irregular time steps.
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign, type RunProgress } from '../src/pipeline/run.ts';

const T0 = 1_790_000_000; // an arbitrary Unix time, not a multiple of the window length
const SPAN_S = 7200;
const RATE_HZ = 10;

/** Rows of one instrument at (x0, y0) on the ground aiming at points of a cross plane 300 m downstream of a turbine at the origin. */
function rows(id: string, x0: number, y0: number, from: number, to: number, seed: number): string[] {
  let s = seed;
  const rnd = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
  const out: string[] = [];
  // wind from 270 deg: blowing toward +east; the rotor frame's x (downstream) is east
  for (let t = from; t < to; t += (0.5 + rnd()) / RATE_HZ) {
    const px = 300, py = -100 + 200 * rnd(), pz = 20 + 160 * rnd();
    const de = px - x0, dn = py - y0, du = pz;
    const r = Math.hypot(de, dn, du);
    const az = ((Math.atan2(de, dn) * 180) / Math.PI + 360) % 360, el = (Math.asin(du / r) * 180) / Math.PI;
    const vr = (8 * de) / r + 0.3 * (rnd() - 0.5);
    out.push(`${(T0 + t).toFixed(3)},${id},${az.toFixed(4)},${el.toFixed(4)},${r.toFixed(2)},${vr.toFixed(3)},-10`);
  }
  return out;
}

describe('windows finish while a later file of an instrument has not begun', () => {
  it('the first windows are finished before the first file of instrument a is read to its end; results as with one file', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-open-'));
    const head = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';
    const a = rows('a', 150, -250, 0, SPAN_S, 1), b = rows('b', 150, 250, 0, SPAN_S, 2);
    const half = a.findIndex((l) => Number(l.split(',')[0]) >= T0 + SPAN_S / 2);
    writeFileSync(join(dir, 'a1.csv'), [head, ...a.slice(0, half)].join('\n') + '\n');
    writeFileSync(join(dir, 'a2.csv'), [head, ...a.slice(half)].join('\n') + '\n');
    writeFileSync(join(dir, 'a.csv'), [head, ...a].join('\n') + '\n');
    writeFileSync(join(dir, 'b.csv'), [head, ...b].join('\n') + '\n');
    const campaign = (name: string, aFiles: string[]) => {
      const file = join(dir, `${name}.yaml`);
      writeFileSync(file, stringify({
        name,
        turbine: { id: 'T1', position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120, thrustCoefficient: 0.8 },
        instruments: [
          { id: 'a', position_m: [150, -250, 0], kind: 'pulsed', files: aFiles },
          { id: 'b', position_m: [150, 250, 0], kind: 'pulsed', files: ['b.csv'] },
        ],
        planes: [{ id: 'x300', orientation: 'cross', x_m: 300, y: { min: -100, max: 100 }, z: { min: 20, max: 180 }, cell_m: [40, 40], thickness_m: 20 }],
        windows: { kind: 'fixed', length_s: 600 },
        windDirection: { kind: 'fixed', deg: 270 },
        qc: { cnr_db: { min: -30 } },
        output: { dir: join(dir, 'out'), images: false, netcdf: false },
      }));
      return file;
    };
    // What the run has read of a1.csv when the first window is finished.
    const events: string[] = [];
    let a1Rows = 0, a1AtFirstWindow = -1;
    const progress: RunProgress = {
      stage: () => {},
      file: (path, n) => { if (path.endsWith('a1.csv')) a1Rows = n; },
      count: (label, n) => { if (label === 'windows' && n >= 1 && a1AtFirstWindow < 0) { a1AtFirstWindow = a1Rows; events.push(`window at ${a1Rows}`); } },
      done: () => {},
    };
    const split = await runCampaign(loadCampaignFile(campaign('split', ['a1.csv', 'a2.csv'])), { images: false, progress });
    // a1.csv holds `half` rows (about 36,000: three 16,384-row batches); the first window (600 s, about 6,000 rows of
    // a) must be finished after its first batch, long before its end. Before the change it came after the end.
    expect(half).toBeGreaterThan(2 * 16384);
    expect(a1AtFirstWindow, events.join('; ')).toBeGreaterThan(0);
    expect(a1AtFirstWindow).toBeLessThan(half);
    // Reading order changes when windows finish, not what they hold: the same field tables and accounting as a
    // run with a's rows in one file (exact: same samples, same sums).
    const one = await runCampaign(loadCampaignFile(campaign('one', ['a.csv'])), { images: false });
    expect(split.manifest.samples).toEqual(one.manifest.samples);
    expect(split.manifest.windows.length).toBe(one.manifest.windows.length);
    const fieldsOf = (r: typeof one) => r.manifest.outputs.filter((o) => o.kind === 'field-table').map((o) => readFileSync(join(r.runDir, o.path), 'utf8'));
    const fs1 = fieldsOf(split), fs2 = fieldsOf(one);
    expect(fs1.length).toBeGreaterThan(5);
    expect(fs1).toEqual(fs2);
  }, 60_000);
});
