/**
 * A reviewer's held-back wake-steering case, written without our simulator (numpy alone:
 * test/reference/heldback_steering.py): yaw steps of 17, 23, 31, 19 and 29 minutes from 10:07:43.6 UTC, a turbine
 * series with its own 7-s clock, 40-s ramps between steps, a 4-minute gap and a logger dropout (empty and NaN cells),
 * a direction series on another clock, and three scanners whose every row has its own angles. Segment windows must
 * give exactly one wake row per steady span, with no manual shifting: the bounds, state, yaw offset, power and wake
 * centre the script expects from the rows it wrote (README rule for segments), not values from our code.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { readCsv } from './helpers/csvTable.ts';
import { debianPython, hasCommand } from './helpers/python.ts';

interface Span { level: number; start_s: number; end_s: number; step: number; yc_frame_m: number; yaw_offset_deg: number; power_kw: number; direction_deg: number; speed_ms: number }
interface Logged { start_s: number; end_s: number; label: string; yc_m: number; direction_deg: number }

const py = debianPython(['numpy']);

/** Runs a generated campaign with its segment windows and checks every wake row against the script's spans. */
async function checkSegments(dir: string, out: string, spans: Span[], gap_s: number): Promise<void> {
  const c = loadCampaignFile(join(dir, 'campaign.yaml'));
  c.output.netcdf = false;
  const { manifest, runDir } = await runCampaign(c, { outRoot: join(dir, out), images: false, stages: defaultStages() });
  const rows = readCsv(join(runDir, 'wake', 'wake_table.csv'));
  expect(rows).toHaveLength(spans.length);
  expect(manifest.windows).toHaveLength(spans.length);
  spans.forEach((s, k) => {
    const r = rows[k], w = manifest.windows[k];
    // Bounds: series rows at x.9 s, written to the millisecond; the CSV's start_s/end_s to 0.1 s or better.
    expect(Math.abs(w.start_s - s.start_s)).toBeLessThan(1e-3);
    expect(Math.abs(w.end_s - s.end_s)).toBeLessThan(1e-3);
    expect(Math.abs(Number(r.start_s) - s.start_s)).toBeLessThan(0.05);
    expect(w.kind).toBe('segment');
    expect(r.window_kind).toBe('segment');
    expect(r.window_label).toBe(`yaw offset ${s.level > 0 ? '+' : ''}${s.level}\u00b0`);
    expect(Number(r.state_level_deg)).toBe(s.level);
    // Window means of the rows the script wrote (0.01-degree values): the written table rounds to 1e-3 deg.
    expect(Math.abs(Number(r.yaw_offset_deg) - s.yaw_offset_deg)).toBeLessThan(2e-3);
    expect(Math.abs(Number(r.wind_direction_deg) - s.direction_deg)).toBeLessThan(2e-3);
    expect(Math.abs(Number(r.power_kw) - s.power_kw)).toBeLessThan(0.1); // written to 0.1 kW
    // Wake centre: the true 2 m per degree of offset, seen in the window's rotor frame (turned by the window's
    // mean direction: y' = 600 sin(d) + yc cos(d), in the script). Within 3 of the fit's standard errors plus
    // 0.5 m for the Gaussian fit to 30-m cell means of a sheared wake (common practice, not derived).
    expect(Math.abs(Number(r.yc_m) - s.yc_frame_m)).toBeLessThan(3 * Number(r.yc_se_m) + 0.5);
    expect(r.flag).toBe('ok');
  });
  // Every second of the series is in a window or excluded by a reason; the gap is the script's (intervals over
  // maxGap_s between rows with a yaw: the 4-minute hole, not the 21-s dropout). Sums of 0.1-s times: 1e-6 s.
  const seg = manifest.segments!;
  const excluded = Object.values(seg.excluded_s).reduce((a, b) => a + b, 0);
  expect(Math.abs(seg.windows_s + excluded - seg.total_s)).toBeLessThan(1e-6);
  expect(Math.abs(seg.excluded_s.gap - gap_s)).toBeLessThan(1e-6);
  expect(manifest.samples.balanced).toBe(true);
}

describe.skipIf(!py.python)(`held-back yaw steps at arbitrary clock times${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, spans: Span[], gap_s: number, log: Logged[];
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-'));
    const r = spawnSync(py.python!, ['test/reference/heldback_steering.py', dir], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(r.stderr);
    ({ spans, gap_s, log } = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { spans: Span[]; gap_s: number; log: Logged[] });
  });

  it('segment windows: one wake row per steady span, with the span\'s bounds, state, yaw offset, power and wake centre', async () => {
    // The script's spans: steps 1, 2, 4, 5 whole (less settle), step 3 in two pieces around the series gap; the
    // dropout inside step 2 (two rows without yaw, 21 s between the rows around it) does not cut it.
    expect(spans.map((s) => [s.level, s.step])).toEqual([[0, 0], [20, 1], [-15, 2], [-15, 2], [10, 3], [0, 4]]);
    await checkSegments(dir, 'out', spans, gap_s);
  });

  it('the same with the wind from 1.5 degrees (values wrap through north) and a direction series of 10-minute means', async () => {
    // Two regressions at once, from one generated case: nacelle and direction values on both sides of north; and a
    // met mast's 10-minute means, where a row's direction was looked up within maxGap_s (60 s) only, so 5 of 6 rows
    // had none and no window was found (the script pairs each row with the nearest direction row, as the README says).
    const d2 = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-north-'));
    const r = spawnSync(py.python!, ['test/reference/heldback_steering.py', d2, '--direction', '1.5', '--direction-every', '600', '--minutes-scale', '0.6'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const e = JSON.parse(readFileSync(join(d2, 'expected.json'), 'utf8')) as { spans: Span[]; gap_s: number };
    // Steps of 10.2 .. 18.6 minutes: step 3's pieces around the 4-minute gap are shorter than 300 s after settling.
    expect(e.spans.map((s) => [s.level, s.step])).toEqual([[0, 0], [20, 1], [10, 3], [0, 4]]);
    await checkSegments(d2, 'out', e.spans, e.gap_s);
  });

  it('listed windows from the experiment\'s log (ISO with an offset and Unix times, quoted labels): one labelled row each', async () => {
    const c = loadCampaignFile(join(dir, 'campaign.yaml'));
    c.output.netcdf = false;
    c.windows = { kind: 'list', file: join(dir, 'data', 'log.csv'), columns: {}, allowOverlap: false };
    const { manifest, runDir } = await runCampaign(c, { outRoot: join(dir, 'out-list'), images: false, stages: defaultStages() });
    const rows = readCsv(join(runDir, 'wake', 'wake_table.csv'));
    expect(rows.map((r) => r.window_label)).toEqual(log.map((l) => l.label));
    expect(rows.map((r) => r.window_kind)).toEqual(log.map(() => 'list'));
    log.forEach((l, k) => {
      // Times written to 0.1 s (Unix) or 1 ms (ISO): exact to 1e-6 s after parsing.
      expect(Math.abs(manifest.windows[k].start_s - l.start_s)).toBeLessThan(1e-6);
      expect(Math.abs(manifest.windows[k].end_s - l.end_s)).toBeLessThan(1e-6);
      const d = ((l.direction_deg - 270) * Math.PI) / 180;
      // As above: the true centre in the window's frame, 3 standard errors + 0.5 m.
      expect(Math.abs(Number(rows[k].yc_m) - (600 * Math.sin(d) + l.yc_m * Math.cos(d)))).toBeLessThan(3 * Number(rows[k].yc_se_m) + 0.5);
    });
  });

  it('condition bins on yaw offset, hub speed and a turbine-series column: members as the script\'s values say, empty bins listed', async () => {
    const c = loadCampaignFile(join(dir, 'campaign.yaml'));
    const yawEdges = [-25, -5, 5, 15, 25, 35], speedEdges = [7, 8.3, 10], powerEdges = [0, 1000, 2000];
    c.conditions = { bins: [
      { variable: 'yaw_offset_deg', edges: yawEdges }, { variable: 'hub_speed_ms', edges: speedEdges }, { variable: 'turbine.power_kw', edges: powerEdges },
    ], minWindows: 1 };
    const { manifest, runDir } = await runCampaign(c, { outRoot: join(dir, 'out-bins'), images: false, stages: defaultStages() });
    // Expected bin of each span from the script's step level, true hub speed (7.2 .. 9.4 m/s, at least 0.3 m/s from
    // an edge: the inflow fit is within 0.05 m/s of it here) and window-mean power; bins in row-major order.
    const idx = (edges: number[], v: number) => edges.findIndex((e, i) => v >= e && v < edges[i + 1]);
    const expected = new Map<number, number[]>();
    spans.forEach((s, k) => {
      const b = (idx(yawEdges, s.level) * 2 + idx(speedEdges, s.speed_ms)) * 2 + idx(powerEdges, s.power_kw);
      expected.set(b, [...(expected.get(b) ?? []), k]);
    });
    const bins = manifest.ensembles!;
    expect(bins).toHaveLength(5 * 2 * 2);
    for (const b of bins) {
      expect(b.windows, b.label).toEqual(expected.get(b.bin) ?? []);
      expect(b.empty).toBe(!expected.has(b.bin));
    }
    // Each ensemble row says why it exists: its condition, and the state level its segment windows share (they are
    // binned by yaw offset here, so every bin holds one level; before, the level column was empty for ensembles).
    const ens = readCsv(join(runDir, 'wake', 'ensembles.csv'));
    expect(ens.map((r) => r.bin)).toEqual([...expected.keys()].sort((a, b) => a - b).map(String));
    for (const r of ens) {
      expect(r.window_kind).toBe('ensemble');
      expect(r.window_label).toBe(bins.find((b) => String(b.bin) === r.bin)!.label);
      expect(Number(r.state_level_deg)).toBe(spans[expected.get(Number(r.bin))![0]].level);
    }
    // The bins' NetCDF file says what each bin is (bin_label; before, only bin numbers), read by Debian's ncdump.
    if (hasCommand('ncdump')) {
      const out = spawnSync('ncdump', ['-v', 'bin_label', join(runDir, 'fields', 'x5_bins.nc')], { encoding: 'utf8' }).stdout;
      const labels = [...out.slice(out.indexOf('bin_label =')).matchAll(/"([^"]*)"/g)].map((m) => m[1]);
      expect(labels).toEqual(bins.filter((b) => !b.empty).map((b) => b.label));
    }
    // The yaw offsets 25 .. 35 are never set: those four bins are reported empty, not dropped.
    expect(bins.filter((b) => b.label.startsWith('yaw_offset_deg in [25, 35)')).every((b) => b.empty)).toBe(true);
  });
});
