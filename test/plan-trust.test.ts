/**
 * Planner trust maps: amplification against REFERENCES.md section 2 (numpy, re-run in
 * test/reference/plan_amplification.py), two-beam amplification against the crossing-angle table (same section),
 * the probe footprint's vector algebra, and the flags.
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import type { CampaignInput } from '../src/campaign/schema.ts';
import { ConfigError } from '../src/errors.ts';
import { cellIndex } from '../src/grid/grid.ts';
import { BeamFlag } from '../src/plan/beamCells.ts';
import { TrustCategory } from '../src/plan/cellTrust.ts';
import { probeFootprint } from '../src/plan/footprint.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';
import { meanDirection } from '../src/plan/settings.ts';
import { retrieveFromArrays } from '../src/api/retrieveArrays.ts';
import { W_ZERO_ASSUMPTION } from '../src/retrieval/settings.ts';
import { MaskReason } from '../src/retrieval/types.ts';

const groundLayout = (deg: number, planeX: number, yc: number): CampaignInput => ({
  name: 'ref-layout',
  turbine: { position_m: [0, 0, 0], hubHeight_m: 80, rotorDiameter_m: 100 },
  instruments: [
    { id: 'a', position_m: [0, 0, 0] },
    { id: 'b', position_m: [400, 0, 0] },
    { id: 'c', position_m: [200, 350, 0] },
  ],
  // cell centres at y = yc and z = 10, 15, ..., 150
  planes: [{ id: 'p', x_m: planeX, y: { min: yc - 5, max: yc + 5 }, z: { min: 7.5, max: 152.5 }, cell_m: [10, 5] }],
  windDirection: { kind: 'fixed', deg },
  plan: { maxFootprintCells: 1000 },
});

describe('amplification maps (REFERENCES.md section 2, ground-level layout [numpy]; Milbert 2008)', () => {
  const table: [number, number, number, number, number][] = [
    // h, DOP u, DOP v, DOP w, cond(A)
    [10, 0.88459, 0.763451, 13.2611, 17.37],
    [50, 0.901388, 0.782461, 2.714286, 3.469],
    [100, 0.951972, 0.839096, 1.449842, 1.728],
    [150, 1.030776, 0.92582, 1.061595, 1.156],
  ];
  it('wind from 270: rotor u = east, v = north, so the rotor-frame map reproduces the site-frame table', () => {
    const r = planCampaign(resolveCampaign(groundLayout(270, 200, 150), '<memory>'), { layout: false, pointing: false });
    const p = r.planes[0];
    for (const [h, du, dv, dw, cond] of table) {
      const c = cellIndex(p.geometry.grid, 150, h);
      // the cell centre is the table's target (200, 150, h): geometry only, 1e-9 m
      expect(Math.abs(p.geometry.site[3 * c] - 200) + Math.abs(p.geometry.site[3 * c + 1] - 150) + Math.abs(p.geometry.site[3 * c + 2] - h)).toBeLessThan(1e-9);
      // table values carry 6 significant digits (dop w at h = 10: 6 digits, 13.2611): tolerance 1e-5 relative
      expect(Math.abs(p.trust.dopU[c] / du - 1)).toBeLessThan(1e-5);
      expect(Math.abs(p.trust.dopV[c] / dv - 1)).toBeLessThan(1e-5);
      expect(Math.abs(p.trust.dopW[c] / dw - 1)).toBeLessThan(1e-5);
      // cond printed with 4 significant digits: 1e-3 relative
      expect(Math.abs(p.trust.cond[c] / cond - 1)).toBeLessThan(1e-3);
      expect(p.trust.usable[c]).toBe(3);
    }
    // maxAmplification 3 (default): w fails at h = 10 (13.3), passes at 50 (2.71): categories follow
    expect(p.trust.category[cellIndex(p.geometry.grid, 150, 10)]).toBe(TrustCategory.w_not_resolved);
    expect(p.trust.category[cellIndex(p.geometry.grid, 150, 50)]).toBe(TrustCategory.trusted);
  });
  it('wind from 240: components in the rotor frame (plan_amplification.py), w and cond unchanged', () => {
    // plan_amplification.py: rotor coordinates of (200, 150) for wind from 240: x = 248.205080757, y = 29.903810568
    const r = planCampaign(resolveCampaign(groundLayout(240, 248.205080757, 29.903810568), '<memory>'), { layout: false, pointing: false });
    const p = r.planes[0];
    const ref: [number, number, number, number, number][] = [
      [50, 0.873176, 0.813823, 2.714286, 3.469099],
      [100, 0.925045, 0.868691, 1.449842, 1.72835],
    ];
    for (const [h, du, dv, dw, cond] of ref) {
      const c = cellIndex(p.geometry.grid, 29.903810568, h);
      // numpy printed 6 decimals; the cell centre matches to ~1e-9 m: tolerance 2e-6 absolute
      expect(Math.abs(p.trust.dopU[c] - du)).toBeLessThan(2e-6);
      expect(Math.abs(p.trust.dopV[c] - dv)).toBeLessThan(2e-6);
      expect(Math.abs(p.trust.dopW[c] - dw)).toBeLessThan(2e-6);
      expect(Math.abs(p.trust.cond[c] - cond)).toBeLessThan(2e-6);
    }
  });
});

describe('two beams (REFERENCES.md section 2 crossing-angle table; Stawiarski et al. 2013)', () => {
  it('60 degree crossing: 0.816497 along the bisector, 1.414214 across it; w assumed zero', () => {
    // Instruments 50 m up, at T - 300 (cos 30, +/- sin 30, 0) from the target T = (200, 0, 50); wind 270 -> x = east.
    const c30 = Math.cos(Math.PI / 6), s30 = 0.5;
    const camp = resolveCampaign(
      {
        name: 'two',
        turbine: { position_m: [0, 0, 0], hubHeight_m: 50, rotorDiameter_m: 40 },
        instruments: [
          { id: 'l', position_m: [200 - 300 * c30, -300 * s30, 50] },
          { id: 'r', position_m: [200 - 300 * c30, 300 * s30, 50] },
        ],
        planes: [{ id: 'p', x_m: 200, y: { min: -5, max: 5 }, z: { min: 45, max: 55 }, cell_m: [10, 10] }],
        windDirection: { kind: 'fixed', deg: 270 },
        plan: { maxFootprintCells: 1000 },
      },
      '<memory>',
    );
    const t = planCampaign(camp, { layout: false, pointing: false }).planes[0].trust;
    // table values to 6 decimals: 1e-6
    expect(Math.abs(t.dopU[0] - 0.816497)).toBeLessThan(1e-6);
    expect(Math.abs(t.dopV[0] - 1.414214)).toBeLessThan(1e-6);
    expect(t.dopW[0]).toBeNaN(); // not resolved with two beams
    expect(Math.abs(t.minCrossing_deg[0] - 60)).toBeLessThan(1e-9); // construction: exactly 60 degrees
    expect([t.passU[0], t.passV[0], t.passW[0]]).toEqual([1, 1, 0]);
    // Two scanners are planned for u and v (plan/components.ts): the cell counts as trusted for those.
    expect(t.category[0]).toBe(TrustCategory.trusted);
    expect(t.passTarget[0]).toBe(1);
    // the same geometry with 'none': the retrieval masks two-instrument cells, so nothing passes
    const none = planCampaign({ ...camp, retrieval: { ...camp.retrieval, twoInstrumentAssumption: 'none' } }, { layout: false, pointing: false }).planes[0].trust;
    expect([none.passU[0], none.passV[0]]).toEqual([0, 0]);
  });
});

describe('three beams that confound u with w: judged as the run solves them (w = 0 when that keeps more of u and v)', () => {
  // Beams whose vertical part is nearly a fixed fraction of their along-wind part (dz/dx = 0.1, 0.1, 0.12): the
  // three-component system cannot tell u from w (amplification of u about 6.8, of w about 63), while u and v with
  // w = 0 are well determined. Target T = (200, 0, 50), wind from 270 (rotor x = east, y = north).
  const T = [200, 0, 50];
  const P: [number, number, number][] = [[-100, -120, 20], [-100, 120, 20], [-50, 0, 20]];
  const camp = resolveCampaign(
    {
      name: 'confounded',
      turbine: { position_m: [0, 0, 0], hubHeight_m: 50, rotorDiameter_m: 40 },
      instruments: P.map((p, i) => ({ id: `s${i}`, position_m: p })),
      planes: [{ id: 'p', x_m: 200, y: { min: -5, max: 5 }, z: { min: 45, max: 55 }, cell_m: [10, 10] }],
      windDirection: { kind: 'fixed', deg: 270 },
      plan: { maxFootprintCells: 1000 },
    },
    '<memory>',
  );
  const beams = P.map((p) => {
    const d = [T[0] - p[0], T[1] - p[1], T[2] - p[2]], L = Math.hypot(d[0], d[1], d[2]);
    return [d[0] / L, d[1] / L, d[2] / L];
  });

  it('the planner reports u and v from the w = 0 system (dilution of precision, Milbert 2008), w not resolved', () => {
    const t = planCampaign(camp, { layout: false, pointing: false }).planes[0].trust;
    // w = 0: A has rows (n_x, n_y); by the layout's symmetry sum n_x n_y = 0, so (A^T A)^-1 is diagonal and the
    // amplifications are 1 / sqrt(sum n_x^2) and 1 / sqrt(sum n_y^2). Tolerance 1e-9: rounding only.
    const sx = beams.reduce((a, n) => a + n[0] * n[0], 0), sy = beams.reduce((a, n) => a + n[1] * n[1], 0);
    expect(Math.abs(beams.reduce((a, n) => a + n[0] * n[1], 0))).toBeLessThan(1e-12); // the symmetry used
    expect(Math.abs(t.dopU[0] - 1 / Math.sqrt(sx))).toBeLessThan(1e-9);
    expect(Math.abs(t.dopV[0] - 1 / Math.sqrt(sy))).toBeLessThan(1e-9);
    expect(t.dopW[0]).toBeNaN();
    expect([t.passU[0], t.passV[0], t.passW[0]]).toEqual([1, 1, 0]);
    expect(t.category[0]).toBe(TrustCategory.w_not_resolved);
    // The crossing criterion (plan.minCrossing_deg, 30 by default) on the best two beams in u, v: s0 and s1 cross at
    // 2 atan(120 / 300) = 43.6 degrees there, while s2 lies 21.7 degrees from either in 3-D.
    expect(camp.plan?.minCrossing_deg).toBe(30);
    // Without the w = 0 assumption the three-component system stands: u fails on amplification (above 3), and the
    // three beams' smallest crossing (21.7 degrees) fails the crossing criterion, which comes first.
    const none = planCampaign({ ...camp, retrieval: { ...camp.retrieval, twoInstrumentAssumption: 'none' } }, { layout: false, pointing: false }).planes[0].trust;
    expect(none.dopU[0]).toBeGreaterThan(camp.retrieval.maxAmplification);
    expect(none.passU[0]).toBe(0);
    expect(none.category[0]).toBe(TrustCategory.parallel_beams);
  });

  it('the run retrieves the same cell with w = 0, recovering a horizontal wind exactly', () => {
    // Radial velocities of the uniform wind U = (8, 1, 0) (v_r = n . U): with w = 0 true, the w = 0 solve is exact.
    const U = [8, 1, 0], n = 30;
    const s = { plane: [] as number[], cell: [] as number[], instrument: [] as number[], radialVelocity: [] as number[], beamX: [] as number[], beamY: [] as number[], beamZ: [] as number[] };
    beams.forEach((b, i) => {
      for (let k = 0; k < n; k++) {
        s.plane.push(0); s.cell.push(0); s.instrument.push(i);
        s.radialVelocity.push(b[0] * U[0] + b[1] * U[1] + b[2] * U[2]);
        s.beamX.push(b[0]); s.beamY.push(b[1]); s.beamZ.push(b[2]);
      }
    });
    const f = retrieveFromArrays(camp, s, { index: 0, start_s: 0, end_s: 600 }, 270).fields[0];
    expect(Math.abs(f.u[0] - 8)).toBeLessThan(1e-6); // fixed-point sums quantise v_r to 1e-6 m/s
    expect(Math.abs(f.v[0] - 1)).toBeLessThan(1e-5); // v's amplification 1.9 times that
    expect(f.maskW[0]).toBe(MaskReason.assumedZero);
    expect(f.assumptions).toContain(W_ZERO_ASSUMPTION);
  });
});

describe('probe footprint on the plane (vector algebra: |projection| = L |sin angle(n, normal)|)', () => {
  const nrm: [number, number, number] = [1, 0, 0], e1: [number, number, number] = [0, 1, 0], e2: [number, number, number] = [0, 0, 1];
  it('along the normal: nothing; in the plane: the whole length; at 45 degrees: L / sqrt 2', () => {
    // exact geometry; 1e-12 for rounding
    expect(probeFootprint([1, 0, 0], 30, nrm, e1, e2, 10, 5).length_m).toBeLessThan(1e-12);
    const inPlane = probeFootprint([0, 0.6, 0.8], 30, nrm, e1, e2, 10, 5);
    expect(inPlane.length_m).toBeCloseTo(30, 12);
    expect(inPlane.cells).toBeCloseTo(Math.max((30 * 0.6) / 10, (30 * 0.8) / 5), 12); // 4.8 cells along z
    expect(probeFootprint([Math.SQRT1_2, Math.SQRT1_2, 0], 30, nrm, e1, e2, 10, 5).length_m).toBeCloseTo(30 / Math.SQRT2, 12);
  });
  it('a side-looking pulsed lidar on a fine grid is flagged, the same lidar looking along the wind is not', () => {
    // pulsed FWHM 37.466 m (REFERENCES.md section 3); cells 10 m: across-plane beam -> ~3.7 cells > 2
    const camp = resolveCampaign(
      {
        name: 'fp',
        turbine: { position_m: [0, 0, 0], hubHeight_m: 50, rotorDiameter_m: 40 },
        instruments: [
          { id: 'side', position_m: [200, -400, 50] },
          { id: 'aft', position_m: [800, 0, 50] },
        ],
        planes: [{ id: 'p', x_m: 200, y: { min: -5, max: 5 }, z: { min: 45, max: 55 }, cell_m: [10, 10] }],
        windDirection: { kind: 'fixed', deg: 270 },
      },
      '<memory>',
    );
    const p = planCampaign(camp, { layout: false, pointing: false }).planes[0];
    expect(p.beams[0].flags[0] & BeamFlag.footprint).toBeTruthy();
    expect(Math.abs(p.beams[0].footprintCells[0] - 3.7466107)).toBeLessThan(1e-6); // beam along y: L / dy exactly
    expect(p.beams[1].flags[0] & BeamFlag.footprint).toBeFalsy(); // beam along -x: zero footprint
    expect(p.trust.category[0]).toBe(TrustCategory.footprint);
  });
});

describe('hard limits and categories', () => {
  const base = (plan: Record<string, unknown>, z: { min: number; max: number }): CampaignInput => ({
    name: 'flags',
    turbine: { position_m: [0, 0, 0], hubHeight_m: 80, rotorDiameter_m: 100 },
    instruments: [
      { id: 'a', position_m: [0, 0, 0] },
      { id: 'b', position_m: [400, 0, 0] },
      { id: 'c', position_m: [200, 350, 0] },
    ],
    planes: [{ id: 'p', x_m: 200, y: { min: 145, max: 155 }, z, cell_m: [10, 1] }],
    windDirection: { kind: 'fixed', deg: 270 },
    plan: { maxFootprintCells: 1000, ...plan },
  });
  it('ground: a cell centre lower than qc.groundClearance_m (default 2 m)', () => {
    const p = planCampaign(resolveCampaign(base({}, { min: 0, max: 3 }), '<memory>'), { layout: false, pointing: false }).planes[0];
    // centres at 0.5, 1.5, 2.5 m
    expect(Array.from(p.trust.category)).toEqual([TrustCategory.ground, TrustCategory.ground, TrustCategory.w_not_resolved]);
  });
  it('elevation and range remove beams; the category names the limit', () => {
    // elevation from a (0,0,0) to (200,150,50): atan(50/250) = 11.31 deg; from c: atan(50/200) = 14.04 deg
    const el = planCampaign(resolveCampaign(base({ minElevation_deg: 12 }, { min: 49.5, max: 50.5 }), '<memory>'), { layout: false, pointing: false }).planes[0];
    // b sees the target 250 m away horizontally too (11.31 deg): a and b fall below 12 deg, only c remains
    expect(el.trust.usable[0]).toBe(1);
    expect(el.beams[0].flags[0] & BeamFlag.elevation).toBeTruthy();
    expect(el.beams[2].flags[0] & BeamFlag.elevation).toBeFalsy();
    // fewer than two beams: category 'elevation'
    expect(el.trust.category[0]).toBe(TrustCategory.elevation);
    // range: a and b are sqrt(200^2 + 150^2 + 50^2) = 255 m away, c is 206.2 m: max 230 m leaves only c
    const rg = planCampaign(resolveCampaign(base({ maxRange_m: { pulsed: 230 } }, { min: 49.5, max: 50.5 }), '<memory>'), { layout: false, pointing: false }).planes[0];
    expect(rg.trust.usable[0]).toBe(1);
    expect(rg.trust.category[0]).toBe(TrustCategory.range);
  });
  it('parallel beams: a crossing angle below plan.minCrossing_deg fails every component', () => {
    const p = planCampaign(resolveCampaign(base({ minCrossing_deg: 89 }, { min: 49.5, max: 50.5 }), '<memory>'), { layout: false, pointing: false }).planes[0];
    expect(p.trust.category[0]).toBe(TrustCategory.parallel_beams);
    expect(p.trust.passU[0] + p.trust.passV[0] + p.trust.passW[0]).toBe(0);
  });
});

describe('wind direction for series campaigns', () => {
  it('vector mean of the planned directions (350 and 10 -> 0; 90 and 180 -> 135)', () => {
    // analytic: unit vectors summed; 1e-9 degrees for rounding
    expect(Math.min(meanDirection([350, 10]), 360 - meanDirection([350, 10]))).toBeLessThan(1e-9);
    expect(meanDirection([90, 180])).toBeCloseTo(135, 9);
    expect(meanDirection([0, 180])).toBeNaN();
  });
  it('a series campaign without plan.directions_deg is a ConfigError naming the key', () => {
    const raw = { ...groundLayout(270, 200, 150), windDirection: { kind: 'series', file: 'wd.csv' } } as CampaignInput;
    delete (raw as { plan?: unknown }).plan;
    const c = resolveCampaign(raw, '<memory>');
    expect(() => planCampaign(c)).toThrow(ConfigError);
    expect(() => planCampaign(c)).toThrow(/plan\.directions_deg/);
    expect(planCampaign(c, { directions_deg: [260, 280], layout: false, pointing: false }).settings.direction_deg).toBeCloseTo(270, 9);
  });
});
