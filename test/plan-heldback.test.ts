/**
 * Held-back planner cases (issue 5): campaigns unlike the demos (wind from 45 degrees, instruments on masts and a hill,
 * planes at 2 D and 6 D), checked against outside facts. The full numpy comparison of positions, angles, ranges,
 * probe lengths, flags, amplification, condition number and crossing angles is test/reference/plan_heldback.py
 * (python3 + numpy, independent of this code; three campaigns, 143 cells of 5 planes: it agrees within the CSV
 * rounding, output in plan_heldback.out).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadCampaignFile, resolveCampaign } from '../src/campaign/load.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';
import { writePlanOutputs } from '../src/plan/writeOutputs.ts';
import { debianPython } from './helpers/python.ts';

const base = {
  name: 'heldback-45',
  turbine: { position_m: [-40, 60, 0], hubHeight_m: 85, rotorDiameter_m: 100 },
  planes: [{ id: 'x6', x_D: 6, y: { min: -100, max: 100 }, z: { min: 10, max: 170 }, cell_m: [25, 40] }],
  windDirection: { kind: 'fixed', deg: 45 },
  plan: { minElevation_deg: -5 },
};
const a = { id: 'a', position_m: [-700, -200, 30], kind: 'pulsed' };
const b = { id: 'b', position_m: [-250, -900, 2], kind: 'pulsed' };
const c = { id: 'c', position_m: [-900, -450, 120], kind: 'pulsed' };
// a second instrument 40 m beside a: nearly parallel to a's beams everywhere in the plane
const a2 = { id: 'a2', position_m: [-700, -160, 30], kind: 'pulsed' };

const plan = (instruments: object[]) => planCampaign(resolveCampaign({ ...base, instruments }, '<memory>')).summary.planes[0];

describe('planner, held-back cases', () => {
  it('an extra instrument never lowers the resolved share of the plane', () => {
    // Least squares: adding a row to A adds a positive semi-definite term to A^T A, so every diagonal element of
    // (A^T A)^-1, the squared error amplification, can only fall (Golub & Van Loan 2013, section 5.3 / the
    // Sherman-Morrison formula). A planner that trusts fewer cells after an instrument is added misranks layouts.
    const three = plan([a, b, c]);
    const four = plan([a, b, c, a2]);
    expect(three.plane.all).toBeGreaterThan(0); // the case must resolve something to test anything
    // exact comparison of two counts over the same 64 cells: no tolerance needed
    expect(four.plane.all).toBeGreaterThanOrEqual(three.plane.all);
    expect(four.rotor.all).toBeGreaterThanOrEqual(three.rotor.all);
  });
  it('wind from 45 degrees: cell centres lie downstream towards the south-west, y to the left; beams wrap through north', () => {
    // Wind direction is where the wind comes from (WMO-No. 8, 2018, Part I ch. 5): from 45 deg it blows towards
    // 225 deg, so downstream is (east, north) = -(sin 45, cos 45) and "left looking downstream" is downstream turned
    // 90 deg anticlockwise seen from above: (-x_N, x_E) of the downstream vector = (sin 45, -cos 45).
    // b moved due south of the plane's centre (-464, -364), so that its beams to the plane straddle north
    const bs = { ...b, position_m: [-464, -1100, 2] };
    const r = planCampaign(resolveCampaign({ ...base, instruments: [a, bs, c] }, '<memory>'));
    const g = r.planes[0].geometry;
    const s45 = Math.SQRT1_2;
    const xd = [-s45, -s45], yl = [s45, -s45];
    for (let i = 0; i < g.rotor.length / 3; i++) {
      const [x, y, z] = [g.rotor[3 * i], g.rotor[3 * i + 1], g.rotor[3 * i + 2]];
      expect(x).toBeCloseTo(600, 9); // 6 D of a 100 m rotor; float arithmetic only (1e-9 m)
      // turbine at (-40, 60, 0); 1e-9 m: float rounding of sums of a few hundred metres
      expect(Math.abs(g.site[3 * i] - (-40 + x * xd[0] + y * yl[0]))).toBeLessThan(1e-9);
      expect(Math.abs(g.site[3 * i + 1] - (60 + x * xd[1] + y * yl[1]))).toBeLessThan(1e-9);
      expect(Math.abs(g.site[3 * i + 2] - z)).toBeLessThan(1e-9);
    }
    // Instrument b, due south of the plane, steers through north: its azimuths (clockwise from north, atan2(dE, dN) taken
    // into [0, 360)) include values on both sides of 0. Uncalibrated, so the table's angles are the plain spherical
    // angles of the target; 1e-9 deg is float rounding.
    const tb = r.pointing.find((p) => p.instrumentId === 'b')!;
    let west = 0, east = 0;
    for (const row of tb.rows) {
      const d = [row.target[0] - bs.position_m[0], row.target[1] - bs.position_m[1], row.target[2] - bs.position_m[2]];
      const az = ((Math.atan2(d[0], d[1]) * 180) / Math.PI + 360) % 360;
      const el = (Math.atan2(d[2], Math.hypot(d[0], d[1])) * 180) / Math.PI;
      expect(Math.abs(((row.azimuth_deg - az + 540) % 360) - 180)).toBeLessThan(1e-9);
      expect(Math.abs(row.elevation_deg - el)).toBeLessThan(1e-9);
      expect(row.azimuth_deg).toBeGreaterThanOrEqual(0);
      expect(row.azimuth_deg).toBeLessThan(360);
      if (row.azimuth_deg > 270) west++;
      else if (row.azimuth_deg < 90) east++;
    }
    expect(west).toBeGreaterThan(0); // the case does cross north
    expect(east).toBeGreaterThan(0);
  });
});

const py = debianPython(['numpy', 'scipy']);
describe.skipIf(!py.python)(`planner against the numpy reference${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-plan-heldback-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  it('three campaigns unlike the demos: every cell, beam flag, reason, category and pointing row as numpy computes them', async () => {
    const script = join(import.meta.dirname, 'reference', 'plan_heldback.py');
    const w = spawnSync(py.python!, [script, 'write', dir], { encoding: 'utf8' });
    expect(w.status, w.stderr).toBe(0);
    const files = readdirSync(dir).filter((f) => f.endsWith('.json'));
    expect(files.length).toBe(3);
    for (const f of files) {
      const campaign = loadCampaignFile(join(dir, f));
      await writePlanOutputs(planCampaign(campaign), campaign, join(dir, 'out', `${campaign.name}-plan`), { images: false });
    }
    const c = spawnSync(py.python!, [script, 'check', dir], { encoding: 'utf8' });
    // the script prints each failed check and exits 1 on any; its tolerances follow the printed digits (see there)
    expect(c.stdout + c.stderr).toContain('cells checked: 143 failures: 0');
    expect(c.status).toBe(0);
  });
});
