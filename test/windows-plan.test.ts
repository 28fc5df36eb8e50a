/**
 * Window plans (src/windows/): lookups against a brute-force scan of the window definitions, listed windows and
 * their errors, and segment windows from a turbine series worked out by hand.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, InputError } from '../src/errors.ts';
import { readSeries, type Series } from '../src/io/series.ts';
import { mulberry32 } from '../src/math/random.ts';
import { windowsFromFile, windowsFromItems } from '../src/windows/list.ts';
import { fixedPlan, tablePlan, type WindowDef, type WindowPlan } from '../src/windows/plan.ts';
import { defaultSegmentGap, segmentWindows } from '../src/windows/segments.ts';

function lookup(plan: WindowPlan, t: number): { ids: number[]; range: [number, number] } {
  const out = new Int32Array(plan.maxOverlap);
  const range = new Float64Array(2);
  const n = plan.find(t, out, range);
  return { ids: Array.from(out.subarray(0, n)), range: [range[0], range[1]] };
}

/** Every window (from a list of candidate ids) that contains t, by definition. */
function brute(plan: WindowPlan, t: number, candidates: number[]): number[] {
  return candidates.filter((k) => plan.def(k).start_s <= t && t < plan.def(k).end_s);
}

describe('fixed windows', () => {
  const r = mulberry32(4);
  for (const [L, S, label] of [[600, 600, 'contiguous'], [600, 200, 'overlapping'], [300, 420, 'with gaps']] as const) {
    it(`${label}: lookups equal the definition, and the answer holds over the returned range`, () => {
      const anchor = 1_781_431_397.25; // an arbitrary, unaligned time
      const plan = fixedPlan(anchor, L, S);
      const ks = Array.from({ length: 80 }, (_, i) => i - 40);
      for (let i = 0; i < 500; i++) {
        const t = anchor + (r() - 0.5) * 30 * S;
        const { ids, range } = lookup(plan, t);
        expect(ids).toEqual(brute(plan, t, ks));
        expect(range[0]).toBeLessThanOrEqual(t);
        expect(range[1]).toBeGreaterThan(t);
        const t2 = range[0] + r() * (range[1] - range[0]);
        expect(brute(plan, t2, ks)).toEqual(ids);
      }
      // A window starts exactly at the anchor.
      expect(lookup(plan, anchor).ids).toContain(0);
      expect(plan.def(0).start_s).toBe(anchor);
      expect(plan.disjoint).toBe(S >= L);
    });
  }
});

describe('listed windows', () => {
  it('overlapping table: lookups equal the definition', () => {
    const r = mulberry32(8);
    const list: Omit<WindowDef, 'id'>[] = Array.from({ length: 40 }, () => {
      const a = Math.floor(r() * 10000);
      return { start_s: a, end_s: a + 1 + Math.floor(r() * 900), kind: 'list', label: '', level: NaN };
    });
    const plan = tablePlan('list', list);
    const ids = plan.all!.map((w) => w.id);
    for (let i = 0; i < 2000; i++) {
      const t = r() * 11000 - 100;
      const { ids: got, range } = lookup(plan, t);
      expect(got).toEqual(brute(plan, t, ids));
      const t2 = range[0] + r() * Math.min(1e6, range[1] - range[0]);
      if (Number.isFinite(t2)) expect(brute(plan, t2, ids)).toEqual(got);
    }
  });

  const dir = mkdtempSync(join(tmpdir(), 'wp-list-'));
  const file = (name: string, text: string) => {
    const p = join(dir, name);
    writeFileSync(p, text);
    return p;
  };

  it('reads start, end and label from a CSV log (ISO and Unix times)', () => {
    const p = file('ok.csv', 'start,end,label\n2026-06-14T10:03:17Z,2026-06-14T10:21:02Z,step A\n1781432800,1781433400,"step, B"\n');
    const w = windowsFromFile(p, {}, false);
    expect(w.map((x) => x.label)).toEqual(['step A', 'step, B']);
    expect(w[0].start_s).toBe(Date.UTC(2026, 5, 14, 10, 3, 17) / 1000);
    expect(w[0].end_s - w[0].start_s).toBe(17 * 60 + 45);
  });

  it('errors name the file and line: reversed, unparsable, overlapping; overlap allowed when asked', () => {
    const rev = file('rev.csv', 'start,end\n100,200\n500,400\n');
    expect(() => windowsFromFile(rev, {}, false)).toThrow(InputError);
    expect(() => windowsFromFile(rev, {}, false)).toThrow(/rev\.csv:3: .*not after start/);
    const bad = file('bad.csv', 'start,end\n100,200\nsoon,400\n');
    expect(() => windowsFromFile(bad, {}, false)).toThrow(/bad\.csv:3: .*start is not a time: "soon"/);
    const ov = file('ov.csv', 'start,end\n100,200\n150,300\n');
    expect(() => windowsFromFile(ov, {}, false)).toThrow(/ov\.csv:3: .*overlaps the window on line 2/);
    expect(windowsFromFile(ov, {}, true)).toHaveLength(2);
    const nocol = file('nocol.csv', 'from,to\n100,200\n');
    expect(() => windowsFromFile(nocol, {}, false)).toThrow(/nocol\.csv:1: .*missing column "start"/);
    expect(windowsFromFile(nocol, { start: 'from', end: 'to' }, false)).toHaveLength(1);
  });

  it('inline items: errors name the campaign key', () => {
    expect(() => windowsFromItems([{ start: 10, end: 5 }], '/c.yaml', false)).toThrow(ConfigError);
    expect(() => windowsFromItems([{ start: 10, end: 5 }], '/c.yaml', false)).toThrow(/windows\.items\[0\]: end must be after start/);
    expect(() => windowsFromItems([{ start: 'never', end: 5 }], '/c.yaml', false)).toThrow(/windows\.items\[0\]\.start/);
  });
});

describe('segment windows from a turbine series (worked by hand)', () => {
  // Rows every 60 s from t = 1000. Wind from 270 deg (fixed). Nacelle: 270 (offset 0) for rows 0-9, a step through
  // 265 (row 10: offset -5, between levels) to 260 (offset -10) for rows 11-30, a 300 s gap after row 30, then
  // offset -10 again for rows 31-40 (4 of them with power below the condition: rows 35-36).
  const T: number[] = [], yaw: number[] = [], power: number[] = [];
  for (let i = 0; i <= 40; i++) {
    T.push(1000 + i * 60 + (i > 30 ? 300 : 0));
    yaw.push(i <= 9 ? 270 : i === 10 ? 265 : 260);
    power.push(i === 35 || i === 36 ? 100 : 2000);
  }
  const series: Series = { file: 'turbine.csv', time: Float64Array.from(T), values: { yaw_deg: Float64Array.from(yaw), power_kw: Float64Array.from(power) } };
  const base = { levels_deg: [-10, 0, 10], tolerance_deg: 2, minDuration_s: 120, maxGap_s: 90, settle_s: 0 };

  it('spans from the first to the last row of each steady run; transitions, gaps and conditions excluded and counted', () => {
    const { windows, summary } = segmentWindows(series, () => 270, { ...base, power_kw: { min: 500 } });
    // Offset 0: rows 0-9 -> [1000, 1540]. Transition rows 9-11 (540..660 s after start): 120 s.
    // Offset -10: rows 11-30 -> [1660, 2800]; gap 2800 -> 3160 (360 s > maxGap); rows 31-34 -> [3160, 3340];
    // power fails at rows 35, 36 (intervals 34-35, 35-36, 36-37: 180 s); rows 37-40 -> [3520, 3700].
    expect(windows.map((w) => [w.start_s, w.end_s, w.level])).toEqual([
      [1000, 1540, 0], [1660, 2800, -10], [3160, 3340, -10], [3520, 3700, -10],
    ]);
    expect(windows[1].label).toBe('yaw offset -10\u00b0');
    expect(summary.excluded_s.transition).toBe(120);
    expect(summary.excluded_s.gap).toBe(360);
    expect(summary.excluded_s.power).toBe(180);
    // Every second between the first and the last row is either in a window or excluded by a reason.
    const excluded = Object.values(summary.excluded_s).reduce((a, b) => a + b, 0);
    expect(summary.windows_s + excluded).toBe(T[T.length - 1] - T[0]);
  });

  it('settle time, minimum duration and sub-windows', () => {
    const { windows, summary } = segmentWindows(series, () => 270, { ...base, settle_s: 100, minDuration_s: 200, subWindow_s: 300 });
    // Spans: [1000,1540] -> settle to 1100, 440 s -> one 300 s window + 140 s remainder;
    // [1660,3700]? no: the gap splits it: [1660,2800] -> 1760, 1040 s -> 3 windows + 140 s;
    // [3160,3700] (no power condition here) -> 3260, 440 s -> 1 window + 140 s.
    expect(windows.map((w) => w.start_s)).toEqual([1100, 1760, 2060, 2360, 3260]);
    expect(summary.excluded_s.settle).toBe(300);
    expect(summary.excluded_s.remainder).toBe(420);
  });

  it('wind from the series itself when given; rows without values are gaps', () => {
    const s2: Series = { ...series, values: { ...series.values, wind_direction_deg: Float64Array.from(T, () => 275) } };
    // Offsets become -5 (no level within 2 deg) and -15: nothing matches the levels -10, 0, 10.
    expect(segmentWindows(s2, () => NaN, base).windows).toHaveLength(0);
    const none = segmentWindows(series, () => NaN, base);
    expect(none.windows).toHaveLength(0);
    expect(none.summary.excluded_s.gap).toBe(T[T.length - 1] - T[0]);
  });
});

describe('segment windows: rows without values (a logger dropout) are skipped, not a cut', () => {
  // Rows every 10 s from t = 0 to 400 s, yaw offset 0 throughout (nacelle 270, wind 270), maxGap 60 s. Rows 5-6
  // (t = 50, 60) have no yaw: the rows around them (t = 40 and 70) are 30 s apart, within maxGap, so the span goes
  // on. Rows 20-28 (t = 200 .. 280) have none: rows 19 and 29 (t = 190, 290) are 100 s apart, a gap. Rows 39-40
  // (t = 390, 400) have none: the 10 s after row 38 (t = 380) to the series end are a gap too.
  const T = Float64Array.from({ length: 41 }, (_, i) => 10 * i);
  const yaw = Float64Array.from(T, (_, i) => ((i >= 5 && i <= 6) || (i >= 20 && i <= 28) || i >= 39 ? NaN : 270));
  const series: Series = { file: 'turbine.csv', time: T, values: { yaw_deg: yaw } };
  it('spans [0, 190] and [290, 380]; gap 100 + 20 s; every second accounted for', () => {
    const { windows, summary } = segmentWindows(series, () => 270, { levels_deg: [0], tolerance_deg: 2, minDuration_s: 60, maxGap_s: 60, settle_s: 0 });
    expect(windows.map((w) => [w.start_s, w.end_s])).toEqual([[0, 190], [290, 380]]);
    expect(summary.excluded_s.gap).toBe(100 + 20);
    const excluded = Object.values(summary.excluded_s).reduce((a, b) => a + b, 0);
    expect(summary.windows_s + excluded).toBe(400);
  });
});

describe('the default gap of segment windows follows the series rate', () => {
  // One row a minute from a logger whose clock jitters by up to 0.5 s (intervals 59.5 .. 60.5 s), offset 0 all along,
  // and one missing row (a 120 s interval) at row 30, and two missing rows (180 s) at row 60.
  const T: number[] = [];
  for (let i = 0, t = 0; i < 90; i++) {
    if (i === 30 || i === 60 || i === 61) { t += 60; continue; }
    T.push(t + (i % 2 ? 0.5 : -0.5) * ((i % 3) / 2));
    t += 60;
  }
  const series: Series = { file: 'turbine.csv', time: Float64Array.from(T), values: { yaw_deg: Float64Array.from(T, () => 270) } };
  it('2.5 times the median interval, at least 60 s: jitter and one missing row are no gap, two are', () => {
    // Median of the intervals: 60 s to within the jitter (most intervals are 59.5 .. 60.5 s): 2.5 x 60 = 150 s +- 1.25 s.
    const g = defaultSegmentGap(series);
    expect(Math.abs(g - 150)).toBeLessThanOrEqual(1.25);
    const { windows, summary } = segmentWindows(series, () => 270, { levels_deg: [0], tolerance_deg: 2, minDuration_s: 60, maxGap_s: g, settle_s: 0 });
    // One cut only, at the two missing rows (the 180 s interval from row 59 to row 62).
    expect(windows).toHaveLength(2);
    // Rows i = 59 and 62 are T[58] and T[59] (row 30 is missing before them): their interval, about 180 s, is the gap.
    expect(Math.abs(T[59] - T[58] - 180)).toBeLessThanOrEqual(1);
    expect(summary.excluded_s.gap).toBe(T[59] - T[58]);
    // With the old fixed default of 60 s, every interval a little over 60 s was a gap.
    const old = segmentWindows(series, () => 270, { levels_deg: [0], tolerance_deg: 2, minDuration_s: 60, maxGap_s: 60, settle_s: 0 });
    // (each interval of 60.25 or 60.5 s counted whole: more than ten of them here)
    expect(old.summary.excluded_s.gap).toBeGreaterThan(10 * 60);
  });
  it('a series of one row or none falls back to 60 s', () => {
    expect(defaultSegmentGap({ file: 'x', time: Float64Array.of(5), values: {} })).toBe(60);
  });
});

describe('segment windows with a power condition: a row without power is skipped, not a failed condition', () => {
  it('rows every 10 s, offset 0, power 2000 kW but NaN at t = 50 and 60: one span [0, 200]', () => {
    // The rows around the two without power (t = 40 and 70) are 30 s apart, within maxGap 60 s: no cut. Before, the
    // two rows failed the condition (NaN is not >= 500) and cut the span into [0, 40] and [70, 200].
    const T = Float64Array.from({ length: 21 }, (_, i) => 10 * i);
    const power = Float64Array.from(T, (t) => (t === 50 || t === 60 ? NaN : 2000));
    const series: Series = { file: 'turbine.csv', time: T, values: { yaw_deg: Float64Array.from(T, () => 270), power_kw: power } };
    const { windows, summary } = segmentWindows(series, () => 270, { levels_deg: [0], tolerance_deg: 2, minDuration_s: 10, maxGap_s: 60, settle_s: 0, power_kw: { min: 500 } });
    expect(windows.map((w) => [w.start_s, w.end_s])).toEqual([[0, 200]]);
    expect(summary.excluded_s.power).toBe(0);
  });
});

describe('series files with missing values', () => {
  const dir = mkdtempSync(join(tmpdir(), 'wp-series-'));
  it('an empty cell or NaN in a column the caller allows holes in is NaN; elsewhere an error naming file, line and column', () => {
    const p = join(dir, 'turbine.csv');
    // pandas writes a missing float as an empty cell (to_csv default), numpy.savetxt as "nan"
    writeFileSync(p, 'time,yaw_deg,power_kw\n2026-05-09 10:00:00,270.5,1500\n2026-05-09 10:00:10,,1510\n2026-05-09 10:00:20,nan,NaN\n');
    const s = readSeries(p, {}, ['yaw_deg'], ['power_kw'], { holes: ['yaw_deg'] });
    expect(Array.from(s.values.yaw_deg)).toEqual([270.5, NaN, NaN]);
    expect(Array.from(s.values.power_kw)).toEqual([1500, 1510, NaN]);
    expect(() => readSeries(p, {}, ['yaw_deg'], ['power_kw'])).toThrow(/turbine\.csv:3: column "yaw_deg": empty/);
    expect(() => readSeries(p, {}, ['power_kw'])).toThrow(/turbine\.csv:4: column "power_kw": missing value "NaN"/);
  });
});

describe('the first-sample anchor', () => {
  it('ignores a stamp more than a day from the median of the first batch (a zeroed clock), else takes the earliest', async () => {
    const { firstSampleTime } = await import('../src/pipeline/ingest.ts');
    const t = Float64Array.from({ length: 1000 }, (_, i) => 1_781_431_397 + 0.25 * i);
    expect(firstSampleTime({ length: t.length, time: t })).toBe(1_781_431_397);
    t[500] = 0; // corrupted: 1970
    t[501] = 1_781_431_397 - 3600; // an hour early: plausible, taken
    expect(firstSampleTime({ length: t.length, time: t })).toBe(1_781_431_397 - 3600);
    t[501] = 1_781_431_500;
    expect(firstSampleTime({ length: t.length, time: t })).toBe(1_781_431_397);
    expect(firstSampleTime({ length: 0, time: t })).toBeNaN();
  });
});
