/**
 * The budget's position term (first-order bias of reporting at the cell centre while each instrument's samples sit
 * elsewhere in the cell) and direction term (uncertainty of the wind direction that defines the rotor frame), and
 * the type A uncertainty of a window's mean direction.
 *
 * Outside checks: (1) for a field linear in position the first-order Taylor expansion is exact (Taylor's theorem:
 * the remainder holds the second derivatives, here zero), so the position term must equal |WLS solution - field at
 * the centre| with the WLS solved by numpy's least squares (numpy.linalg.lstsq) from the radial velocities each
 * instrument sees at its own mean sample position; (2) the direction term is the derivative of an exact rotation of
 * the frame (cos, sin; no small-angle formula) taken by a central difference; (3) the mean direction's standard
 * uncertainty against scipy.stats.circmean and numpy (GUM, JCGM 100:2008, 4.2.3: s / sqrt(n)).
 */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { cellBudget, NT, sensitivity, type BudgetSettings, type CellRows } from '../src/retrieval/budget.ts';
import { emptyCellStats } from '../src/retrieval/cellStats.ts';
import { directionUncertaintyForWindow, meanDirectionUncertainty } from '../src/windows/direction.ts';
import type { Campaign } from '../src/campaign/types.ts';
import type { Series } from '../src/io/series.ts';
import { debianPython } from './helpers/python.ts';
import { cellOf, unit } from './helpers/budgetCell.ts';

const DEG = Math.PI / 180;

function settings(I: number): BudgetSettings {
  return {
    enabled: true, pointingAz_deg: new Float64Array(I), pointingEl_deg: new Float64Array(I), position_m: new Float64Array(I),
    probeMoment2: () => 0, maxCombined_ms: Infinity,
  };
}

const py = debianPython(['numpy', 'scipy']);

describe('position term: each instrument at its own mean sample position', () => {
  // A cross plane; the in-plane gradients (1/s) of u, v, w along y and z (the across-plane one is not known).
  const G = [[0.012, -0.004], [0.006, 0.003], [-0.002, 0.005]]; // [component][d/dy, d/dz]
  const U0 = [7.5, 0.4, 0.1]; // at the cell centre, m/s
  const beams = [unit(80, 12), unit(-75, 14), unit(185, 7)];
  const wts = [40, 25, 60];
  const pos = [[6, -2], [-9, 4], [1.5, 7]]; // each instrument's mean sample offset from the centre (y, z), m

  it.skipIf(!py.python)('equals |WLS solution - field at the centre| for a linear field (numpy lstsq) for u, v and w', () => {
    const cell = cellOf(beams, wts);
    const H = new Float64Array(9);
    expect(sensitivity(cell, H)).toBe(true);
    const D = new Float64Array(15);
    for (let k = 0; k < 3; k++) { D[k * 5] = G[k][0]; D[k * 5 + 1] = G[k][1]; }
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 600, U: Float64Array.from(U0), D, py: Float64Array.from(pos, (p) => 40 + p[0]), pz: Float64Array.from(pos, (p) => 90 + p[1]),
      ins: Int32Array.of(0, 1, 2), yc: 40, zc: 90, dirUnc_rad: 0,
    }, settings(3), new Float64Array(3), out);
    const script = `
import json, sys, numpy as np
a = json.loads(sys.argv[1])
n = np.array(a['beams']); w = np.sqrt(np.array(a['wts'])); G = np.array(a['G']); U0 = np.array(a['U0'])
m = [n[i] @ (U0 + G @ np.array(a['pos'][i])) for i in range(3)]
sol = np.linalg.lstsq(n * w[:, None], np.array(m) * w, rcond=None)[0]
print(json.dumps(list(sol - U0)))`;
    const r = spawnSync(py.python!, ['-c', script, JSON.stringify({ beams, wts, G, U0, pos })], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const bias = JSON.parse(r.stdout) as number[];
    for (let k = 0; k < 3; k++) {
      // Linear field: the Taylor expansion is exact, so only rounding separates them (1e-12 m/s).
      expect(Math.sqrt(out[k * NT + 5])).toBeCloseTo(Math.abs(bias[k]), 12);
    }
    // Not the effective-position shortcut: v's bias is not grad v . (the offsets weighted by H_v n_v) alone.
    expect(Math.abs(bias[1])).toBeGreaterThan(1e-3);
  });

  it('reduces to the gradient times the common offset when every instrument samples the same point (hand-worked)', () => {
    const cell = cellOf(beams, wts);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const D = new Float64Array(15);
    for (let k = 0; k < 3; k++) { D[k * 5] = G[k][0]; D[k * 5 + 1] = G[k][1]; }
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 600, U: Float64Array.from(U0), D, py: Float64Array.of(5, 5, 5), pz: Float64Array.of(-3, -3, -3),
      ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3), new Float64Array(3), out);
    // sum_i H_ki n_ij = delta_kj (the solve reproduces a uniform field), so the bias is G_k . (5, -3).
    for (let k = 0; k < 3; k++) expect(Math.sqrt(out[k * NT + 5])).toBeCloseTo(Math.abs(G[k][0] * 5 - G[k][1] * 3), 12); // rounding only
  });
});

describe('direction term: the rotor frame turned by an error of the wind direction', () => {
  it('is the derivative of an exact frame rotation (rotated components at the displaced point), cross and horizontal planes', () => {
    const U0 = [7.8, -0.6, 0.3];
    const G = [[0.015, 0.002], [-0.004, 0.001], [0.003, -0.002]]; // [component][d/dy, d/d(second axis)]
    const cell = cellOf([unit(80, 12), unit(-75, 14), unit(185, 7)], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const D = new Float64Array(15);
    for (let k = 0; k < 3; k++) { D[k * 5] = G[k][0]; D[k * 5 + 1] = G[k][1]; }
    const sig = 0.5 * DEG;
    for (const sa of [2, 0] as const) {
      const yc = 45, second = sa === 2 ? 110 : 380, level = sa === 2 ? 600 : 100;
      const out = new Float64Array(3 * NT);
      cellBudget(cell, H, emptyCellStats(3, 3), {
        c: 0, secondAxis: sa, level_m: level, U: Float64Array.from(U0), D, py: Float64Array.of(yc, yc, yc), pz: Float64Array.of(second, second, second),
        ins: Int32Array.of(0, 1, 2), yc, zc: second, dirUnc_rad: sig,
      }, settings(3), new Float64Array(3), out);
      // The true field, linear about the cell centre (x, y, z); d/dx known only on a horizontal plane (second = x).
      const xc = sa === 2 ? level : second;
      const field = (x: number, y: number) => [0, 1, 2].map((k) => U0[k] + G[k][0] * (y - yc) + (sa === 0 ? G[k][1] * (x - xc) : 0));
      // Direction error delta (clockwise): the estimated frame's axes are the true ones turned by eps = -delta
      // anticlockwise; the cell (xc, yc) of the estimated frame is the point R(eps) (xc, yc) of the true frame, and
      // its reported components are the true vector projected on the turned axes.
      const reported = (delta: number) => {
        const e = -delta, c = Math.cos(e), s = Math.sin(e);
        const x = xc * c - yc * s, y = xc * s + yc * c;
        const V = field(x, y);
        return [V[0] * c + V[1] * s, -V[0] * s + V[1] * c, V[2]];
      };
      const h = 1e-5;
      const p = reported(h), m = reported(-h);
      for (let k = 0; k < 3; k++) {
        const slope = (p[k] - m[k]) / (2 * h); // central difference: error O(h^2) ~ 1e-9 of the slope
        expect(Math.sqrt(out[k * NT + 6])).toBeCloseTo(Math.abs(slope) * sig, 8);
      }
    }
  });
});

describe('standard uncertainty of the window mean direction', () => {
  const values = Float64Array.of(358.2, 359.6, 1.1, 0.4, 357.9, 2.3, 359.0, 0.8);

  it.skipIf(!py.python)('s / sqrt(n) of the deviations from the circular mean, across north, against scipy.stats.circmean and numpy', () => {
    const script = `
import json, sys, numpy as np
from scipy.stats import circmean
v = np.array(json.loads(sys.argv[1]))
m = circmean(v, high=360, low=0)
d = (v - m + 180) % 360 - 180
print(np.std(d, ddof=1) / np.sqrt(len(v)))`;
    const r = spawnSync(py.python!, ['-c', script, JSON.stringify([...values])], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    // Same definition, independent arithmetic (the circular mean through sin/cos sums in another order moves the
    // deviations by ~1e-11 degrees): 1e-9 degrees.
    expect(meanDirectionUncertainty(values, 0, values.length)).toBeCloseTo(Number(r.stdout), 9);
  });

  it('is 0 with fewer than two rows (the direction taken as exact) and skips missing rows', () => {
    expect(meanDirectionUncertainty(values, 0, 1)).toBe(0);
    const gap = Float64Array.of(10, NaN, 12);
    // Two finite rows 10 and 12: deviations -1, +1, s = sqrt(2), s / sqrt(2) = 1 degree (hand-worked).
    expect(meanDirectionUncertainty(gap, 0, 3)).toBeCloseTo(1, 12);
  });
});

describe('direction uncertainty of a window and of an ensemble, with the source\'s own (type B) part', () => {
  // Two windows of 600 s, rows each minute: window 1 alternates 269, 271 (s = 1.0541, n = 10: s / sqrt(n) = 1/3
  // degree, hand-worked: deviations +-1, s^2 = 10 / 9); window 2 alternates 268, 272 (2/3 degree).
  const time = Float64Array.from({ length: 20 }, (_, i) => 30 + 60 * i);
  const dir = Float64Array.from({ length: 20 }, (_, i) => (i < 10 ? 270 + (i % 2 ? 1 : -1) : 270 + (i % 2 ? 2 : -2)));
  const series: Series = { file: 'd.csv', time, values: { direction_deg: dir } };
  const campaign = (b: number, kind: 'series' | 'fixed' = 'series') =>
    ({ windDirection: kind === 'fixed' ? { kind, deg: 270, uncertainty_deg: b } : { kind, file: 'd.csv', columns: {}, uncertainty_deg: b } }) as unknown as Campaign;

  it('hand-worked: one window s / sqrt(n); with 0.5 degree declared, sqrt(u_A^2 + 0.5^2); a fixed direction only the declared part', () => {
    const u1 = Math.sqrt(10 / 9 / 10), u2 = 2 * u1;
    expect(directionUncertaintyForWindow(campaign(0), series, { start_s: 0, end_s: 600 })).toBeCloseTo(u1, 12); // rounding only
    expect(directionUncertaintyForWindow(campaign(0.5), series, { start_s: 0, end_s: 600 })).toBeCloseTo(Math.hypot(u1, 0.5), 12);
    expect(directionUncertaintyForWindow(campaign(0.5, 'fixed'), series, { start_s: 0, end_s: 600 })).toBe(0.5);
    expect(directionUncertaintyForWindow(campaign(0, 'fixed'), series, { start_s: 0, end_s: 600 })).toBe(0);
    // An ensemble of both windows: the mean of two independent frame errors, sqrt(u1^2 + u2^2) / 2, and the declared
    // part unreduced (the same vane in both windows).
    const ens = { start_s: 0, end_s: 1200, members: [[0, 600], [600, 1200]] as [number, number][] };
    expect(directionUncertaintyForWindow(campaign(0), series, ens)).toBeCloseTo(Math.hypot(u1, u2) / 2, 12);
    expect(directionUncertaintyForWindow(campaign(0.5), series, ens)).toBeCloseTo(Math.hypot(Math.hypot(u1, u2) / 2, 0.5), 12);
  });
});
