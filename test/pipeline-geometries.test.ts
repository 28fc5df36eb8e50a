/**
 * Whole runs with the single-instrument geometries on a small simulated campaign: the simulator round trip (our
 * simulator against our processing: useful, not an outside check), the accounting of every sample by reason, and
 * the bad-input rules (a turbine-series gap, site azimuths given as nacelle-relative).
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { REJECT_REASONS } from '../src/qc/reasons.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { readCsv } from './helpers/csvTable.ts';


const single = {
  name: 'geo-test',
  instruments: [
    { id: 'vad', role: 'profiler', position_m: [-300, 0, 1], files: ['data/vad.csv'], profile: { mode: 'vad', heights_m: { min: 60, max: 140, step: 20 }, sectors: 12, pattern: { elevation_deg: 60, azimuths_deg: [0, 45, 90, 135, 180, 225, 270, 315], ranges_m: [69, 92, 115, 139, 162], ray_s: 1 } } },
    { id: 'nac', role: 'nacelle', mount_m: [2, 0, 102], files: ['data/nac.csv'], nacelle: { beams: [{ azimuth_deg: -15, elevation_deg: 5 }, { azimuth_deg: 15, elevation_deg: 5 }, { azimuth_deg: -15, elevation_deg: -5 }, { azimuth_deg: 15, elevation_deg: -5 }], ranges_m: [200, 250, 300, 350], ray_s: 1 } },
    { id: 'trk', role: 'tracker', position_m: [-200, -300, 100], files: ['data/trk.csv'], track: { sector: 'horizontal', x_m: { min: 480, max: 600, step: 120 }, across_m: { min: -150, max: 150, step: 15 }, scan_s: 60, pattern: { azimuth_deg: { min: 52, max: 84, step: 0.5 }, elevation_deg: { min: 0, max: 0, step: 1 }, ranges_m: [650, 700, 750, 800, 850, 900, 950], ray_s: 0.5 } } },
  ],
  planes: [],
  inflow: { kind: 'profile', instrument: 'vad', law: 'power' },
};

describe('single-instrument geometries, whole run', () => {
  let file: string, dir: string;
  let truth: { windows: { direction_deg: number; yaw_offset_deg: number; hubSpeed_ms: number; shearExponent: number; profilers: { heights: { z_m: number; speed_ms: number; direction_deg: number }[] }[]; trackers: { wake: { x_m: number; yc: number; sigmaY: number }[] }[] }[] };
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({
      ...single,
      simulation: { seed: 11, start: '2026-03-01T12:00:00Z', windows: 3, hubSpeed_ms: 8, shearExponent: 0.16, shearChange: 0.05, veer_degPer100m: 4, yawOffsets_deg: [0, 10, -8], directionMean_deg: 270, directionWander_deg: 2 },
    }));
    await simulateCampaign(loadCampaignFile(file));
    truth = JSON.parse(readFileSync(join(dir, 'truth', 'geometry_truth.json'), 'utf8'));
  }, 120_000);

  it('accounts for every sample and recovers the simulated profile, nacelle inflow and wake (round trip)', async () => {
    const res = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
    expect(res.manifest.samples.balanced).toBe(true);
    for (const [id, a] of Object.entries(res.manifest.samples.perInstrument)) {
      expect(a.accepted + REJECT_REASONS.reduce((s, r) => s + a.rejected[r], 0), id).toBe(a.read);
      expect(a.accepted, id).toBeGreaterThan(1000);
    }
    // Profiles: the free-stream truth at each height; the profiler stands 2.5 D upstream, where the simulator's
    // induction slows the wind by up to about 1.5 %: speed within 3 %, direction within 1.5 degrees.
    const prof = readCsv(join(res.runDir, 'profiles', 'vad.csv'));
    let checked = 0;
    for (const r of prof) {
      if (r.flag !== 'ok') continue;
      const t = truth.windows[Number(r.window)].profilers[0].heights.find((h) => h.z_m === Number(r.height_m))!;
      expect(Math.abs(Number(r.speed_ms) / t.speed_ms - 1), `w${r.window} z${r.height_m}`).toBeLessThan(0.03);
      expect(Math.abs(Number(r.direction_deg) - t.direction_deg)).toBeLessThan(1.5);
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(12);
    // Nacelle: yaw misalignment within 1.2 degrees (non-uniform induction across the beams biases it), shear within
    // 0.03, the induction-corrected free stream within 2 %.
    const nac = readCsv(join(res.runDir, 'nacelle', 'nac.csv'));
    expect(nac).toHaveLength(3);
    for (const r of nac) {
      const t = truth.windows[Number(r.window)];
      expect(r.flag).toBe('ok');
      expect(Math.abs(Number(r.yaw_misalignment_deg) - t.yaw_offset_deg)).toBeLessThan(1.2);
      expect(Math.abs(Number(r.alpha) - t.shearExponent)).toBeLessThan(0.03);
      expect(Math.abs(Number(r.free_stream_ms) / t.hubSpeed_ms - 1)).toBeLessThan(0.02);
    }
    // Tracker: the window-level centre within 3 m plus the stated direction bias, width within 15 %.
    const trk = readCsv(join(res.runDir, 'tracks', 'trk.csv')).filter((r) => r.scan === '-1' && r.flag === 'ok');
    expect(trk.length).toBeGreaterThanOrEqual(4);
    for (const r of trk) {
      const t = truth.windows[Number(r.window)].trackers[0].wake.find((w) => w.x_m === Number(r.x_m))!;
      expect(Math.abs(Number(r.centre_m) - t.yc)).toBeLessThan(3 + Number(r.direction_bias_centre_m));
      expect(Math.abs(Number(r.width_m) / t.sigmaY - 1)).toBeLessThan(0.15);
    }
  }, 120_000);

  it('a turbine-series gap flags the window and its samples are rejected as no_nacelle_direction', async () => {
    const { dir: d2, file: f2 } = writeTinyCampaign({ ...single, instruments: [single.instruments[1]], inflow: { kind: 'plane', law: 'power' },
      simulation: { seed: 12, start: '2026-03-01T12:00:00Z', windows: 2, hubSpeed_ms: 8, turbineSeriesGap_s: [700, 400] } });
    await simulateCampaign(loadCampaignFile(f2));
    // Site-frame azimuths written as if nacelle-relative (255 and 200 deg: behind the rotor): counted, never used.
    const path = join(d2, 'data', 'nac.csv');
    const [head, ...rest] = readFileSync(path, 'utf8').split('\n');
    writeFileSync(path, [head, '1772366400.5,nac,255,5,250,-7.5,-5', '1772366400.6,nac,200,5,250,-7.4,-5', ...rest].join('\n'));
    const res = await runCampaign(loadCampaignFile(f2), { outRoot: join(d2, 'out'), images: false, stages: defaultStages() });
    const a = res.manifest.samples.perInstrument.nac;
    expect(a.rejected.no_nacelle_direction).toBeGreaterThan(100);
    expect(a.rejected.wrong_beam_frame).toBe(2);
    expect(res.manifest.samples.balanced).toBe(true);
    const rows = readCsv(join(res.runDir, 'nacelle', 'nac.csv'));
    expect(rows.find((r) => r.window === '1')!.flag).toBe('nacelle_series_gap');
    expect(rows.find((r) => r.window === '1')!.reason).toMatch(/no turbine-series row/);
    expect(existsSync(join(res.runDir, 'nacelle', 'nac_gates.csv'))).toBe(true);
  }, 120_000);
});
