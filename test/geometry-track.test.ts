/**
 * Single-instrument wake tracking (src/track): the 1D Gaussian fit against scipy, the line-of-sight deficit under
 * the assumed direction, and the bias a wrong direction causes.
 * Outside sources: test/reference/geometry_single.py part 6 (scipy.optimize.curve_fit; output quoted); the bias
 * formula S_app = S (cos delta + tan beta sin delta) derived in the test from v_r = n . U (REFERENCES.md section 1).
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { fitGaussian1D, fitGaussian1DOffset } from '../src/wake/gaussian1d.ts';
import { solveTrack } from '../src/track/solve.ts';
import { trackerLayouts } from '../src/track/target.ts';
import { putKey, statsOf } from './helpers/geometryStats.ts';

describe('1D Gaussian fit', () => {
  it('matches scipy.optimize.curve_fit on a noisy profile (geometry_single.out part 6)', () => {
    // geometry_single.out: gauss1d params [0.467322 9.946222 36.95057]; gauss1d stderr [0.006151 0.561567 0.561567].
    const c = Array.from({ length: 21 }, (_, k) => -150 + 15 * k);
    const d = c.map((x, k) => 0.45 * Math.exp(-((x - 12) ** 2) / (2 * 38 ** 2)) + 0.02 * Math.sin(12.9898 * k + 4.1414));
    const f = fitGaussian1D(c, d, [0.4, 0, 30]);
    // 1e-5 relative: the printed digits of the reference.
    expect(f.amplitude).toBeCloseTo(0.467322, 5);
    expect(f.centre).toBeCloseTo(9.946222, 4);
    expect(f.width).toBeCloseTo(36.95057, 3);
    expect(f.stderr[1]).toBeCloseTo(0.561567, 4);
    expect(f.stderr[2]).toBeCloseTo(0.561567, 4);
    expect(f.converged).toBe(true);
  });
});

describe('1D Gaussian fit on a baseline', () => {
  it('recovers centre and width exactly when the free stream is off by a share e (analytic)', () => {
    // True deficit d = 0.3 exp(-(c - 20)^2 / (2 * 55^2)) across +/-150 m; a free stream taken 4 % low (e = 0.04)
    // reads d' = 1 - (1 - d) / (1 - e) = (d - e) / (1 - e): the same Gaussian scaled by 1 / (1 - e) on a baseline
    // -e / (1 - e). Noise-free, so the four-parameter fit must return it to the solver's tolerance (1e-6 relative);
    // the three-parameter fit cannot (its width comes out narrow, the held-back tracker case's defect).
    const c = Array.from({ length: 21 }, (_, k) => -150 + 15 * k);
    const e = 0.04;
    const d = c.map((x) => (0.3 * Math.exp(-((x - 20) ** 2) / (2 * 55 ** 2)) - e) / (1 - e));
    const f = fitGaussian1DOffset(c, d, [0.25, 0, 40, 0]);
    expect(f.converged).toBe(true);
    expect(f.centre).toBeCloseTo(20, 5);
    expect(f.width).toBeCloseTo(55, 4);
    expect(f.amplitude).toBeCloseTo(0.3 / (1 - e), 6);
    expect(f.offset).toBeCloseTo(-e / (1 - e), 6);
    expect(fitGaussian1D(c, d).width).toBeLessThan(50);
  });
});

/** A ground tracker at the origin looking along +x (wind from 270: downstream = east), horizontal sector. */
function tracker(delta = 3) {
  const c = resolveCampaign({
    name: 't', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100 },
    instruments: [{ id: 'tr', role: 'tracker', position_m: [-50, -400, 100], track: { sector: 'horizontal', x_m: { min: 400, max: 400, step: 100 }, across_m: { min: -150, max: 150, step: 10 }, scan_s: 600, directionUncertainty_deg: delta } }],
    windDirection: { kind: 'fixed', deg: 270 },
  }, '<memory>');
  return trackerLayouts(c.instruments, 600)[0];
}

/** Stats for a wind of speed S from direction dir with a Gaussian deficit (A, yc, sy) at x = 400. */
function wakeStats(S: number, dir: number, A: number, yc: number, sy: number) {
  const l = tracker();
  const st = statsOf(l.across.length, 1);
  const D = (dir * Math.PI) / 180;
  l.across.forEach((y, ia) => {
    // Point (x = 400 east, y north: rotor frame y = north for wind from 270); beam from (-50, -400).
    const dx = 400 + 50, dy = y + 400;
    const r = Math.hypot(dx, dy);
    const n: [number, number, number] = [dx / r, dy / r, 0];
    const s = S * (1 - A * Math.exp(-((y - yc) ** 2) / (2 * sy * sy)));
    const U = [-s * Math.sin(D), -s * Math.cos(D)];
    putKey(st, ia, 20, n[0] * U[0] + n[1] * U[1], 0.3, n, y, 100);
  });
  return { l, st };
}

describe('line-of-sight deficit and wake centre', () => {
  it('recovers centre, width and amplitude when the wind blows along the assumed direction', () => {
    const { l, st } = wakeStats(8, 270, 0.4, 12, 35);
    const pts = solveTrack(st, l, { window: { index: 0, start_s: 0, end_s: 600 }, direction_deg: 270, rotorDiameter_m: 100, freeStreamAt: () => 8, freeStreamSource: 'test' });
    const p = pts.find((q) => q.scan === -1)!;
    expect(p.flag).toBe('ok');
    // Noise-free and the same shape: exact to the fit's tolerance (1e-6 m).
    expect(p.centre_m).toBeCloseTo(12, 6);
    expect(p.width_m).toBeCloseTo(35, 6);
    expect(p.amplitude).toBeCloseTo(0.4, 8);
    // The bias for +/- 3 degrees is estimated and non-zero: the beams cross the sector at different angles.
    expect(p.directionBiasCentre_m).toBeGreaterThan(0);
  });

  it('a wrong direction assumption biases the apparent speed by cos(delta) + tan(beta) sin(delta)', () => {
    // Derivation: v_r = n . U; with the wind from D + delta and a beam at angle beta from the assumed downstream
    // direction d, n . U = S cos(beta - delta) while the assumed projection is n . d = cos(beta), so
    // S_app = S cos(beta - delta) / cos(beta) = S (cos delta + tan beta sin delta).
    const delta = 4;
    const { l, st } = wakeStats(8, 270 + delta, 0, 0, 35);
    const pts = solveTrack(st, l, { window: { index: 0, start_s: 0, end_s: 600 }, direction_deg: 270, rotorDiameter_m: 100, freeStreamAt: () => 8, freeStreamSource: 'test' });
    const p = pts.find((q) => q.scan === -1)!;
    p.profile.c_m.forEach((y, i) => {
      const dx = 450, dy = y + 400;
      // Beam angle from d = east, positive toward north (counterclockwise); a wind from 274 blows toward 94, i.e.
      // turned clockwise by delta from east, so in this counterclockwise angle the flow is at -delta.
      const beta = Math.atan2(dy, dx), dl = (-delta * Math.PI) / 180;
      const expected = 1 - (Math.cos(dl) + Math.tan(beta) * Math.sin(dl));
      // 1e-9: exact algebra on exact sums.
      expect(p.profile.deficit[i]).toBeCloseTo(expected, 9);
    });
  });

  it('flags a sector without enough bins instead of reporting a centre', () => {
    const l = tracker();
    const st = statsOf(l.across.length, 1);
    putKey(st, 3, 20, 5, 0.3, [1, 0, 0], -120, 100);
    const [p] = solveTrack(st, l, { window: { index: 0, start_s: 0, end_s: 600 }, direction_deg: 270, rotorDiameter_m: 100 });
    expect(p.flag).toBe('too_few_bins');
    expect(Number.isNaN(p.centre_m)).toBe(true);
  });
});

describe('vertical sector', () => {
  it('tracks the wake centre in height with the same line-of-sight rule', () => {
    // A ground scanner 400 m upstream of x = 400 (wind from 270, looking east), sweeping in elevation: bins across
    // height z from 40 to 160 m. Deficit Gaussian in z centred at 95 m, width 30 m, amplitude 0.35; no noise.
    const c = resolveCampaign({
      name: 't', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100 },
      instruments: [{ id: 'tr', role: 'tracker', position_m: [0, 0, 0], track: { sector: 'vertical', x_m: { min: 400, max: 400, step: 100 }, across_m: { min: 40, max: 160, step: 5 }, scan_s: 600, directionUncertainty_deg: 2 } }],
      windDirection: { kind: 'fixed', deg: 270 },
    }, '<memory>');
    const l = trackerLayouts(c.instruments, 600)[0];
    const st = statsOf(l.across.length, 1);
    l.across.forEach((z, ia) => {
      const r = Math.hypot(400, z);
      const n: [number, number, number] = [400 / r, 0, z / r];
      const s = 8 * (1 - 0.35 * Math.exp(-((z - 95) ** 2) / (2 * 30 * 30)));
      putKey(st, ia, 20, n[0] * s, 0.3, n, z, z);
    });
    const [p] = solveTrack(st, l, { window: { index: 0, start_s: 0, end_s: 600 }, direction_deg: 270, rotorDiameter_m: 100, freeStreamAt: () => 8 });
    expect(p.axis).toBe('z');
    expect(p.flag).toBe('ok');
    // Noise-free, horizontal flow along the assumed direction: the projection n . d = cos(elevation) is exact, so
    // centre and width come back to the fit tolerance (1e-6 m).
    expect(p.centre_m).toBeCloseTo(95, 6);
    expect(p.width_m).toBeCloseTo(30, 6);
    // Beams in the vertical plane containing the flow: a horizontal direction error changes every bin by the same
    // factor cos(delta) (tan(beta) = 0 in azimuth): the deficit gains the constant 1 - cos(2 deg) = 6e-4 in every
    // bin, which moves a fit without offset by millimetres only (bound 1 cm), against metres in a horizontal sector.
    expect(p.directionBiasCentre_m).toBeLessThan(0.01);
  });
});
