/**
 * Per-window retrieval (src/retrieval/retrieveWindow.ts) against outside values: the weighted least-squares example
 * of REFERENCES.md section 2 recomputed by test/reference/wls_reference.py (numpy), the ground-level layout table,
 * Gaussian tail probabilities from scipy (test/reference/robust_reference.py), and closed-form geometry for a
 * heading error. Masks and the robust filter are checked on constructed windows.
 */
import { describe, expect, it } from 'vitest';
import type { Calibration, PlaneSpec, Vec3 } from '../src/campaign/types.ts';
import { calibratedUnitVector, calibrationMatrix, steerTo, unitVector } from '../src/geometry/beam.ts';
import { dirToRotor, fromRotor, rotorFrame, windComponents } from '../src/geometry/frames.ts';
import { cellCentre, type GridSpec } from '../src/grid/grid.ts';
import { createWindowSamples, pushSample, type WindowSamples } from '../src/grid/windowSamples.ts';
import { accumulateSamples, robustFilter } from '../src/retrieval/index.ts';
import { retrieveWindow, type PlaneGrid, type RetrievalSettings } from '../src/retrieval/retrieveWindow.ts';

/**
 * Samples are accumulated in fixed point (src/grid/accumulator.ts: v_r to 2^-20 m/s, beam components to 2^-26), so
 * noise-free cases are exact only to that quantisation: |error| <= DOP * (2^-21 m/s + |U| * 2^-27 * 3) < 2e-6 m/s
 * for the DOP < 3 and |U| < 15 m/s used here. An algebra error would be orders of magnitude larger.
 */
const QUANT = 2e-6;
import { MaskReason, type FieldResult } from '../src/retrieval/types.ts';
import { W_ZERO_ASSUMPTION } from '../src/retrieval/settings.ts';

const WINDOW = { index: 0, start_s: 0, end_s: 600 };

function plane(index: number, grid: GridSpec): PlaneGrid {
  const spec: PlaneSpec = {
    id: `P${index}`, index, orientation: 'cross', x_m: 300, z_m: NaN,
    y: { min: grid.y0 - grid.dy / 2, max: grid.y0 - grid.dy / 2 + grid.ny * grid.dy },
    second: { min: grid.z0 - grid.dz / 2, max: grid.z0 - grid.dz / 2 + grid.nz * grid.dz },
    cell_m: [grid.dy, grid.dz], thickness_m: 10,
  };
  return { spec, grid };
}
const ONE_CELL = plane(0, { ny: 1, nz: 1, y0: 0, z0: 100, dy: 20, dz: 20 });

function settings(over: Partial<RetrievalSettings> = {}): RetrievalSettings {
  return {
    maxAmplification: 3, minSamplesPerInstrument: 3, twoInstrumentAssumption: 'w-zero',
    robust: { enabled: true, k: 3.5, minSamples: 5 }, instrumentCount: 3, ...over,
  };
}

/** mulberry32 uniform generator and a Box-Muller normal: deterministic, so tolerances are not flaky. */
function rng(seed: number): { u: () => number; n: () => number } {
  let a = seed >>> 0;
  const u = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return { u, n: () => Math.sqrt(-2 * Math.log(u() || 1e-300)) * Math.cos(2 * Math.PI * u()) };
}

/** Push `count` noise-free samples of one instrument in one cell. */
function pushExact(s: WindowSamples, cell: number, ins: number, n: Vec3, U: Vec3, count: number, p = 0): void {
  const vr = n[0] * U[0] + n[1] * U[1] + n[2] * U[2];
  for (let i = 0; i < count; i++) pushSample(s, p, cell, ins, vr, n[0], n[1], n[2]);
}

describe('weighted least squares: REFERENCES.md section 2 example through retrieveWindow', () => {
  // test/reference/wls_reference.py (numpy 2.4) prints:
  //   A rows = [[0.0, 0.9659258262890683, 0.25881904510252074], [0.8365163037378079, -0.48296291314453393,
  //            0.25881904510252074], [-0.8365163037378076, -0.4829629131445346, 0.25881904510252074],
  //            [0.25, 0.43301270189221946, 0.8660254037844386]]
  //   v_r = [-1.8042059390473804, 6.032669362246671, -3.9555262826070203, 0.8537822173508927]
  //   U_hat = [5.987521128962318, -1.9547830879479315, 0.25044206170326566]
  //   diag Cov = [0.015472155573802028, 0.010302397986032667, 0.018902973062161765]
  //   sqrt diag Cov = [0.12438711980668267, 0.10150072899261693, 0.13748808334601864]
  //   unweighted DOP = [0.841447068415687, 0.8336888791410172, 1.0928521875773742]
  const beams: [number, number][] = [[0, 15], [120, 15], [240, 15], [30, 60]];
  const vr = [-1.8042059390473804, 6.032669362246671, -3.9555262826070203, 0.8537822173508927];
  const sigma = [0.1, 0.1, 0.2, 0.1];

  function build(): WindowSamples {
    // Rotor frame of wind from 270: x = east, y = north, z = up, so site-frame beams are rotor-frame beams.
    const f = rotorFrame(270, [0, 0, 0]);
    const s = createWindowSamples(16);
    // Four samples per instrument, m +/- d twice: mean m, s^2 = 4 d^2 / 3, so s / sqrt(4) = sigma for d = sigma sqrt 3.
    // Interleaved instruments, to exercise the grouping.
    for (let r = 0; r < 4; r++)
      for (let i = 0; i < 4; i++) {
        const n = dirToRotor(f, unitVector(beams[i][0], beams[i][1]));
        const d = sigma[i] * Math.sqrt(3) * (r % 2 ? 1 : -1);
        pushSample(s, 0, 0, i, vr[i] + d, n[0], n[1], n[2]);
      }
    return s;
  }

  it('U_hat, its standard uncertainties and the unweighted DOP (QUANT: fixed-point accumulation of 16 samples and a 3x3 inverse)', () => {
    const { fields, outliers } = retrieveWindow(build(), [ONE_CELL], WINDOW, 270, settings({ instrumentCount: 4 }));
    const f = fields[0];
    const tol = QUANT;
    expect(Math.abs(f.u[0] - 5.987521128962318)).toBeLessThan(tol);
    expect(Math.abs(f.v[0] - -1.9547830879479315)).toBeLessThan(tol);
    expect(Math.abs(f.w[0] - 0.25044206170326566)).toBeLessThan(tol);
    expect(Math.abs(f.su[0] - 0.12438711980668267)).toBeLessThan(tol);
    expect(Math.abs(f.sv[0] - 0.10150072899261693)).toBeLessThan(tol);
    expect(Math.abs(f.sw[0] - 0.13748808334601864)).toBeLessThan(tol);
    expect(Math.abs(f.dopU[0] - 0.841447068415687)).toBeLessThan(tol);
    expect(Math.abs(f.dopV[0] - 0.8336888791410172)).toBeLessThan(tol);
    expect(Math.abs(f.dopW[0] - 1.0928521875773742)).toBeLessThan(tol);
    expect([f.maskU[0], f.maskV[0], f.maskW[0]]).toEqual([0, 0, 0]);
    expect(f.samples[0]).toBe(16);
    expect(f.instruments[0]).toBe(4);
    expect(Array.from(outliers)).toEqual([0, 0, 0, 0]); // groups of 4 < robust.minSamples 5: not filtered
    expect(f.assumptions).toEqual([]);
  });

  it('an instrument sampling ten times faster gets no more weight for the same standard error of its mean', () => {
    // Instrument 1 with 40 samples m +/- d' where s / sqrt(40) = 0.1 again: s^2 = 40 d'^2 / 39 = 0.4 -> same result.
    const s = build();
    const t = createWindowSamples(64);
    for (let i = 0; i < s.length; i++)
      if (s.instrument[i] !== 1) pushSample(t, 0, 0, s.instrument[i], s.vr[i], s.nx[i], s.ny[i], s.nz[i]);
    const f = rotorFrame(270, [0, 0, 0]);
    const n = dirToRotor(f, unitVector(120, 15));
    const dd = Math.sqrt((0.1 * 0.1 * 40 * 39) / 40);
    for (let r = 0; r < 40; r++) pushSample(t, 0, 0, 1, vr[1] + (r % 2 ? dd : -dd), n[0], n[1], n[2]);
    const out = retrieveWindow(t, [ONE_CELL], WINDOW, 270, settings({ instrumentCount: 4, robust: { enabled: false, k: 3.5, minSamples: 5 } })).fields[0];
    expect(Math.abs(out.u[0] - 5.987521128962318)).toBeLessThan(QUANT);
    expect(Math.abs(out.su[0] - 0.12438711980668267)).toBeLessThan(QUANT);
  });
});

describe('masks', () => {
  const f270 = rotorFrame(270, [0, 0, 0]);
  const U: Vec3 = [7, -1.5, 0];
  // Three cells on one row: cell 0 two instruments, cell 1 one instrument, cell 2 empty.
  const grid3 = plane(0, { ny: 3, nz: 1, y0: 0, z0: 100, dy: 20, dz: 20 });
  function twoAndOne(): WindowSamples {
    const s = createWindowSamples();
    pushExact(s, 0, 0, dirToRotor(f270, unitVector(20, 0)), U, 5);
    pushExact(s, 0, 1, dirToRotor(f270, unitVector(110, 0)), U, 5);
    pushExact(s, 1, 0, dirToRotor(f270, unitVector(20, 0)), U, 5);
    return s;
  }

  it('two instruments with w-zero: u, v solved (exact for w = 0 to QUANT), w assumed zero, assumption stated once', () => {
    const s = twoAndOne();
    pushExact(s, 2, 0, dirToRotor(f270, unitVector(30, 0)), U, 4); // a second two-instrument cell
    pushExact(s, 2, 2, dirToRotor(f270, unitVector(150, 0)), U, 4);
    const f = retrieveWindow(s, [grid3], WINDOW, 270, settings()).fields[0];
    for (const c of [0, 2]) {
      expect(Math.abs(f.u[c] - U[0])).toBeLessThan(QUANT);
      expect(Math.abs(f.v[c] - U[1])).toBeLessThan(QUANT);
      expect(f.w[c]).toBeNaN();
      expect([f.maskU[c], f.maskV[c], f.maskW[c]]).toEqual([0, 0, MaskReason.assumedZero]);
      expect(f.dopW[c]).toBeNaN();
      expect(f.instruments[c]).toBe(2);
    }
    // Crossing angle of the beams at azimuths 20 and 110 is 90 deg: DOP u, v = 1 (Stawiarski et al. 2013 table).
    expect(f.minCrossing_deg[0]).toBeCloseTo(90, 9);
    expect(f.dopU[0]).toBeCloseTo(1, 12);
    expect(f.assumptions).toEqual([W_ZERO_ASSUMPTION]);
    expect(W_ZERO_ASSUMPTION).toBe('w = 0 assumed in cells with two instruments, and in cells of three or more whose three-component solve loses u or v');
  });

  it("two instruments with 'none': too_few_instruments, no assumption", () => {
    const f = retrieveWindow(twoAndOne(), [grid3], WINDOW, 270, settings({ twoInstrumentAssumption: 'none' })).fields[0];
    expect([f.maskU[0], f.maskV[0], f.maskW[0]]).toEqual([3, 3, 3].map(() => MaskReason.tooFewInstruments));
    expect(f.u[0]).toBeNaN();
    expect(f.assumptions).toEqual([]);
  });

  it('one instrument: too_few_instruments; empty cell: no_data', () => {
    const f = retrieveWindow(twoAndOne(), [grid3], WINDOW, 270, settings()).fields[0];
    expect([f.maskU[1], f.maskV[1], f.maskW[1]]).toEqual([MaskReason.tooFewInstruments, MaskReason.tooFewInstruments, MaskReason.tooFewInstruments]);
    expect(f.samples[1]).toBe(5);
    expect([f.maskU[2], f.maskV[2], f.maskW[2]]).toEqual([MaskReason.noData, MaskReason.noData, MaskReason.noData]);
    expect(f.samples[2]).toBe(0);
    expect(f.su[1]).toBeNaN();
  });

  it('too few samples: instruments present but below minSamplesPerInstrument', () => {
    const s = createWindowSamples();
    const beams: Vec3[] = [dirToRotor(f270, unitVector(0, 20)), dirToRotor(f270, unitVector(120, 20)), dirToRotor(f270, unitVector(240, 40))];
    // cell 0: every instrument has 2 samples (< 3)
    beams.forEach((n, i) => pushExact(s, 0, i, n, U, 2));
    // cell 1: two instruments with 5, the third with 2
    beams.forEach((n, i) => pushExact(s, 1, i, n, U, i === 2 ? 2 : 5));
    const none = retrieveWindow(s, [grid3], WINDOW, 270, settings({ twoInstrumentAssumption: 'none' })).fields[0];
    expect(Array.from([none.maskU[0], none.maskV[0], none.maskW[0]])).toEqual([2, 2, 2].map(() => MaskReason.tooFewSamples));
    expect(Array.from([none.maskU[1], none.maskV[1], none.maskW[1]])).toEqual([2, 2, 2].map(() => MaskReason.tooFewSamples));
    const wz = retrieveWindow(s, [grid3], WINDOW, 270, settings()).fields[0];
    expect(wz.maskU[0]).toBe(MaskReason.tooFewSamples);
    // With w-zero, the two instruments that qualify in cell 1 give u, v (w = 0 true here: exact to QUANT).
    expect([wz.maskU[1], wz.maskV[1], wz.maskW[1]]).toEqual([0, 0, MaskReason.assumedZero]);
    expect(Math.abs(wz.u[1] - U[0])).toBeLessThan(QUANT);
    expect(wz.samples[1]).toBe(10);
  });

  it('near-coplanar beams (ground layout, h = 10 m): w masked by amplification, u and v valid and exact', () => {
    // REFERENCES.md section 2 [numpy]: instruments (0,0,0), (400,0,0), (200,350,0), target (200,150,10):
    // DOP u 0.884590, v 0.763451, w 13.261114, cond 17.373378 (test/reference/wls_reference.py).
    const inst: Vec3[] = [[0, 0, 0], [400, 0, 0], [200, 350, 0]];
    const Ut: Vec3 = [8, 1, 0.6];
    const s = createWindowSamples();
    inst.forEach((p, i) => {
      const d = [200 - p[0], 150 - p[1], 10 - p[2]], r = Math.hypot(d[0], d[1], d[2]);
      pushExact(s, 0, i, [d[0] / r, d[1] / r, d[2] / r], Ut, 6); // direction 270: rotor = site axes
    });
    const f = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings()).fields[0];
    expect(f.maskW[0]).toBe(MaskReason.amplification);
    expect(f.w[0]).toBeNaN();
    expect(f.sw[0]).toBeNaN();
    expect([f.maskU[0], f.maskV[0]]).toEqual([0, 0]);
    // Noise-free data, square system: u, v exact to the fixed-point quantisation amplified by cond ~17 (10 QUANT).
    expect(Math.abs(f.u[0] - Ut[0])).toBeLessThan(10 * QUANT);
    expect(Math.abs(f.v[0] - Ut[1])).toBeLessThan(10 * QUANT);
    expect(Number.isFinite(f.su[0]) && Number.isFinite(f.sv[0])).toBe(true);
    // 1e-6 relative: the table is printed to 6 decimals.
    expect(Math.abs(f.dopU[0] / 0.88459 - 1)).toBeLessThan(1e-6);
    expect(Math.abs(f.dopV[0] / 0.763451 - 1)).toBeLessThan(1e-6);
    expect(Math.abs(f.dopW[0] / 13.261114 - 1)).toBeLessThan(1e-6);
    expect(Math.abs(f.cond[0] / 17.373378 - 1)).toBeLessThan(1e-6);
    // Noise-free: every s = 0 is floored at 0.01 m/s, so su = DOP_u * 0.01 / sqrt(6) (equal weights; 1e-9).
    expect(Math.abs(f.su[0] - (0.88459 * 0.01) / Math.sqrt(6))).toBeLessThan(1e-8);
  });

  it('exactly parallel beams: singular', () => {
    const s = createWindowSamples();
    const n: Vec3 = [1, 0, 0];
    for (let i = 0; i < 3; i++) pushExact(s, 0, i, n, U, 4);
    const f = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings()).fields[0];
    expect([f.maskU[0], f.maskV[0], f.maskW[0]]).toEqual([MaskReason.singular, MaskReason.singular, MaskReason.singular]);
  });

  it('three exactly horizontal beams: w unobservable (singular), u and v solved without assumption (QUANT)', () => {
    const s = createWindowSamples();
    const Uw: Vec3 = [7, -1.5, 2]; // a large w, which horizontal beams cannot see
    [20, 110, 230].forEach((az, i) => pushExact(s, 0, i, dirToRotor(f270, unitVector(az, 0)), Uw, 4));
    const f = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings()).fields[0];
    expect([f.maskU[0], f.maskV[0], f.maskW[0]]).toEqual([0, 0, MaskReason.singular]);
    expect(Math.abs(f.u[0] - Uw[0])).toBeLessThan(QUANT);
    expect(Math.abs(f.v[0] - Uw[1])).toBeLessThan(QUANT);
    expect(f.assumptions).toEqual([]);
  });

  it('an empty window gives no_data everywhere; samples land in the field of their plane index', () => {
    const a = plane(3, { ny: 2, nz: 2, y0: 0, z0: 50, dy: 10, dz: 10 });
    const b = plane(1, { ny: 3, nz: 1, y0: 0, z0: 50, dy: 10, dz: 10 });
    b.spec.orientation = 'horizontal';
    b.spec.z_m = 90;
    const empty = retrieveWindow(createWindowSamples(), [a, b], WINDOW, 270, settings());
    expect(empty.fields.map((f) => f.planeIndex)).toEqual([3, 1]);
    expect(empty.fields[0].u.length).toBe(4);
    expect(Array.from(empty.fields[1].maskU)).toEqual([1, 1, 1].map(() => MaskReason.noData));
    expect(empty.fields[1].x_m).toBeNaN();
    expect(empty.fields[1].z_m).toBe(90);
    const s = createWindowSamples();
    const beams: Vec3[] = [dirToRotor(f270, unitVector(0, 20)), dirToRotor(f270, unitVector(120, 20)), dirToRotor(f270, unitVector(240, 40))];
    const Ut: Vec3 = [5, 1, -0.2];
    beams.forEach((n, i) => pushExact(s, 1, i, n, Ut, 3, 1)); // plane index 1, cell 1
    const out = retrieveWindow(s, [a, b], WINDOW, 270, settings());
    expect(Math.abs(out.fields[1].w[1] - Ut[2])).toBeLessThan(QUANT);
    expect(out.fields[1].samples[1]).toBe(9);
    expect(out.fields[0].samples.reduce((x, y) => x + y, 0)).toBe(0);
  });

  it('rejects samples outside the planes, grid or instrument count (an upstream bug)', () => {
    const s = createWindowSamples();
    pushSample(s, 0, 5, 0, 1, 1, 0, 0);
    expect(() => retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings())).toThrow(RangeError);
    const t = createWindowSamples();
    pushSample(t, 0, 0, 7, 1, 1, 0, 0);
    expect(() => retrieveWindow(t, [ONE_CELL], WINDOW, 270, settings())).toThrow(RangeError);
  });
});

describe('robust filter', () => {
  const f270 = rotorFrame(270, [0, 0, 0]);
  const beams: Vec3[] = [dirToRotor(f270, unitVector(10, 20)), dirToRotor(f270, unitVector(130, 25)), dirToRotor(f270, unitVector(250, 45))];
  const Ut: Vec3 = [6, 0.5, 0.2];

  function gaussianWindow(n: number, sd: number, seed: number): WindowSamples {
    const g = rng(seed);
    const s = createWindowSamples(3 * n);
    for (let j = 0; j < n; j++)
      beams.forEach((b, i) => pushSample(s, 0, 0, i, b[0] * Ut[0] + b[1] * Ut[1] + b[2] * Ut[2] + sd * g.n(), b[0], b[1], b[2]));
    return s;
  }

  it('keeps a clean Gaussian sample: rejections match the two-sided tail probability', () => {
    // scipy (test/reference/robust_reference.py): P(|Z| > 2.5) = 1.241933e-02, P(|Z| > 3.5) = 4.652582e-04.
    // k = 2.5, 3 x 4000 samples: expected 149 rejections; binomial sd 12.2, plus the sampling error of the MAD
    // (~1.8 % in sigma per group -> ~11 in the count): combined sd ~17; tolerance +/- 4 sd = +/- 66.
    // Without the 1.4826 factor the count would be ~1090, with no filter 0.
    const s = gaussianWindow(4000, 0.5, 3);
    const out = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings({ robust: { enabled: true, k: 2.5, minSamples: 5 } }));
    const total = out.outliers.reduce((a, b) => a + b, 0);
    expect(Math.abs(total - 12000 * 1.241933e-2)).toBeLessThan(66);
    // k = 3.5: expected 5.6; Poisson-like sd 2.4 plus MAD error: fewer than 20.
    const out35 = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings({ robust: { enabled: true, k: 3.5, minSamples: 5 } }));
    expect(out35.outliers.reduce((a, b) => a + b, 0)).toBeLessThan(20);
  });

  it('rejects injected spikes, and the retrieval stays within its uncertainty', () => {
    const s = gaussianWindow(400, 0.3, 5);
    const g = rng(9);
    const spikes: number[] = [];
    for (let i = 0; i < s.length && spikes.length < 30; i++)
      if (s.instrument[i] === 0 && g.u() < 0.2) {
        s.vr[i] += 8 + 7 * g.u(); // +8..15 m/s spikes (> 26 sigma), one-sided so they bias the mean
        spikes.push(i);
      }
    expect(spikes.length).toBe(30);
    // Every spike is rejected (their offset is > 26 sd, the limit 3.5 sd): the kept mean of instrument 0 (key 0)
    // equals the mean of its clean samples within 0.015 m/s. One kept spike would move it by >= 8 / 370 = 0.022
    // m/s; the at most 3 clean tail samples the filter may also drop (about 3.5 sd = 1.05 m/s off) by <= 0.0085.
    const { stats, outliers } = robustFilter(accumulateSamples(s, [ONE_CELL], 3), { enabled: true, k: 3.5, minSamples: 5 });
    const spikeSet = new Set(spikes);
    let cleanSum = 0, cleanN = 0;
    for (let i = 0; i < s.length; i++) if (s.instrument[i] === 0 && !spikeSet.has(i)) { cleanSum += s.vr[i]; cleanN++; }
    expect(Math.abs(stats.sv[0] / stats.n[0] - cleanSum / cleanN)).toBeLessThan(0.015);
    expect(stats.n[0]).toBeLessThanOrEqual(cleanN);
    // Clean tail: 400 * 4.65e-4 = 0.19 expected per instrument: at most 3 extra (Poisson P(>3) < 1e-3).
    expect(outliers[0] - 30).toBeLessThanOrEqual(3);
    expect(outliers[1] + outliers[2]).toBeLessThanOrEqual(3);

    const f = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings()).fields[0];
    // Gaussian noise only after filtering: within 4 standard uncertainties of the truth.
    expect(Math.abs(f.u[0] - Ut[0])).toBeLessThan(4 * f.su[0]);
    expect(Math.abs(f.v[0] - Ut[1])).toBeLessThan(4 * f.sv[0]);
    expect(Math.abs(f.w[0] - Ut[2])).toBeLessThan(4 * f.sw[0]);
    // Without the filter the spikes bias the mean of instrument 0 by about 30 * 11.5 / 400 = 0.86 m/s (three
    // instruments: a square system, so its weight cannot dilute the bias), far beyond the filtered error of a few
    // cm/s (this makes the check above able to fail).
    const raw = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings({ robust: { enabled: false, k: 3.5, minSamples: 5 } })).fields[0];
    const errRaw = Math.hypot(raw.u[0] - Ut[0], raw.v[0] - Ut[1], raw.w[0] - Ut[2]);
    const errFilt = Math.hypot(f.u[0] - Ut[0], f.v[0] - Ut[1], f.w[0] - Ut[2]);
    expect(errRaw).toBeGreaterThan(5 * errFilt);
  });

  it('MAD = 0: a spike in constant data is still rejected; identical values are all kept', () => {
    const s = createWindowSamples();
    const b = beams[0];
    for (let i = 0; i < 9; i++) pushSample(s, 0, 0, 0, 2, b[0], b[1], b[2]);
    pushSample(s, 0, 0, 0, 9, b[0], b[1], b[2]); // mean |dev| = 0.7, scale 0.877, limit 3.07 < 7
    for (let i = 0; i < 10; i++) pushSample(s, 0, 0, 1, 3, beams[1][0], beams[1][1], beams[1][2]);
    const out = retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings());
    expect(Array.from(out.outliers)).toEqual([1, 0, 0]);
  });

  it('groups below robust.minSamples are not filtered', () => {
    const s = createWindowSamples();
    const b = beams[0];
    for (const v of [1, 1.1, 0.9, 50]) pushSample(s, 0, 0, 0, v, b[0], b[1], b[2]);
    expect(Array.from(retrieveWindow(s, [ONE_CELL], WINDOW, 270, settings()).outliers)).toEqual([0, 0, 0]);
  });
});

describe('calibration: heading offset', () => {
  // A cross plane 300 m downstream of a tower at the site origin, wind from 250 deg; instruments on the ground.
  const D = 250;
  const frame = rotorFrame(D, [0, 0, 0]);
  const grid: GridSpec = { ny: 4, nz: 3, y0: -60, z0: 60, dy: 40, dz: 40 };
  const pg = plane(0, grid);
  const instR: Vec3[] = [[0, -350, 0], [0, 350, 0], [650, 0, 0]]; // rotor frame
  const instSite = instR.map((q) => fromRotor(frame, q));
  const [ue, vn] = windComponents(8, D);
  const Usite: Vec3 = [ue, vn, 0.4];
  const Urot = dirToRotor(frame, Usite); // (8, 0, 0.4)

  /** Samples from instruments with true calibrations `cal`, reported angles as the instruments would log them. */
  function simulate(cal: Calibration[], assumed: Calibration[] | null): WindowSamples {
    const g = rng(21);
    const s = createWindowSamples();
    for (let c = 0; c < grid.ny * grid.nz; c++) {
      const [y, z] = cellCentre(grid, c);
      for (let i = 0; i < 3; i++) {
        const Rtrue = calibrationMatrix(cal[i]);
        const Rassumed = calibrationMatrix(assumed ? assumed[i] : { heading_deg: 0, pitch_deg: 0, roll_deg: 0 });
        for (let k = 0; k < 5; k++) {
          // Points spread over the cell (+/- 15 m), so the beam directions in a cell differ.
          const target = fromRotor(frame, [300, y + 30 * (g.u() - 0.5), z + 30 * (g.u() - 0.5)]);
          const rep = steerTo(instSite[i], cal[i], target);
          const nTrue = calibratedUnitVector(Rtrue, rep.azimuth_deg, rep.elevation_deg);
          const vr = nTrue[0] * Usite[0] + nTrue[1] * Usite[1] + nTrue[2] * Usite[2];
          const n = dirToRotor(frame, calibratedUnitVector(Rassumed, rep.azimuth_deg, rep.elevation_deg));
          pushSample(s, 0, c, i, vr, n[0], n[1], n[2]);
        }
      }
    }
    return s;
  }
  const loose = settings({ maxAmplification: 1e6, robust: { enabled: false, k: 3.5, minSamples: 5 } });

  it('samples with heading, pitch, roll and range offsets retrieved with the matching calibration recover U (QUANT)', () => {
    const cal: Calibration[] = [
      { heading_deg: 4, pitch_deg: 0.5, roll_deg: -0.3, rangeOffset_m: 3 },
      { heading_deg: -2.5, pitch_deg: -0.8, roll_deg: 0.6, rangeOffset_m: -1.5 },
      { heading_deg: 7, pitch_deg: 0.2, roll_deg: 1.1, rangeOffset_m: 0 },
    ];
    const f = retrieveWindow(simulate(cal, cal), [pg], WINDOW, D, loose).fields[0];
    // Noise-free and exact model (mean(v_r) = mean(n) . U): only rounding, amplified by cond (< 100 here).
    for (let c = 0; c < 12; c++) {
      expect(Math.abs(f.u[c] - Urot[0])).toBeLessThan(QUANT);
      expect(Math.abs(f.v[c] - Urot[1])).toBeLessThan(QUANT);
      expect(Math.abs(f.w[c] - Urot[2])).toBeLessThan(QUANT);
    }
  });

  it('with the calibration omitted, a common heading error h rotates the retrieved horizontal wind by h', () => {
    // Geometry: every assumed beam is its true beam turned by -h in azimuth (anticlockwise seen from above), and
    // n' . U' = n . U has the unique solution U' = U turned the same way. So u' = S cos h, v' = S sin h, w' = w,
    // and the vector error is 2 S sin(h/2): 0.558 m/s for S = 8 m/s, h = 4 deg.
    const h = 4;
    const cal: Calibration[] = [0, 1, 2].map(() => ({ heading_deg: h, pitch_deg: 0, roll_deg: 0, rangeOffset_m: 0 }));
    const f: FieldResult = retrieveWindow(simulate(cal, null), [pg], WINDOW, D, loose).fields[0];
    const hr = (h * Math.PI) / 180;
    for (let c = 0; c < 12; c++) {
      expect(Math.abs(f.u[c] - 8 * Math.cos(hr))).toBeLessThan(QUANT);
      expect(Math.abs(f.v[c] - 8 * Math.sin(hr))).toBeLessThan(QUANT);
      expect(Math.abs(f.w[c] - 0.4)).toBeLessThan(QUANT);
      const err = Math.hypot(f.u[c] - Urot[0], f.v[c] - Urot[1], f.w[c] - Urot[2]);
      expect(Math.abs(err - 2 * 8 * Math.sin(hr / 2))).toBeLessThan(2 * QUANT);
    }
  });
});
