import { describe, expect, it } from 'vitest';
import { rewsFromProfile, rewsOnGrid, segmentArea } from '../src/wake/rews.ts';
import { evalLaw, fitLaw } from '../src/wake/profileLaw.ts';
import type { GridSpec } from '../src/grid/grid.ts';

const power = (z: number) => 8 * Math.pow(z / 100, 0.2);

describe('rotor-equivalent wind speed (IEC 61400-12-1:2017 segment method [from memory]; REFERENCES.md s.5 [numpy])', () => {
  it('D = 120, H = 100, alpha = 0.2, V_hub = 8: 5 and 10 segments and the exact integral', () => {
    // 7.968684 (5), 7.969154 (10), 7.969438 (exact); 6 printed decimals: 1e-6 absolute.
    expect(Math.abs(rewsFromProfile(power, 100, 60, 5) - 7.968684)).toBeLessThan(1e-6);
    expect(Math.abs(rewsFromProfile(power, 100, 60, 10) - 7.969154)).toBeLessThan(1e-6);
    // Many segments converge to the exact disk integral (segment error ~ N^-2: 2e4 segments -> ~1e-9).
    expect(Math.abs(rewsFromProfile(power, 100, 60, 20000) - 7.969438)).toBeLessThan(1e-6);
  });

  it('segment areas add up to pi R^2 and match the half-disk area (geometry)', () => {
    let s = 0;
    for (let i = 0; i < 7; i++) s += segmentArea(40 + (120 * i) / 7, 40 + (120 * (i + 1)) / 7, 100, 60);
    expect(Math.abs(s / (Math.PI * 3600) - 1)).toBeLessThan(1e-12); // rounding only
    expect(Math.abs(segmentArea(100, 200, 100, 60) / (Math.PI * 1800) - 1)).toBeLessThan(1e-12);
  });

  it('gridded field: a fine grid of the power law gives the exact integral', () => {
    // 1 m cells; v_i = area mean of u in segment i, so vs the profile-sampled 10-segment value the difference is
    // only from averaging u vs sampling at mid-height (< 1e-3 m/s here) and the grid's disk discretisation.
    const g: GridSpec = { ny: 161, nz: 161, y0: -80, z0: 20, dy: 1, dz: 1 };
    const u = new Float64Array(g.ny * g.nz);
    for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) u[iy + iz * g.ny] = power(g.z0 + iz * g.dz);
    const r = rewsOnGrid(g, u, 0, 100, 60, 10);
    expect(Math.abs(r.rews_ms - 7.969154)).toBeLessThan(1e-3);
    expect(Math.abs(r.coverage - 1)).toBeLessThan(2e-3); // 4x4 sub-samples per 1 m cell on a 60 m radius circle
    // A masked row inside the disk leaves that segment's average from the remaining cells; a fully masked segment
    // gives NaN rather than a silent number.
    const holes = u.slice();
    for (let iz = 0; iz < 14; iz++) for (let iy = 0; iy < g.ny; iy++) holes[iy + (iz + 20) * g.ny] = NaN;
    expect(rewsOnGrid(g, holes, 0, 100, 60, 10).rews_ms).toBeNaN();
  });
});

describe('profile laws (REFERENCES.md s.5)', () => {
  it('power law: V_hub = 8, z_hub = 100, alpha = 0.2 (IEC 61400-1 normal wind profile [from memory]; [numpy])', () => {
    const p = { law: 'power' as const, zRef_m: 100, uRef_ms: 8, alpha: 0.2, uStar_ms: NaN, z0_m: NaN };
    // 6 printed decimals: 1e-6 absolute.
    expect(Math.abs(evalLaw(p, 40) - 6.660426)).toBeLessThan(1e-6);
    expect(Math.abs(evalLaw(p, 60) - 7.223044)).toBeLessThan(1e-6);
    expect(Math.abs(evalLaw(p, 160) - 8.788484)).toBeLessThan(1e-6);
  });

  it('log law: u* = 0.4, z0 = 0.03, kappa = 0.40 ([memory]; [numpy])', () => {
    const p = { law: 'log' as const, zRef_m: 100, uRef_ms: NaN, alpha: NaN, uStar_ms: 0.4, z0_m: 0.03 };
    expect(Math.abs(evalLaw(p, 10) - 5.809143)).toBeLessThan(1e-6);
    expect(Math.abs(evalLaw(p, 100) - 8.111728)).toBeLessThan(1e-6);
  });

  it('fits recover the laws from exact points (round trip)', () => {
    const z = [40, 60, 80, 100, 120, 140, 160];
    const pw = fitLaw('power', z, z.map(power), z.map(() => 1), 100);
    // Exact data: linear least squares in log space returns the parameters to rounding (1e-10).
    expect(pw.alpha).toBeCloseTo(0.2, 10);
    expect(pw.uRef_ms).toBeCloseTo(8, 10);
    expect(pw.r2).toBeCloseTo(1, 10);
    const lg = fitLaw('log', z, z.map((zz) => (0.4 / 0.4) * Math.log(zz / 0.03)), z.map(() => 1), 100);
    expect(lg.uStar_ms).toBeCloseTo(0.4, 10);
    expect(lg.z0_m).toBeCloseTo(0.03, 10);
    // One height: alpha = 0.2 assumed and said so.
    const one = fitLaw('power', [80], [7.5], [3], 100);
    expect(one.alpha).toBe(0.2);
    expect(one.note).toMatch(/single height/);
    expect(fitLaw('log', [80], [7.5], [3], 100).ok).toBe(false);
  });
});
