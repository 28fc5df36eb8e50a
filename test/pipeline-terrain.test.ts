/**
 * The ingest over terrain: a ridge between an instrument and its far gates. Every sample is accounted for by the
 * geometry worked out below (straight beam at 1 degree from 2 m over a triangular ridge), so the expected counts are
 * analytic: accepted in the terrain-following plane, below_ground, beam_blocked, outside_terrain.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';

describe('ingest over a ridge', () => {
  it('counts points below the ground, beams blocked by the ridge and points beyond the terrain', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-ridge-'));
    // Ridge: h(e) = max(0, 20 - 0.5 |e - 500|), flanks from e = 460 to 540, flat 0 elsewhere; grid e 0..1000, n -100..100.
    let xyz = 'x,y,z\n';
    for (let n = -100; n <= 100; n += 10) for (let e = 0; e <= 1000; e += 10) xyz += `${e},${n},${Math.max(0, 20 - 0.5 * Math.abs(e - 500))}\n`;
    writeFileSync(join(dir, 'ridge.xyz'), xyz);
    // One ray due east at 1 degree from (0, 0, 2): height 2 + r sin(1 deg) = 2 + 0.017452 r.
    //  r = 100..400: 3.7-9.0 m above flat ground (>= 2 m clearance), inside the plane 5 +/- 10 m above the terrain -> accepted (4);
    //  r = 500: point at 10.7 m, ground 20 m -> below_ground (1);
    //  r = 600, 700, 800: points above flat ground but the beam meets the near flank at about 482 m -> beam_blocked (3);
    //  r = 1200: beyond the raster (e > 1000) -> outside_terrain (1).
    const ranges = [100, 200, 300, 400, 500, 600, 700, 800, 1200];
    let csv = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms\n';
    ranges.forEach((r, k) => (csv += `${1_800_000_000 + k * 0.01},a,90,1,${r},5.0\n`));
    writeFileSync(join(dir, 'a.csv'), csv);
    writeFileSync(join(dir, 'campaign.yaml'), stringify({
      name: 'ridge',
      site: { terrain: { file: 'ridge.xyz' } },
      turbine: { id: 'T', position_m: [900, 60, 0], hubHeight_m: 80, rotorDiameter_m: 80 },
      instruments: [{ id: 'a', position_m: [0, 0, 2], files: ['a.csv'] }],
      planes: [{ id: 'low', orientation: 'horizontal', frame: 'site', heights: 'terrain', z_m: 5, thickness_m: 20, y: { min: -50, max: 50 }, xRange: { min: 0, max: 1000 }, cell_m: [50, 50] }],
      windows: { kind: 'record' },
      windDirection: { kind: 'fixed', deg: 270 },
      output: { dir: 'out', images: false },
    }));
    const res = await runCampaign(loadCampaignFile(join(dir, 'campaign.yaml')), { images: false, stages: [] });
    const a = res.manifest.samples.perInstrument.a;
    expect(a.read).toBe(9);
    expect(a.accepted).toBe(4);
    expect(a.rejected.below_ground).toBe(1);
    expect(a.rejected.beam_blocked).toBe(3);
    expect(a.rejected.outside_terrain).toBe(1);
    expect(res.manifest.samples.balanced).toBe(true);
  });
});
