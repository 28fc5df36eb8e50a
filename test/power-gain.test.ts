/**
 * Power gain of wake steering: the energy-ratio gain, its distribution-weighted combination and their bootstrap
 * intervals against scipy.stats.bootstrap on a fixed data set (test/reference/power_bootstrap.py, output quoted
 * below and in power_bootstrap.out); the bootstrap standard error of a mean against its ideal plug-in value; window
 * flags for gaps, negative power and unavailability naming file and line.
 */
import { describe, expect, it } from 'vitest';
import { bootstrapGroups } from '../src/power/bootstrap.ts';
import { powerGain, type GainWindow } from '../src/power/gain.ts';
import { windowPower } from '../src/power/windowPower.ts';
import { analysePower, type PowerWindow } from '../src/power/analyse.ts';
import type { Series } from '../src/io/series.ts';

// The data set of test/reference/power_bootstrap.py.
const A = {
  baseT: [410.0, 385.5, 452.1, 398.7, 377.2, 441.9, 420.3, 395.0, 388.8, 430.6, 402.4, 415.7],
  baseR: [980.2, 940.8, 1050.3, 990.1, 925.4, 1032.7, 1001.5, 960.0, 950.6, 1020.9, 975.3, 995.8],
  steerT: [505.3, 470.2, 530.8, 488.1, 512.6, 476.9, 520.4, 495.5, 482.0, 509.9],
  steerR: [905.1, 860.7, 950.2, 880.4, 930.8, 870.3, 945.6, 899.9, 875.2, 920.5],
};
const B = {
  baseT: [610.4, 655.2, 590.9, 640.3, 622.8, 601.7],
  baseR: [1350.2, 1420.7, 1310.5, 1400.1, 1375.9, 1330.4],
  steerT: [700.6, 735.1, 690.2, 720.8, 710.3],
  steerR: [1290.4, 1335.8, 1270.1, 1320.6, 1305.2],
};

function windows(bin: typeof A, direction: number): GainWindow[] {
  const out: GainWindow[] = [];
  bin.baseT.forEach((p, i) => out.push({ window: out.length, direction_deg: direction, speed_ms: 8, steered: false, power_kw: p, reference_kw: bin.baseR[i], centre_m: 0 }));
  bin.steerT.forEach((p, i) => out.push({ window: out.length, direction_deg: direction, speed_ms: 8, steered: true, power_kw: p, reference_kw: bin.steerR[i], centre_m: 30 }));
  return out;
}

const edges = { direction_deg: [260, 270, 280], speed_ms: [6, 10] };
const boot = { replicates: 20000, confidence: 0.95, seed: 7 };

describe('power gain against scipy.stats.bootstrap (test/reference/power_bootstrap.py)', () => {
  const r = powerGain([...windows(A, 265), ...windows(B, 275)], edges, boot);
  const a = r.bins[0], c = r.combined;

  it('gives the energy-ratio gain and the combined gain of the data exactly', () => {
    // scipy run: "gain A estimate 0.3276574833", "combined estimate 0.2825440804"; the same arithmetic, so 1e-9.
    expect(a.gain).toBeCloseTo(0.3276574833, 9);
    expect(c.gain).toBeCloseTo(0.2825440804, 9);
    expect([a.nBaseline, a.nSteered, r.bins[1].nBaseline, r.bins[1].nSteered]).toEqual([12, 10, 6, 5]);
    expect(a.weight).toBeCloseTo(22 / 33, 12);
  });

  it('gives percentile intervals and standard errors within the Monte Carlo spread of scipy\'s', () => {
    // scipy, 20000 resamples, seeds 1 and 2: gain A [0.311969, 0.343491] se 0.008076 / [0.311996, 0.343623] se 0.008114;
    // combined [0.272081, 0.293028] se 0.005378 / [0.272175, 0.293086] se 0.005389. Our generator differs, so the
    // bounds agree only to the resampling noise: 5 % of the interval width (the two scipy seeds differ by < 0.5 %),
    // the standard errors to 5 % (the relative noise of a standard error from B replicates is about 1/sqrt(2B) = 0.5 %).
    const wA = 0.343491 - 0.311969, wC = 0.293028 - 0.272081;
    expect(Math.abs(a.gainLo - 0.311969)).toBeLessThan(0.05 * wA);
    expect(Math.abs(a.gainHi - 0.343491)).toBeLessThan(0.05 * wA);
    expect(Math.abs(a.gainSe - 0.008076) / 0.008076).toBeLessThan(0.05);
    expect(Math.abs(c.lo - 0.272081)).toBeLessThan(0.05 * wC);
    expect(Math.abs(c.hi - 0.293028)).toBeLessThan(0.05 * wC);
    expect(Math.abs(c.se - 0.005378) / 0.005378).toBeLessThan(0.05);
  });

  it('reports the measured deflection beside the gain', () => {
    // Baseline windows put the wake centre at 0 m, steered ones at 30 m: deflection 30 m in both bins and combined.
    expect(a.deflection_m).toBeCloseTo(30, 12);
    expect(c.deflection_m).toBeCloseTo(30, 12);
  });

  it('leaves bins with fewer than two windows in a state out of the combination, and counts windows outside every bin', () => {
    const lone: GainWindow = { window: 99, direction_deg: 275, speed_ms: 8, steered: true, power_kw: 1, reference_kw: 1, centre_m: NaN };
    const far: GainWindow = { ...lone, direction_deg: 300 };
    const q = powerGain([...windows(A, 265), { ...lone, steered: false }, lone, far], edges, { ...boot, replicates: 200 });
    expect(q.bins[1].weight).toBe(0);
    expect(Number.isNaN(q.bins[1].gain)).toBe(true);
    expect(q.combined.gain).toBeCloseTo(0.3276574833, 9); // bin A alone
    expect(q.outside).toBe(1);
  });
});

describe('bootstrap standard error', () => {
  it('approaches the plug-in standard error of a mean (Efron & Tibshirani 1993, ideal bootstrap estimate)', () => {
    // test/reference/power_bootstrap.py: "plug-in se of the mean 6.3948058349" for A.baseT; with 20000 replicates the
    // relative Monte Carlo error of the estimate is about 1/sqrt(2 * 20000) = 0.5 %: tolerance 3 %.
    const x = A.baseT;
    const [r] = bootstrapGroups([x.length], (ix) => [ix[0].reduce((s, i) => s + x[i], 0) / x.length], { replicates: 20000, confidence: 0.95, seed: 3 });
    expect(Math.abs(r.se - 6.3948058349) / 6.3948058349).toBeLessThan(0.03);
    expect(r.estimate).toBeCloseTo(x.reduce((s, v) => s + v, 0) / x.length, 12);
  });

  it('repeats exactly with the same seed', () => {
    const f = (ix: Int32Array[]) => [ix[0].reduce((s, i) => s + A.baseT[i], 0)];
    const s = { replicates: 500, confidence: 0.9, seed: 11 };
    expect(bootstrapGroups([12], f, s)).toEqual(bootstrapGroups([12], f, s));
  });
});

function series(file: string, rows: [number, number, number?][]): Series {
  return {
    file,
    time: Float64Array.from(rows, (r) => r[0]),
    values: { power_kw: Float64Array.from(rows, (r) => r[1]), status: Float64Array.from(rows, (r) => r[2] ?? 1) },
    lines: Int32Array.from(rows, (_, i) => i + 2),
  };
}

describe('window power: availability and flags naming file and line', () => {
  const o = { availableStatus: [1], minAvailability: 0.75, maxGap_s: 90 };
  const minute = (k: number) => 30 + 60 * k;
  it('averages the available rows', () => {
    const s = series('t.csv', [[minute(0), 100], [minute(1), 200], [minute(2), 300, 0], [minute(3), 400], [minute(4), 500]]);
    const w = windowPower(s, 0, 300, o);
    // Rows with status 1: 100, 200, 400, 500 -> mean 300; availability 4 / 5.
    expect(w.flag).toBe('ok');
    expect(w.power_kw).toBe(300);
    expect(w.availability).toBe(0.8);
  });
  it('flags too few available rows', () => {
    const s = series('t.csv', [[minute(0), 100, 0], [minute(1), 200, 0], [minute(2), 300], [minute(3), 400], [minute(4), 500]]);
    expect(windowPower(s, 0, 300, o)).toMatchObject({ flag: 'unavailable', reason: expect.stringMatching(/^t\.csv: 3 of 5 rows available .*lines 2-6/) });
  });
  it('flags a gap between rows with the lines around it', () => {
    const s = series('t.csv', [[minute(0), 100], [minute(1), 200], [minute(4), 500]]);
    expect(windowPower(s, 0, 300, o)).toMatchObject({ flag: 'gap', reason: expect.stringMatching(/^t\.csv:3-4: 180 s between rows/) });
  });
  it('flags negative power with its line', () => {
    const s = series('t.csv', [[minute(0), 100], [minute(1), -12], [minute(2), 300], [minute(3), 400], [minute(4), 500]]);
    expect(windowPower(s, 0, 300, o)).toMatchObject({ flag: 'negative_power', reason: 't.csv:3: negative power -12 kW' });
  });
  it('flags a window without rows', () => {
    expect(windowPower(series('t.csv', [[minute(0), 100]]), 1000, 1300, o).flag).toBe('no_rows');
  });
});

describe('power analysis: window states from the plan', () => {
  it('takes baseline and steered windows from the segment levels and leaves flagged windows out', () => {
    const rows: [number, number][] = [];
    for (let k = 0; k < 80; k++) rows.push([minute(k), 1000]);
    const ref = series('ref.csv', rows);
    // Downstream turbine: 400 kW at level 0, 500 kW at level 20; one negative row in window 3.
    const down = series('down.csv', rows.map(([t], k) => [t, k === 31 ? -5 : Math.floor(k / 10) % 2 === 0 ? 400 : 500]));
    const wins: PowerWindow[] = Array.from({ length: 8 }, (_, i) => ({
      id: i, start_s: i * 600, end_s: (i + 1) * 600, direction_deg: 270, level_deg: i % 2 === 0 ? 0 : 20, yawOffset_deg: NaN, inflowSpeed_ms: 8, centreAt: {},
    }));
    const a = analysePower(wins, [{ id: 'R', series: ref }, { id: 'D', series: down }], 'R', ['D'], {
      availableStatus: [1], minAvailability: 0.9, maxGap_s: 90, replicates: 200, confidence: 0.9, seed: 1, baselineTolerance_deg: 2, levelStep_deg: 5,
      directionEdges_deg: [260, 280], speedEdges_ms: [6, 10],
    });
    expect(a.gains).toHaveLength(1);
    const g = a.gains[0];
    expect(g.level_deg).toBe(20);
    // Windows 0, 2, 4, 6 baseline; 1, 5, 7 steered (window 3 holds the negative row): gain 500/400 - 1 = 0.25 exactly.
    expect(g.result.bins[0]).toMatchObject({ nBaseline: 4, nSteered: 3 });
    expect(g.result.combined.gain).toBeCloseTo(0.25, 12);
    const flagged = a.windows.find((w) => w.window.id === 3)!.perTurbine.D;
    expect(flagged.flag).toBe('negative_power');
    expect(flagged.reason).toBe('down.csv:33: negative power -5 kW');
  });
  it('groups windows of other plans by their mean yaw offset rounded to the level step', () => {
    const rows: [number, number][] = [];
    for (let k = 0; k < 60; k++) rows.push([minute(k), 1000]);
    const ref = series('ref.csv', rows);
    const yaws = [0.5, 19.2, -1.1, 21.0, 1.4, -9.6];
    const wins: PowerWindow[] = yaws.map((g, i) => ({ id: i, start_s: i * 600, end_s: (i + 1) * 600, direction_deg: 270, level_deg: NaN, yawOffset_deg: g, inflowSpeed_ms: 8, centreAt: {} }));
    const a = analysePower(wins, [{ id: 'R', series: ref }, { id: 'D', series: ref }], 'R', ['D'], {
      availableStatus: [1], minAvailability: 0.9, maxGap_s: 90, replicates: 100, confidence: 0.9, seed: 1, baselineTolerance_deg: 2, levelStep_deg: 5,
      directionEdges_deg: [260, 280], speedEdges_ms: [6, 10],
    });
    // |gamma| <= 2: baseline (0.5, -1.1, 1.4); 19.2 and 21.0 -> level 20; -9.6 -> level -10.
    expect(a.windows.map((w) => [w.state, w.level_deg])).toEqual([['baseline', NaN], ['steered', 20], ['baseline', NaN], ['steered', 20], ['baseline', NaN], ['steered', -10]]);
    expect(a.gains.map((g) => g.level_deg)).toEqual([-10, 20]);
  });
  it('adds the compared turbines together: their summed power against the reference, the yawed one\'s loss included', () => {
    // A yawed upstream turbine U loses power at level 20 (800 -> 680 kW, about cos^1.6 of 20 degrees), the waked
    // turbine D gains (400 -> 500 kW); the reference R beside the row is steady at 1000 kW. Group gain by hand:
    // (680 + 500) / (800 + 400) - 1 = 1180 / 1200 - 1 = -1/60; U alone -0.15, D alone +0.25 (energy ratios as sums,
    // the field wake-steering practice of ratio of sums over windows: common practice).
    const rows: [number, number][] = [];
    for (let k = 0; k < 80; k++) rows.push([minute(k), 1000]);
    const ref = series('ref.csv', rows);
    const up = series('up.csv', rows.map(([t], k) => [t, Math.floor(k / 10) % 2 === 0 ? 800 : 680]));
    const down = series('down.csv', rows.map(([t], k) => [t, k === 31 ? -5 : Math.floor(k / 10) % 2 === 0 ? 400 : 500]));
    const wins: PowerWindow[] = Array.from({ length: 8 }, (_, i) => ({
      id: i, start_s: i * 600, end_s: (i + 1) * 600, direction_deg: 270, level_deg: i % 2 === 0 ? 0 : 20, yawOffset_deg: NaN, inflowSpeed_ms: 8, centreAt: {},
    }));
    const a = analysePower(wins, [{ id: 'R', series: ref }, { id: 'U', series: up }, { id: 'D', series: down }], 'R', ['U', 'D'], {
      availableStatus: [1], minAvailability: 0.9, maxGap_s: 90, replicates: 200, confidence: 0.9, seed: 1, baselineTolerance_deg: 2, levelStep_deg: 5,
      directionEdges_deg: [260, 280], speedEdges_ms: [6, 10],
    });
    expect(a.gains.map((g) => g.turbine)).toEqual(['U', 'D', 'U+D']);
    const [u, d, group] = a.gains;
    // Constant powers per state: the ratios are exact, so 1e-12.
    expect(u.result.combined.gain).toBeCloseTo(-0.15, 12);
    expect(d.result.combined.gain).toBeCloseTo(0.25, 12);
    expect(group.result.combined.gain).toBeCloseTo(1180 / 1200 - 1, 12);
    // Window 3 (D's negative row) is out of the group as it is out of D's comparison: 4 baseline, 3 steered.
    expect(group.result.bins[0]).toMatchObject({ nBaseline: 4, nSteered: 3 });
    expect(u.result.bins[0]).toMatchObject({ nBaseline: 4, nSteered: 4 });
    expect(Number.isNaN(group.result.combined.deflection_m)).toBe(true); // no wake centre belongs to a group
  });
  function minute(k: number) { return 30 + 60 * k; }
});
