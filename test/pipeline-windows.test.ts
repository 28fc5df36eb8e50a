/**
 * Windows that follow the experiment, through whole runs on small simulated campaigns:
 * - a yaw schedule whose steps start at an arbitrary clock time: segment windows give one wake row per step with
 *   the step's yaw offset, and fixed windows anchored at the first sample follow the steps too;
 * - listed windows from a CSV log, and the accounting of samples outside every window;
 * - condition bins: an ensemble per yaw-offset bin equals the retrieval of the merged statistics of its windows,
 *   empty bins are reported, and conditions that select nothing are an error that leaves no result.
 * The round trips use our own simulator (not an outside check); the checks of the statistics themselves are in
 * qc-histogram.test.ts and retrieval-ensemble.test.ts.
 */
import { existsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import type { Campaign } from '../src/campaign/types.ts';
import { ConfigError } from '../src/errors.ts';
import { Ensembles } from '../src/pipeline/ensembles.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { REJECT_REASONS } from '../src/qc/reasons.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { readCsv } from './helpers/csvTable.ts';


// Steps of 10 minutes starting at 12:03:17 UTC (not aligned to any round time), yaw offsets per step.
const START = '2026-03-01T12:03:17Z';
const START_S = Date.UTC(2026, 2, 1, 12, 3, 17) / 1000;
const YAWS = [0, 15, -15, 15, 0];

describe('segment windows on a yaw schedule starting at an arbitrary time', () => {
  let file: string, dir: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({
      windows: { kind: 'segments', levels_deg: [-15, 0, 15], tolerance_deg: 3, minDuration_s: 300 },
      simulation: { seed: 11, start: START, windows: YAWS.length, step_s: 600, hubSpeed_ms: 8, yawOffsets_deg: YAWS, rayRate_hz: 4, dwell_s: 1 },
    }));
    await simulateCampaign(loadCampaignFile(file));
  });

  it('one window per step, inside the step, with its yaw offset; each wake row has the step\'s yaw offset', async () => {
    const { manifest, runDir } = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
    const w = manifest.windows;
    expect(w.map((x) => x.level_deg)).toEqual(YAWS);
    for (let k = 0; k < YAWS.length; k++) {
      // The series has one row a minute, 30 s into each minute: a window spans the first to the last row of its step.
      expect(w[k].start_s).toBe(START_S + k * 600 + 30);
      expect(w[k].end_s).toBe(START_S + k * 600 + 570);
      expect(w[k].kind).toBe('segment');
    }
    const rows = readCsv(join(runDir, 'wake', 'wake_table.csv'));
    expect(rows).toHaveLength(YAWS.length);
    // The simulated nacelle carries 0.5 deg and the direction series 0.4 deg of noise per row: the window means
    // of 9 rows agree with the step's offset within 1 deg (about 4 standard errors of their difference).
    rows.forEach((r, k) => expect(Math.abs(Number(r.yaw_offset_deg) - YAWS[k])).toBeLessThan(1));
    // Samples between steps (30 s either side of each change) are outside every window and counted so.
    expect(manifest.samples.total.rejected.outside_windows).toBeGreaterThan(0);
    expect(manifest.samples.balanced).toBe(true);
    expect(manifest.segments?.excluded_s.transition).toBe(4 * 60);
  });

  it('fixed windows anchored at the first sample start with the first step (no manual shift)', async () => {
    const c = loadCampaignFile(file);
    c.windows = { kind: 'fixed', length_s: 600, anchor: 'first-sample' };
    const { manifest } = await runCampaign(c, { outRoot: join(dir, 'out-fixed'), images: false });
    // The first sample comes within the first second of the first step (the simulated rays start 0-1 s in).
    const lag = manifest.windows[0].start_s - START_S;
    expect(lag).toBeGreaterThanOrEqual(0);
    expect(lag).toBeLessThan(1);
    expect(manifest.windows).toHaveLength(YAWS.length);
    // With the old alignment (multiples of 600 s since 1970) every window would straddle two steps.
    c.windows = { kind: 'fixed', length_s: 600, anchor: 'epoch' };
    const { manifest: m2 } = await runCampaign(c, { outRoot: join(dir, 'out-epoch'), images: false });
    expect(m2.windows[0].start_s % 600).toBe(0);
    expect(m2.windows).toHaveLength(YAWS.length + 1);
  });
});

describe('listed windows and condition bins', () => {
  let file: string, dir: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({
      simulation: { seed: 5, start: '2026-03-01T12:00:00Z', windows: 6, hubSpeed_ms: 8, yawOffsets_deg: [0, 15, -15], rayRate_hz: 4, dwell_s: 1 },
    }));
    await simulateCampaign(loadCampaignFile(file));
  });

  it('a CSV log of windows: labels in the manifest and the wake table; samples between them outside_windows', async () => {
    const log = join(dir, 'log.csv');
    const t0 = Date.UTC(2026, 2, 1, 12, 0, 0) / 1000;
    writeFileSync(log, `start,end,label\n${t0 + 60},${t0 + 540},first\n2026-03-01T12:21:00Z,2026-03-01T12:29:00Z,second run\n`);
    const c = loadCampaignFile(file);
    c.windows = { kind: 'list', file: log, columns: {}, allowOverlap: false };
    const { manifest, runDir } = await runCampaign(c, { outRoot: join(dir, 'out-list'), images: false, stages: defaultStages() });
    expect(manifest.windows.map((w) => [w.label, w.start_s])).toEqual([['first', t0 + 60], ['second run', t0 + 1260]]);
    const rows = readCsv(join(runDir, 'wake', 'wake_table.csv'));
    expect(rows.map((r) => r.window_label)).toEqual(['first', 'second run']);
    const total = manifest.samples.total;
    expect(total.rejected.outside_windows).toBeGreaterThan(total.accepted); // most of the hour is outside both
    expect(total.accepted + REJECT_REASONS.reduce((s, r) => s + total.rejected[r], 0)).toBe(total.read);
  });

  it('ensembles by yaw-offset bin: one field per plane and bin, empty bins reported, labelled outputs', async () => {
    const c = loadCampaignFile(file);
    c.conditions = { bins: [{ variable: 'yaw_offset_deg', edges: [-20, -10, -5, 5, 10, 20] }], minWindows: 1 };
    const { manifest, runDir, notices } = await runCampaign(c, { outRoot: join(dir, 'out-ens'), images: false, stages: defaultStages() });
    const bins = manifest.ensembles!;
    expect(bins).toHaveLength(5);
    // Yaw offsets 0, 15, -15 repeated: bins [-20,-10), [-5,5), [10,20) get two windows each; two bins are empty.
    expect(bins.map((b) => b.windows.length)).toEqual([2, 0, 2, 0, 2]);
    expect(bins.filter((b) => b.empty).map((b) => b.label)).toEqual(['yaw_offset_deg in [-10, -5)', 'yaw_offset_deg in [5, 10)']);
    expect(notices.join(' ')).toMatch(/2 of 5 condition bins received no window/);
    for (const b of bins.filter((x) => !x.empty)) expect(existsSync(join(runDir, 'fields', `p5_bin${String(b.bin).padStart(3, '0')}.csv`))).toBe(true);
    const ens = readCsv(join(runDir, 'wake', 'ensembles.csv'));
    expect(ens.map((r) => r.bin)).toEqual(['0', '2', '4']);
    expect(ens.map((r) => r.windows_pooled)).toEqual(['2', '2', '2']);
    // The ensemble's yaw offset is the mean over its windows only (series rows between them are not used).
    for (const r of ens) expect(Math.abs(Number(r.yaw_offset_deg) - [-15, 0, 15][['0', '2', '4'].indexOf(r.bin)])).toBeLessThan(1);
    // Per-window rows stay in the wake table, ensembles do not enter it.
    expect(readCsv(join(runDir, 'wake', 'wake_table.csv'))).toHaveLength(6);
  });

  it('ensembles of overlapping windows carry a warning that samples count more than once', async () => {
    // Windows of 600 s every 200 s: each sample is in 3 windows, so an ensemble of them counts it 3 times.
    const c = loadCampaignFile(file);
    c.windows = { kind: 'fixed', length_s: 600, step_s: 200, anchor: 'first-sample' };
    c.conditions = { bins: [{ variable: 'yaw_offset_deg', edges: [-20, 20] }], minWindows: 1 };
    const { manifest } = await runCampaign(c, { outRoot: join(dir, 'out-ovl'), images: false, stages: defaultStages() });
    expect(manifest.warnings.join(' ')).toMatch(/condition bins pool overlapping windows: a sample in k windows of a bin counts k times/);
  });

  it('conditions that select no window: a ConfigError naming the key, and no result folder', async () => {
    const c = loadCampaignFile(file);
    c.conditions = { bins: [{ variable: 'yaw_offset_deg', edges: [30, 40] }], minWindows: 1 };
    const out = join(dir, 'out-none');
    await expect(runCampaign(c, { outRoot: out, images: false, stages: defaultStages() })).rejects.toThrow(ConfigError);
    await expect(runCampaign(c, { outRoot: out, images: false, stages: defaultStages() })).rejects.toThrow(/conditions\.bins: no window falls in any condition bin/);
    expect(existsSync(join(out, c.name))).toBe(false);
  });

  it('a bin on a series column that does not exist: an error naming the file and column before any output', async () => {
    const c = loadCampaignFile(file);
    c.conditions = { bins: [{ variable: 'turbine.pitch_deg', edges: [0, 5] }], minWindows: 1 };
    const out = join(dir, 'out-col');
    await expect(runCampaign(c, { outRoot: out, images: false })).rejects.toThrow(/turbine\.csv:1: conditions\.bins\[0\]\.variable "turbine\.pitch_deg": no column "pitch_deg"/);
    expect(existsSync(out)).toBe(false);
  });
});

describe('condition bins on angles count modulo 360 (a sector may cross north)', () => {
  it('wind direction edges [-10, 0, 10]: 350 and 359.1 degrees in the first bin, 1.5 in the second, 10 in none', () => {
    // Regression: directions are reported in [0, 360), so 359.1 fell outside [-10, 0) and such windows were lost.
    // By hand: a value is taken as its turn in [first edge, first edge + 360) = [-10, 350): 359.1 -> -0.9,
    // 350 -> -10 (the first bin's lower edge, included), 1.5 -> 1.5, 10 -> 10 (no bin: [0, 10) excludes it).
    const c = { conditions: { bins: [{ variable: 'wind_direction_deg', edges: [-10, 0, 10] }], minWindows: 1 } } as unknown as Campaign;
    const e = new Ensembles(c, {}, 0, 0);
    expect([359.1, 350, 1.5, 10, NaN].map((d) => e.binOf([d]))).toEqual([0, 0, 1, -1, -1]);
  });

  it('edges of an angle spanning more than one turn are refused with the key', () => {
    const { file } = writeTinyCampaign({ conditions: { bins: [{ variable: 'wind_direction_deg', edges: [0, 180, 361] }] } });
    expect(() => loadCampaignFile(file)).toThrow(/conditions\.bins\[0\]\.edges: edges of an angle \(_deg\) may span 360 degrees at most/);
  });
});

