/**
 * The optional Earth-curvature correction as the run applies it, against a published value.
 *
 * Doviak & Zrnic (1993), Doppler Radar and Weather Observations, eq. 2.28b (equation number from memory), with the
 * 4/3 effective Earth radius (a = 6371 km): a beam at 0.5 deg elevation is 45.104069 m above its origin at 5 km
 * range (shared/REFERENCES.md section 6, numpy). A straight beam would be 5000 sin(0.5 deg) = 43.6331 m up. A
 * horizontal plane 0.4 m thick centred at the curved-beam height therefore receives the sample only when the
 * correction is on: the 1.47 m difference is far outside the plane's +/- 0.2 m.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';

function campaign(dir: string, earthCurvature: boolean) {
  return resolveCampaign(
    {
      name: `curvature-${earthCurvature}`,
      site: { earthCurvature },
      turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120 },
      instruments: [{ id: 'far', position_m: [-5000, 0, 1.5], files: ['far.csv'] }],
      planes: [{ id: 'h', orientation: 'horizontal', z_m: 1.5 + 45.104069, y: { min: -50, max: 50 }, xRange: { min: -50, max: 50 }, cell_m: [20, 20], thickness_m: 0.4 }],
      windows: { kind: 'record' },
      windDirection: { kind: 'fixed', deg: 270 },
      output: { dir: join(dir, 'out'), images: false },
    },
    join(dir, 'campaign.yaml'),
  );
}

describe('Earth-curvature correction in the run', () => {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-curv-'));
  const rows = Array.from({ length: 10 }, (_, i) => `${1_780_000_000 + i},far,90,0.5,5000,${(0.1 * i).toFixed(1)},-10`);
  writeFileSync(join(dir, 'far.csv'), ['time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db', ...rows].join('\n') + '\n');
  writeFileSync(join(dir, 'campaign.yaml'), 'name: placeholder\n');

  it('with the correction the 5 km samples land in the plane at the curved-beam height', async () => {
    const { manifest } = await runCampaign(campaign(dir, true), { images: false });
    expect(manifest.samples.perInstrument.far.accepted).toBe(10);
  });

  it('without it the same samples pass 1.47 m below the plane', async () => {
    const { manifest } = await runCampaign(campaign(dir, false), { images: false });
    expect(manifest.samples.perInstrument.far.accepted).toBe(0);
    expect(manifest.samples.perInstrument.far.rejected.outside_planes).toBe(10);
  });
});
