/**
 * Planner outputs: files, columns and a reload of the pointing CSV through the beam model.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { beamPoint, calibratedUnitVector, calibrationMatrix } from '../src/geometry/beam.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';
import { writePlanOutputs } from '../src/plan/writeOutputs.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-plan-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const campaign = resolveCampaign(
  {
    name: 'outputs',
    turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120 },
    instruments: [
      { id: 'north', position_m: [150, 400, 2], calibration: { heading_deg: 12.5, pitch_deg: 0.4, roll_deg: -0.3, rangeOffset_m: 3 } },
      { id: 'south', position_m: [150, -400, 2] },
      { id: 'aft', position_m: [900, 0, 2] },
    ],
    planes: [{ id: 'x3D', x_D: 3, y: { min: -150, max: 150 }, z: { min: 10, max: 210 }, cell_m: [30, 40] }],
    windDirection: { kind: 'fixed', deg: 270 },
    plan: { candidates: { aft: [[500, 0], [900, 0]] } },
  },
  '<memory>',
);

describe('writePlanOutputs', () => {
  it('writes the cell table, pointing CSVs, layout ranking, summary and images', async () => {
    const result = planCampaign(campaign);
    const recs = await writePlanOutputs(result, campaign, dir, { images: true });
    for (const r of recs) expect(existsSync(join(dir, r.path))).toBe(true);
    const kinds = recs.map((r) => r.kind);
    expect(kinds.filter((k) => k === 'plan-pointing').length).toBe(3);
    expect(kinds.filter((k) => k === 'image').length).toBe(6); // 3 maps x (svg, png)
    const cells = readFileSync(join(dir, 'plan', 'cells_x3D.csv'), 'utf8').trim().split('\n');
    expect(cells.length).toBe(1 + 10 * 5); // header + 10 x 5 cells
    expect(cells[0].split(',')).toContain('north_footprint_cells');
    const summary = JSON.parse(readFileSync(join(dir, 'plan', 'summary.json'), 'utf8'));
    expect(summary.layout.total).toBe(2);
    expect(summary.planes[0].rotor.cells).toBe(result.planes[0].rotor.cells);
    const layouts = readFileSync(join(dir, 'plan', 'layouts.csv'), 'utf8').trim().split('\n');
    expect(layouts.length).toBe(1 + 1 + 2); // header, own layout (rank 0), two candidates
  });
  it('the pointing CSV as written (targets and ranges to 1 mm, angles to 1e-6 degree) lands within 1.5 mm of each cell centre', () => {
    const lines = readFileSync(join(dir, 'plan', 'pointing_north.csv'), 'utf8').trim().split('\n');
    const head = lines[0].split(',');
    const col = (name: string) => head.indexOf(name);
    const ins = campaign.instruments[0];
    const R = calibrationMatrix(ins.calibration);
    for (const line of lines.slice(1)) {
      const f = line.split(',').map(Number);
      const n = calibratedUnitVector(R, f[col('azimuth_deg')], f[col('elevation_deg')]);
      const p = beamPoint(ins.position, n, f[col('range_m')] + ins.calibration.rangeOffset_m);
      const t = [f[col('target_east_m')], f[col('target_north_m')], f[col('target_up_m')]];
      // rounding bounds (data dictionary): target to 1 mm -> at most sqrt(3) * 0.5 mm; range to 1 mm -> 0.5 mm along
      // the beam; two angles to 1e-6 deg -> sqrt(2) * 600 m * 1.7e-8 rad = 1.5e-5 m: at most 1.38 mm in all
      expect(Math.hypot(p[0] - t[0], p[1] - t[1], p[2] - t[2])).toBeLessThan(1.5e-3);
    }
    expect(lines.length).toBe(1 + 50);
  });
});
