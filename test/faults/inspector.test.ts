/**
 * The suspicious-input inspector on hand-made batches (src/qc/suspicion.ts): the rules stated in its docblock,
 * checked on rows whose evidence is known by construction, including the cases a small simulated campaign cannot
 * reach (a repeat further back than the history, irregular range gates, the batch end time under damage).
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../../src/campaign/load.ts';
import type { SampleBatch } from '../../src/io/batch.ts';
import { emptyAccount } from '../../src/qc/reasons.ts';
import { SuspicionInspector, batchEndTime, type SuspicionSettings } from '../../src/qc/suspicion.ts';
import { faultCampaignObject } from './helpers.ts';

const campaign = resolveCampaign(faultCampaignObject(), '/site/campaign.yaml');
const FILE = '/site/data/a.csv';

/** A batch of rows [time, azimuth, elevation, range] of instrument 0 (a), lines 2, 3, ... from `line0`. */
function batch(rows: number[][], line0 = 2): SampleBatch {
  const n = rows.length;
  const f = (k: number) => Float64Array.from(rows, (r) => r[k]);
  return {
    length: n, file: FILE, line: Float64Array.from(rows, (_, i) => line0 + i), time: f(0), instrument: new Uint8Array(n),
    azimuth: f(1), elevation: f(2), range: f(3), radialVelocity: new Float64Array(n), cnr: new Float64Array(n),
  };
}

const settings = (o: Partial<SuspicionSettings> = {}): SuspicionSettings => ({ dropDuplicates: true, timeOrderTolerance_s: 1, horizon_s: 600, show: (f) => f.replace('/site/', ''), ...o });

/** Rays of `gates` gates (range 100, 130, ...) at times t0, t0 + dt, ...: azimuth 100 + k, elevation 5. */
function rays(t0: number, count: number, gates = 3, dt = 1): number[][] {
  const out: number[][] = [];
  for (let k = 0; k < count; k++) for (let g = 0; g < gates; g++) out.push([t0 + k * dt, 100 + (k % 7), 5, 100 + 30 * g]);
  return out;
}

const accounts = () => Object.fromEntries(campaign.instruments.map((i) => [i.id, { ...emptyAccount(), read: 100, accepted: 50 }]));

describe('duplicates', () => {
  it('exact repeats are masked, every other row is not (gates of one ray share time and angles)', () => {
    const ins = new SuspicionInspector(campaign, settings());
    const rows = rays(1000, 20);
    const m1 = Array.from(ins.batch(batch(rows), [])!.subarray(0, rows.length));
    expect(m1.every((x) => x === 0)).toBe(true);
    // rows 10..19 again (a stretch repeated), then a new ray
    const again = [...rows.slice(10, 20), [1100, 50, 5, 100]];
    const m2 = Array.from(ins.batch(batch(again, 100), [])!.subarray(0, again.length));
    expect(m2).toEqual([...Array(10).fill(1), 0]);
    expect(ins.finish(accounts()).warnings).toContain('instrument a, data/a.csv: 10 rows repeat an earlier row exactly (time, angles and range; lines 100, 101, 102, ...); dropped as "duplicate" (qc.dropDuplicates)');
  });

  it('irregular range gates are kept as a list: repeats found, new gates not', () => {
    const ins = new SuspicionInspector(campaign, settings());
    const rows = [[5, 10, 2, 100], [5, 10, 2, 140], [5, 10, 2, 150.5], [5, 10, 2, 140], [5, 10, 2, 120], [5, 10, 2, 150.5]];
    expect(Array.from(ins.batch(batch(rows), [])!.subarray(0, 6))).toEqual([0, 0, 0, 1, 0, 1]);
  });

  it('a repeat older than the history (two generations of the horizon) is found as a step back instead, named as the file repeating itself', () => {
    const ins = new SuspicionInspector(campaign, settings({ horizon_s: 10, dropDuplicates: false }));
    const rows = rays(0, 40, 2); // 40 s of rays, horizon 10 s: the first rays are forgotten by the end
    ins.batch(batch(rows), []);
    ins.batch(batch(rows.slice(0, 4), 200), []); // the file starts over at line 200
    const w = ins.finish(accounts()).warnings;
    expect(w).toContain('instrument a, data/a.csv: time steps back 1 time by more than 1 s (line 200; largest 39.0 s at line 200); the file repeats its first row there: it looks concatenated with itself; rows of windows already finished are rejected as out_of_time_order');
    expect(w.some((x) => x.includes('repeat an earlier row'))).toBe(false);
  });

  it('a long ordered record (the history log wraps and grows): repeats within the horizon found, older ones not', () => {
    // 5,000 one-gate rays 0.1 s apart (every ray its own angles: the history log grows past its first 1,024 slots
    // and wraps), horizon 100 s. Then one ray from 30 s before the end (kept) and one from 400 s before (forgotten).
    const ins = new SuspicionInspector(campaign, settings({ horizon_s: 100 }));
    const rows: number[][] = [];
    for (let k = 0; k < 5000; k++) rows.push([k / 10, (k * 0.37) % 360, 5 + (k % 11) * 0.01, 200]);
    for (let i = 0; i < rows.length; i += 700) expect(Array.from(ins.batch(batch(rows.slice(i, i + 700), 2 + i), [])!.subarray(0, Math.min(700, rows.length - i))).every((x) => x === 0)).toBe(true);
    const m = ins.batch(batch([rows[4700], rows[1000]], 9000), [])!;
    expect(Array.from(m.subarray(0, 2))).toEqual([1, 0]);
  });

  it('without dropDuplicates no mask is returned (nothing is dropped)', () => {
    const ins = new SuspicionInspector(campaign, settings({ dropDuplicates: false }));
    expect(ins.batch(batch(rays(0, 3)), [])).toBeUndefined();
  });
});

describe('time order', () => {
  it('steps back within the tolerance are jitter, not reported', () => {
    const ins = new SuspicionInspector(campaign, settings());
    ins.batch(batch([[10, 1, 1, 100], [9.2, 2, 1, 100], [11, 3, 1, 100]]), []);
    expect(ins.finish(accounts()).warnings).toEqual([]);
  });
});

describe('angle units', () => {
  it('radians: judged only with at least 20 rows and some spread; degrees of a real scan are not flagged', () => {
    const radians = Array.from({ length: 20 }, (_, k) => [k, 1.5 + 0.01 * k, 0.05 + 0.001 * k, 300]);
    const a = new SuspicionInspector(campaign, settings());
    a.batch(batch(radians), []);
    expect(a.finish(accounts()).warnings[0]).toBe('instrument a, data/a.csv: angles look like radians, not degrees: all 20 azimuths lie within 1.690 of north and all elevations within 0.050 .. 0.069 (2 pi = 6.283, pi/2 = 1.571); if so, map the columns with scale: 57.29577951 (instruments[].columns)');
    const few = new SuspicionInspector(campaign, settings());
    few.batch(batch(radians.slice(0, 19)), []);
    expect(few.finish(accounts()).warnings).toEqual([]);
    const degrees = new SuspicionInspector(campaign, settings());
    degrees.batch(batch(Array.from({ length: 50 }, (_, k) => [k, 86 + k, 3 + 0.2 * k, 300])), []);
    expect(degrees.finish(accounts()).warnings).toEqual([]);
  });
});

describe('accepted share', () => {
  it('a collapse against the others is reported with the reasons; a similar share is not', () => {
    const ins = new SuspicionInspector(campaign, settings());
    const acc = accounts();
    acc.b = { ...emptyAccount(), read: 1000, accepted: 30 };
    acc.b.rejected.below_ground = 600;
    acc.b.rejected.outside_planes = 370;
    const w = ins.finish(acc).warnings;
    // others: 50 % each; b: 3 % < 0.2 * 50 %
    expect(w).toEqual(['instrument b: only 3.00 % of its 1000 samples accepted (the other instruments: 50.0 % median); rejected: below_ground 60.0 %, outside_planes 37.0 %; files: data/b.csv. Check its position, calibration (heading) and angle units']);
    acc.b.accepted = 400;
    expect(new SuspicionInspector(campaign, settings()).finish(acc).warnings).toEqual([]);
  });
});

describe('batch end time for the in-step reader', () => {
  it('one or two damaged late times at a batch end do not move it; ordered batches lag two rows', () => {
    const b = batch([[1, 0, 0, 1], [2, 0, 0, 1], [3, 0, 0, 1], [4, 0, 0, 1]]);
    expect(batchEndTime(b)).toBe(2); // min of the last three: 2
    b.time[3] = 9e9;
    expect(batchEndTime(b)).toBe(2);
    b.time[2] = 9e9;
    expect(batchEndTime(b)).toBe(2);
  });
});
