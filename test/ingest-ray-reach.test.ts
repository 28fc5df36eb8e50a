/**
 * The ingest's shortcut for the gates of a ray (pipeline/ingest.ts, SampleTarget.reach): from the second gate of a
 * ray on, a gate whose range lies outside the ranges that can meet a plane is counted outside without its position
 * being computed. It must change nothing: the same accounting (read = accepted + rejected by reason) and byte-identical
 * field tables as the per-gate arithmetic, here with the shortcut removed (PlaneTarget without reach).
 *
 * Hand-made rays (not the simulator): three instruments, one on a 60 m mast looking down through the planes to the
 * ground (below_ground gates), 24 gates per ray 25 m apart with their own angles and times, a cross plane, a
 * horizontal plane, and windows of 300 s anchored at the first sample with a 150 s step (two open windows at a time).
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { PlaneTarget } from '../src/grid/planeTarget.ts';
import { windowFrame } from '../src/grid/target.ts';
import { CellAccumulator } from '../src/grid/accumulator.ts';
import { runCampaign } from '../src/pipeline/run.ts';

const T0 = 1_790_000_123.25;
const GATES = 24, GATE_M = 25;

/** Rays of one instrument at (x0, y0, z0) aiming at random points between x = 200 and 400 m, gates 25 m apart. */
function rays(id: string, x0: number, y0: number, z0: number, seconds: number, seed: number): string[] {
  let s = seed;
  const rnd = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
  const out: string[] = [];
  for (let t = 0; t < seconds; t += 0.4 + 0.3 * rnd()) {
    const px = 200 + 200 * rnd(), py = -120 + 240 * rnd(), pz = -20 + 200 * rnd();
    const de = px - x0, dn = py - y0, du = pz - z0;
    const h = Math.hypot(de, dn, du);
    const az = ((Math.atan2(de, dn) * 180) / Math.PI + 360) % 360, el = (Math.asin(du / h) * 180) / Math.PI;
    for (let g = 1; g <= GATES; g++) {
      const vr = (8 * de) / h + 0.4 * (rnd() - 0.5);
      out.push(`${(T0 + t).toFixed(3)},${id},${az.toFixed(4)},${el.toFixed(4)},${(g * GATE_M + 3.5).toFixed(2)},${vr.toFixed(3)},${(-5 - 20 * rnd()).toFixed(1)}`);
    }
  }
  return out;
}

const saved = PlaneTarget.prototype.reach;
afterEach(() => {
  PlaneTarget.prototype.reach = saved;
});

describe('gates of a ray outside the planes reach', () => {
  it('a run with the shortcut equals one without it: accounting and field tables, and most gates skip the plane arithmetic', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-reach-'));
    const head = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';
    writeFileSync(join(dir, 'a.csv'), [head, ...rays('a', 100, -300, 0, 1800, 1)].join('\n') + '\n');
    writeFileSync(join(dir, 'b.csv'), [head, ...rays('b', 120, 280, 0, 1800, 2)].join('\n') + '\n');
    writeFileSync(join(dir, 'c.csv'), [head, ...rays('c', 600, 20, 60, 1800, 3)].join('\n') + '\n');
    const file = join(dir, 'c.yaml');
    writeFileSync(file, stringify({
      name: 'reach',
      turbine: { id: 'T1', position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120, thrustCoefficient: 0.8 },
      instruments: [
        { id: 'a', position_m: [100, -300, 0], kind: 'pulsed', files: ['a.csv'] },
        { id: 'b', position_m: [120, 280, 0], kind: 'pulsed', files: ['b.csv'] },
        { id: 'c', position_m: [600, 20, 60], kind: 'pulsed', files: ['c.csv'] },
      ],
      planes: [
        { id: 'x300', orientation: 'cross', x_m: 300, y: { min: -100, max: 100 }, z: { min: 20, max: 180 }, cell_m: [40, 40], thickness_m: 30 },
        { id: 'z100', orientation: 'horizontal', z_m: 100, y: { min: -100, max: 100 }, xRange: { min: 200, max: 400 }, cell_m: [50, 50], thickness_m: 20 },
      ],
      windows: { kind: 'fixed', length_s: 300, step_s: 150 },
      windDirection: { kind: 'fixed', deg: 265 },
      qc: { cnr_db: { min: -22 } },
      output: { dir: join(dir, 'out'), images: false, netcdf: false },
    }));
    let adds = 0;
    const add = PlaneTarget.prototype.add;
    PlaneTarget.prototype.add = function (this: PlaneTarget, ...a: Parameters<typeof add>) { adds++; return add.apply(this, a); };
    try {
      const fast = await runCampaign(loadCampaignFile(file), { images: false });
      const addsFast = adds;
      adds = 0;
      PlaneTarget.prototype.reach = undefined as unknown as typeof saved;
      const slow = await runCampaign(loadCampaignFile(file), { images: false });
      const addsSlow = adds;
      // Exact equality: the shortcut only skips gates whose rejection it can decide with the same arithmetic.
      expect(fast.manifest.samples).toEqual(slow.manifest.samples);
      const s = fast.manifest.samples.total;
      expect(s.rejected.below_ground).toBeGreaterThan(100); // the mast instrument's rays reach the ground
      expect(s.rejected.outside_planes).toBeGreaterThan(s.accepted);
      const fieldsOf = (r: typeof fast) => r.manifest.outputs.filter((o) => o.kind === 'field-table').map((o) => readFileSync(join(r.runDir, o.path), 'utf8'));
      const f1 = fieldsOf(fast), f2 = fieldsOf(slow);
      expect(f1.length).toBeGreaterThan(10);
      expect(f1).toEqual(f2);
      // The shortcut was taken: well under half of the plane calls remain (about 3 gates in 24 meet a plane).
      expect(addsFast).toBeLessThan(0.5 * addsSlow);
    } finally {
      PlaneTarget.prototype.add = add;
    }
  }, 60_000);

  it('reach never excludes a range at which add() accepts (brute force over beams, frames and both plane kinds)', () => {
    const pt = new PlaneTarget([
      { orientation: 'cross', level_m: 300, thickness_m: 20, grid: { y0: -110, dy: 20, ny: 12, z0: 10, dz: 20, nz: 10 } as never },
      { orientation: 'horizontal', level_m: 90, thickness_m: 10, grid: { y0: -110, dy: 20, ny: 12, z0: 110, dz: 20, nz: 20 } as never, origin: [40, -30, 5] },
    ], 1, [0, 0, 0]);
    const acc = new CellAccumulator(pt.keyCount, 1, false);
    const out = new Float64Array(2), s = new Float64Array(9);
    let seed = 5, inside = 0;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let k = 0; k < 300; k++) {
      const D = 2 * Math.PI * rnd();
      const f = windowFrame(-Math.sin(D), -Math.cos(D));
      const o = [800 * (rnd() - 0.5), 800 * (rnd() - 0.5), 100 * rnd()];
      const a = 2 * Math.PI * rnd(), e = (Math.PI / 2) * (rnd() - 0.3);
      const n = [Math.cos(e) * Math.sin(a), Math.cos(e) * Math.cos(a), Math.sin(e)];
      pt.reach(f, o[0], o[1], o[2], n[0], n[1], n[2], out);
      for (let r = 0.5; r < 1500; r += 0.5) {
        s[1] = n[0]; s[2] = n[1]; s[3] = n[2]; s[4] = o[0] + r * n[0]; s[5] = o[1] + r * n[1]; s[6] = o[2] + r * n[2];
        if (pt.add(acc, f, 0, s)) {
          inside++;
          // Every accepted range lies in the reach interval (no tolerance: the interval is widened by 1 mm already).
          expect(r >= out[0] && r <= out[1], `beam ${k} r ${r} outside [${out[0]}, ${out[1]}]`).toBe(true);
        }
      }
    }
    expect(inside).toBeGreaterThan(1000); // the beams do cross the planes
  });
});
