import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyseWake } from '../src/wake/analyse.ts';
import { writeWakeOutputs } from '../src/wake/output.ts';
import type { Series } from '../src/io/series.ts';
import { D, H, syntheticCampaign, syntheticField } from './wake-synthetic.ts';

// Round trips through analytic fields we construct (not outside checks): a Gaussian deficit
// d = A exp(-(y-yc)^2/(2 sy^2) - (z-zc)^2/(2 sz^2)) in a power-law shear u_inf = 8 (z/100)^0.2.

describe('wake centre and shape from a synthetic field', () => {
  it('fixed exact inflow, no noise: returns the true wake to rounding', () => {
    const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } });
    const a = analyseWake([syntheticField({})], c, {});
    const r = a.rows[0];
    expect(r.flag).toBe('ok');
    const p = r.gaussian!.params;
    // Exact model and exact inflow: LM converges to the truth (1e-6 covers the SSR ~ 0 stopping rule).
    expect(p.amplitude).toBeCloseTo(0.3, 6);
    expect(p.yc_m).toBeCloseTo(25, 6);
    expect(p.zc_m).toBeCloseTo(100, 6);
    expect(p.sigmaY_m).toBeCloseTo(50, 6);
    expect(p.sigmaZ_m).toBeCloseTo(40, 6);
    expect(Math.abs(p.offset)).toBeLessThan(1e-8);
    expect(r.inflow.hubSpeed_ms).toBeCloseTo(8, 12);
    // Hub deficit at (0, 100): 0.3 exp(-25^2/(2*50^2)) = 0.264749 (hand computed), bilinear on exact cell values at
    // y = 0 (a cell centre), z = 100 (a cell centre): exact to 1e-9.
    expect(r.hubDeficit).toBeCloseTo(0.3 * Math.exp(-625 / 5000), 9);
    // Centre (25, 100) lies midway between cells y = 20 and 30 at z = 100, both 0.3 exp(-5^2/(2 * 50^2)): exact.
    expect(r.centreDeficit).toBeCloseTo(0.3 * Math.exp(-25 / 5000), 9);
    // Disk estimator on u/u_inf: the disk-averaged (1 - d)^3 is smallest on the wake's centre by symmetry; the
    // search runs on cell centres with a parabola refinement: within half a cell (5 m) of the true centre.
    expect(Math.hypot(r.diskCentre.y_m - 25, r.diskCentre.z_m - 100)).toBeLessThan(5);
    expect(r.diskCentre.ok).toBe(true);
    expect(Math.abs(r.centroid.y_m - 25)).toBeLessThan(0.5); // symmetric in y on a grid symmetric about 25 +- 5 m
  });

  it('plane inflow with noise: shear, centre and widths recovered', () => {
    const a = analyseWake([syntheticField({ noise: 0.05 })], syntheticCampaign(), {});
    const r = a.rows[0];
    expect(r.flag).toBe('ok');
    expect(r.inflow.source).toBe('plane');
    // Inflow from the undisturbed cells: alpha within 0.01 of 0.2 and hub speed within 0.02 m/s of 8 (noise
    // 0.05 m/s averaged over ~30 cells per row; wake excluded by the second pass).
    expect(Math.abs(r.inflow.alpha - 0.2)).toBeLessThan(0.01);
    expect(Math.abs(r.inflow.hubSpeed_ms - 8)).toBeLessThan(0.02);
    const p = r.gaussian!.params, e = r.gaussian!.stderr;
    // Noise 0.05/8 = 0.006 in deficit over ~1500 cells: centre to 1 m, widths to 2 %, amplitude to 0.01; and the
    // errors agree with the stated standard errors within 4 sigma.
    expect(Math.abs(p.yc_m - 25)).toBeLessThan(Math.max(1, 4 * e.yc_m));
    expect(Math.abs(p.zc_m - 100)).toBeLessThan(Math.max(1, 4 * e.zc_m));
    expect(Math.abs(p.sigmaY_m / 50 - 1)).toBeLessThan(0.02);
    expect(Math.abs(p.sigmaZ_m / 40 - 1)).toBeLessThan(0.02);
    expect(Math.abs(p.amplitude - 0.3)).toBeLessThan(0.01);
    expect(r.gaussian!.r2).toBeGreaterThan(0.95);
    expect(Number.isFinite(r.disagreement_D)).toBe(true);
    expect(r.rews.axis_ms).toBeLessThan(8); // the wake lowers the axis REWS below the free-stream 7.97 m/s
    expect(r.rews.centre_ms).toBeLessThan(r.rews.axis_ms); // the disk on the wake centre holds less power
  });

  it('momentum ratio of a Gaussian-model wake is ~1 (Bastankhah & Porte-Agel 2014 momentum balance)', () => {
    // Wake built from the model itself at x/D = 6 (k* = 0.022, Ct = 0.8) in uniform 8 m/s: the integral over the
    // plane's cells equals (pi/8) Ct D^2 U^2; the plane (+-300 m, 0-400 m, centre at 200 m) holds the wake to
    // > 4 sigma (sigma = 46 m), so the truncated tail is < 1e-4 of the integral: ratio 1 within 1e-3 (the 10 m
    // grid's midpoint-rule error on a Gaussian is far smaller).
    const s = (0.022 * 6 + 0.2 * Math.sqrt((0.5 * (1 + Math.sqrt(0.2))) / Math.sqrt(0.2))) * D;
    const C = 1 - Math.sqrt(1 - 0.8 / (8 * (s / D) ** 2));
    const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0, z0_m: 0.03 } });
    const r = analyseWake([syntheticField({ grid: { ny: 61, nz: 40, y0: -300, z0: 5, dy: 10, dz: 10 }, wake: { A: C, yc: 0, zc: 200, sy: s, sz: s }, inflow: () => 8 })], c, {}).rows[0];
    expect(Math.abs(r.momentumRatio - 1)).toBeLessThan(1e-3);
  });
});

describe('flags instead of silent numbers', () => {
  it('no wake', () => {
    const r = analyseWake([syntheticField({ wake: null, noise: 0.05 })], syntheticCampaign(), {}).rows[0];
    expect(r.flag).toBe('no_wake');
    expect(r.reason).toMatch(/deficit/);
    expect(r.centre.ok).toBe(false);
    expect(r.centre.y_m).toBeNaN();
    expect(r.diskCentre.ok).toBe(false); // a noise minimum is not called a wake centre
    expect(r.centroid.ok).toBe(false);
  });

  it('wake leaving the plane', () => {
    const r = analyseWake([syntheticField({ wake: { A: 0.3, yc: 320, zc: 100, sy: 50, sz: 40 }, noise: 0.02 })],
      syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } }), {}).rows[0];
    expect(r.flag).toBe('off_edge');
    expect(r.centre.ok).toBe(false);
  });

  it('too few valid cells', () => {
    const r = analyseWake([syntheticField({ mask: (iy, iz) => !(iy > 25 && iy < 32 && iz > 7 && iz < 12) })], syntheticCampaign(), {}).rows[0];
    // 6 x 4 = 24 valid cells < 30.
    expect(r.validCells).toBe(24);
    expect(r.flag).toBe('too_few_cells'); // tested before the inflow: the more telling reason
    const f = analyseWake([syntheticField({ mask: (iy, iz) => !(iy > 25 && iy < 32 && iz > 7 && iz < 12) })],
      syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } }), {}).rows[0];
    expect(f.flag).toBe('too_few_cells');
    expect(f.reason).toMatch(/24 valid cells/);
  });

  it('inflow series requested but not loaded', () => {
    const r = analyseWake([syntheticField({})], syntheticCampaign({ inflow: { kind: 'series', file: 'x.csv', columns: {} } }), {}).rows[0];
    expect(r.flag).toBe('no_inflow');
    expect(r.deficit.every((v) => Number.isNaN(v))).toBe(true);
  });
});

describe('inflow from a reference series', () => {
  it('averages per window and height, fits the power law (exact data)', () => {
    const t0 = 1_800_000_000;
    const heights = [40, 80, 120, 160];
    const time: number[] = [], h: number[] = [], s: number[] = [], d: number[] = [];
    for (let k = 0; k < 60; k++) for (const z of heights) {
      time.push(t0 + 10 * k); h.push(z);
      // +-0.3 m/s alternating: averages out exactly over an even number of rows per height.
      s.push(8 * Math.pow(z / 100, 0.14) + (k % 2 ? 0.3 : -0.3)); d.push(k % 2 ? 265 : 275);
    }
    time.push(t0 + 700); h.push(40); s.push(50); d.push(0); // outside the window: ignored
    const series: Series = { file: 'ref.csv', time: Float64Array.from(time), values: { height_m: Float64Array.from(h), speed_ms: Float64Array.from(s), direction_deg: Float64Array.from(d) } };
    const f = syntheticField({ inflow: (z) => 8 * Math.pow(z / 100, 0.14) });
    const r = analyseWake([f], syntheticCampaign({ inflow: { kind: 'series', file: 'ref.csv', columns: {} } }), { inflowSeries: series }).rows[0];
    expect(r.inflow.source).toBe('series');
    expect(r.inflow.alpha).toBeCloseTo(0.14, 10); // exact data after averaging
    expect(r.inflow.direction_deg).toBeCloseTo(270, 10); // vector mean of 265 and 275
    expect(r.inflow.counts).toEqual([60, 60, 60, 60]);
    expect(r.gaussian!.params.yc_m).toBeCloseTo(25, 6);
  });
});

describe('wake steering bins (synthetic set)', () => {
  // Windows with yaw offsets gamma and a wake centre placed at yc = 2 gamma + (window-dependent spread).
  const gammas = [-12, -9, -1, 1, 2, 8, 11, 13];
  const ycs = [-26, -16, -4, 3, 4, 15, 24, 27];
  const t0 = 1_800_000_000;
  const fields = gammas.map((_, k) => syntheticField({ window: k, wake: { A: 0.3, yc: ycs[k], zc: 100, sy: 50, sz: 40 } }));
  const time: number[] = [], yaw: number[] = [];
  gammas.forEach((g, k) => { for (let j = 0; j < 10; j++) { time.push(t0 + 600 * k + 60 * j); yaw.push((270 + g + 360) % 360); } });
  const turbine: Series = { file: 't.csv', time: Float64Array.from(time), values: { yaw_deg: Float64Array.from(yaw) } };
  const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } });
  const a = analyseWake(fields, c, { turbineSeries: turbine });

  it('yaw offsets per window from nacelle - wind direction (field direction 270)', () => {
    a.rows.forEach((r, k) => expect(r.yawOffset_deg).toBeCloseTo(gammas[k], 9));
  });

  it('bins of 5 degrees: counts, means and Student-t intervals (hand computed)', () => {
    const bins = a.steering.bins;
    expect(bins.map((b) => b.gammaCentre_deg)).toEqual([-10, 0, 10, 15]);
    expect(bins.map((b) => b.n)).toEqual([2, 3, 2, 1]);
    const b0 = bins[1];
    // yc -4, 3, 4: mean 1, sd sqrt(((-5)^2 + 2^2 + 3^2)/2) = sqrt(19); ci = t(0.975, 2) sqrt(19)/sqrt(3) with
    // t = 4.302652729749 (scipy.stats.t.ppf, test/reference/wake_stats.out). Centres recovered to 1e-5 m.
    expect(b0.yc_m).toBeCloseTo(1, 5);
    expect(b0.sd_m).toBeCloseTo(Math.sqrt(19), 5);
    expect(b0.ci95_m).toBeCloseTo((4.302652729749 * Math.sqrt(19)) / Math.sqrt(3), 4);
    expect(b0.gammaMean_deg).toBeCloseTo(2 / 3, 9);
    expect(bins[3].ci95_m).toBeNaN(); // single window: no interval
    // Deflection relative to the gamma = 0 bin (mean 1 m): bin -10 has yc mean (-26 - 16)/2 = -21 -> -22.
    expect(bins[0].deflection_m).toBeCloseTo(-22, 5);
    expect(bins[1].deflection_m).toBe(0);
    // Model curves carry the sign convention: positive gamma -> positive y.
    expect(bins[2].jimenez_m).toBeGreaterThan(0);
    expect(bins[0].bastankhah_m).toBeLessThan(0);
  });

  it('series wind direction overrides the field direction', () => {
    const wd = Float64Array.from(time.map(() => 275));
    const b = analyseWake(fields.slice(0, 1), c, { turbineSeries: { ...turbine, values: { ...turbine.values, wind_direction_deg: wd } } });
    expect(b.rows[0].yawOffset_deg).toBeCloseTo(-12 - 5, 9);
  });
});

describe('downstream fit of the Gaussian model against scipy.stats.linregress (test/reference/wake_stats.py)', () => {
  // Planes at x/D = 3, 5, 7, 10 with sigma/D = 0.331, 0.352, 0.418, 0.471 (sy = sz), exact fields and inflow.
  const xs = [3, 5, 7, 10], sig = [0.331, 0.352, 0.418, 0.471];
  const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } });
  const grid = { ny: 81, nz: 31, y0: -400, z0: 0, dy: 10, dz: 10 };
  const fields = xs.map((x, i) => syntheticField({ grid, x_m: x * D, planeIndex: i, wake: { A: 0.3, yc: 0, zc: 110, sy: sig[i] * D, sz: sig[i] * D } }));
  const a = analyseWake(fields, c, {});

  it('k*, eps, standard errors and 95 % intervals', () => {
    const g = a.downstream.gaussianFit;
    // scipy: slope 0.0210841121 se 0.0025304159 ci [0.0101966113, 0.0319716130]
    //        intercept 0.2612242991 se 0.0171154159 ci [0.1875826081, 0.3348659901]
    // Widths come from exact Gaussian fits (1e-7 relative), so the line matches to 1e-7.
    expect(a.rows.every((r) => r.flag === 'ok')).toBe(true);
    expect(g.kStar).toBeCloseTo(0.0210841121, 7);
    expect(g.kStarSE).toBeCloseTo(0.0025304159, 7);
    expect(g.eps).toBeCloseTo(0.2612242991, 6);
    expect(g.epsSE).toBeCloseTo(0.0171154159, 6);
    expect(g.kStarCI95[0]).toBeCloseTo(0.0101966113, 6);
    expect(g.kStarCI95[1]).toBeCloseTo(0.031971613, 6);
    expect(g.epsCI95[0]).toBeCloseTo(0.1875826081, 6);
    expect(g.epsCI95[1]).toBeCloseTo(0.3348659901, 6);
    expect(g.dof).toBe(2);
    expect(g.note).toMatch(/only 4 planes/);
    // eps of the 2014 paper for Ct = 0.8: 0.2 sqrt(beta) = 0.254404 (REFERENCES.md s.4, [numpy] sigma/d0 - 3 k*).
    expect(g.epsTheory).toBeCloseTo(0.320404 - 3 * 0.022, 6);
  });

  it('few planes are said to be few', () => {
    const two = analyseWake(fields.slice(0, 2), c, {}).downstream.gaussianFit;
    expect(two.note).toMatch(/2 planes/);
    expect(two.kStarCI95[0]).toBeNaN();
    // Exact line through (3, 0.331) and (5, 0.352): slope 0.0105 (hand computed).
    expect(two.kStar).toBeCloseTo(0.0105, 7);
    const one = analyseWake(fields.slice(0, 1), c, {}).downstream.gaussianFit;
    expect(one.note).toMatch(/1 plane/);
  });

  it('writes the output files with documented columns', () => {
    const dir = mkdtempSync(join(tmpdir(), 'wake-'));
    try {
      const recs = writeWakeOutputs(a, dir);
      expect(recs.map((r) => r.kind)).toEqual(['wake-table', 'steering', 'downstream', 'profiles', 'model-fit']);
      const table = readFileSync(join(dir, 'wake/wake_table.csv'), 'utf8').trim().split('\n');
      expect(table.length).toBe(1 + 4);
      const head = table[0].split(',');
      for (const col of ['plane', 'x_D', 'yaw_offset_deg', 'inflow_source', 'yc_m', 'yc_se_m', 'disk_y_m', 'rews_axis_ms', 'momentum_ratio', 'flag', 'reason']) expect(head).toContain(col);
      expect(table[1].split(',').length).toBe(head.length);
      const fits = JSON.parse(readFileSync(join(dir, 'wake/model_fits.json'), 'utf8'));
      expect(fits.gaussian.kStar).toBeCloseTo(0.0210841121, 7);
      const down = readFileSync(join(dir, 'wake/downstream.csv'), 'utf8').trim().split('\n');
      expect(down.length).toBe(5);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('more flags and sources', () => {
  const fixed = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } });

  it('absurd width: a 500 m wide "wake" over a 600 m plane', () => {
    // sigma_y = 500 m > maxWidth_D * D = 360 m.
    const r = analyseWake([syntheticField({ wake: { A: 0.2, yc: 0, zc: 100, sy: 500, sz: 40 } })], fixed, {}).rows[0];
    expect(r.flag).toBe('absurd_width');
    expect(r.reason).toMatch(/widths/);
  });

  it('log-law plane inflow recovers u* and z0 (exact log profile, wake excluded)', () => {
    // u = (0.5/0.4) ln(z/0.05); the second pass excludes the wake ellipse, so the fit sees the exact law.
    const law = (z: number) => (0.5 / 0.4) * Math.log(z / 0.05);
    const r = analyseWake([syntheticField({ inflow: law })], syntheticCampaign({ inflow: { kind: 'plane', law: 'log' } }), {}).rows[0];
    expect(r.inflow.law).toBe('log');
    // The 3-sigma ellipse leaves deficits <= 0.3 e^-4.5 = 0.0033 at its rim, and the row medians sit far from it:
    // u* and z0 within 0.5 % and 2 %.
    expect(Math.abs(r.inflow.uStar_ms / 0.5 - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.inflow.z0_m / 0.05 - 1)).toBeLessThan(0.02);
    expect(Math.abs(r.gaussian!.params.yc_m - 25)).toBeLessThan(0.5);
  });

  it('horizontal plane: lateral track per downstream row', () => {
    // Horizontal plane at hub height, second axis x = 125..1195 m; wake centre y = 0.03 x, width 40 + 0.05 x.
    const f = syntheticField({ wake: null, grid: { ny: 61, nz: 108, y0: -300, z0: 125, dy: 10, dz: 10 }, inflow: () => 8 });
    const g = f.grid;
    for (let ix = 0; ix < g.nz; ix++) for (let iy = 0; iy < g.ny; iy++) {
      const x = g.z0 + ix * g.dz, y = g.y0 + iy * g.dy;
      f.u[iy + ix * g.ny] = 8 * (1 - 0.25 * Math.exp(-((y - 0.03 * x) ** 2) / (2 * (40 + 0.05 * x) ** 2)));
    }
    const h = { ...f, orientation: 'horizontal' as const, x_m: NaN, z_m: 100 };
    const r = analyseWake([h], fixed, {}).rows[0];
    expect(r.flag).toBe('horizontal_plane');
    const t = r.horizontalTrack!;
    // Exact 1D Gaussians with the exact inflow: each row's centre and width to 1e-4 m.
    for (const k of [0, 40, 107]) {
      expect(t.yc_m[k]).toBeCloseTo(0.03 * t.x_m[k], 4);
      expect(t.sigmaY_m[k]).toBeCloseTo(40 + 0.05 * t.x_m[k], 4);
    }
  });

  it('empty input gives empty results with notes, not a crash', () => {
    const a = analyseWake([], fixed, {});
    expect(a.rows).toEqual([]);
    expect(a.downstream.gaussianFit.ok).toBe(false);
    expect(a.steering.note).toMatch(/no/);
  });
});

describe('robustness', () => {
  it('masked corners and ground rows do not bias the fit (plane inflow, noise)', () => {
    // Mask z < 30 m and a corner y > 200 m, z > 180 m, as beam geometry often does.
    const f = syntheticField({ noise: 0.05, mask: (iy, iz) => iz < 2 || (iy > 50 && iz > 16) });
    const r = analyseWake([f], syntheticCampaign(), {}).rows[0];
    expect(r.flag).toBe('ok');
    // Same tolerances as the unmasked case (fewer cells, still > 1000): centre 1 m, widths 2 %.
    expect(Math.abs(r.centre.y_m - 25)).toBeLessThan(1);
    expect(Math.abs(r.centre.z_m - 100)).toBeLessThan(1);
    expect(Math.abs(r.gaussian!.params.sigmaY_m / 50 - 1)).toBeLessThan(0.02);
    expect(Math.abs(r.gaussian!.params.sigmaZ_m / 40 - 1)).toBeLessThan(0.02);
    // Masked cells stay NaN in the deficit.
    expect(r.deficit[0]).toBeNaN();
  });

  it('bad options are refused with the option named', () => {
    expect(() => analyseWake([], syntheticCampaign(), {}, { minCells: 3 })).toThrow(/wake\.minCells.*got 3/);
  });
});

describe('narrow planes', () => {
  it('a plane narrower than the exclusion band falls back to the per-row upper quantile, then the ellipse pass', () => {
    // y = -100..100 m (|y| < 1 D everywhere): the band leaves no cells. Wake sy = 40 m, sz = 35 m at (10, 100).
    const f = syntheticField({ grid: { ny: 11, nz: 25, y0: -100, z0: 10, dy: 20, dz: 10 }, wake: { A: 0.3, yc: 10, zc: 100, sy: 40, sz: 35 }, noise: 0.02 });
    const r = analyseWake([f], syntheticCampaign(), {}).rows[0];
    expect(r.flag).toBe('ok');
    expect(r.inflow.note).toMatch(/sigma/); // the final inflow is the ellipse pass
    // Fewer free cells, coarser grid: centre within 2 m, widths within 5 %, alpha within 0.02.
    expect(Math.abs(r.centre.y_m - 10)).toBeLessThan(2);
    expect(Math.abs(r.centre.z_m - 100)).toBeLessThan(2);
    expect(Math.abs(r.gaussian!.params.sigmaY_m / 40 - 1)).toBeLessThan(0.05);
    expect(Math.abs(r.gaussian!.params.sigmaZ_m / 35 - 1)).toBeLessThan(0.05);
    expect(Math.abs(r.inflow.alpha - 0.2)).toBeLessThan(0.02);
  });
});

describe('weighted fit option', () => {
  it('weights by su/u_inf: a noisy half with large stated uncertainty no longer pulls the fit', () => {
    // Cells with y > 100 m carry a deterministic +0.6 m/s bias and su = 3 m/s (vs 0.1 m/s elsewhere). Unweighted,
    // the bias (deficit -0.075) drags the fitted offset/width; weighted by 1/su it is down-weighted 900-fold in
    // the sum of squares, so the centre comes back within 0.5 m (noise-free elsewhere).
    const f = syntheticField({});
    const g = f.grid;
    for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
      if (g.y0 + iy * g.dy > 100) { f.u[iy + iz * g.ny] += 0.6 * Math.sin(iy * 1.3 + iz * 0.7); f.su[iy + iz * g.ny] = 3; }
    }
    const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0.2, z0_m: 0.03 } });
    const w = analyseWake([f], c, {}, { weightedFit: true }).rows[0];
    const u = analyseWake([f], c, {}).rows[0];
    expect(Math.abs(w.centre.y_m - 25)).toBeLessThan(0.5);
    expect(Math.abs(w.gaussian!.params.sigmaY_m - 50)).toBeLessThan(0.5);
    // The weighted fit states smaller standard errors for the same field than the unweighted one, whose residual
    // scatter is inflated by the noisy half.
    expect(w.gaussian!.stderr.yc_m).toBeLessThan(u.gaussian!.stderr.yc_m);
  });
});
