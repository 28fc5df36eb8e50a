/**
 * Layout search: enumeration and seeded sampling, scoring with the same kernels as the trust maps, ranking and gain.
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import type { CampaignInput } from '../src/campaign/schema.ts';
import { ConfigError } from '../src/errors.ts';
import { candidatePositions } from '../src/plan/candidates.ts';
import { combinations } from '../src/plan/combinations.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';

const raw = (plan: Record<string, unknown>): CampaignInput => ({
  name: 'layout',
  turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120 },
  instruments: [
    { id: 'north', position_m: [150, 400, 2] },
    { id: 'south', position_m: [150, -400, 2] },
    { id: 'aft', position_m: [900, 0, 2] },
  ],
  planes: [{ id: 'x3D', x_D: 3, y: { min: -150, max: 150 }, z: { min: 10, max: 210 }, cell_m: [20, 20] }],
  windDirection: { kind: 'fixed', deg: 270 },
  plan,
});

describe('candidates and combinations', () => {
  it('an area is sampled on its grid at the instrument height; listed points without up get it too', () => {
    const pts = candidatePositions({ id: 'x', position: [0, 0, 7] }, { east: { min: 0, max: 100 }, north: { min: -50, max: 50 }, step_m: 50 });
    expect(pts.length).toBe(9); // 3 x 3 grid points, hand count
    expect(pts.every((p) => p[2] === 7)).toBe(true);
    expect(candidatePositions({ id: 'x', position: [0, 0, 7] }, [[1, 2], [3, 4, 5]])).toEqual([[1, 2, 7], [3, 4, 5]]);
  });
  it('enumerates every combination within the cap, samples distinct ones beyond it, reproducibly', () => {
    const all = combinations([3, 4, 2], 100, 1);
    expect(all.sampled).toBe(false);
    expect(all.combos.length).toBe(24);
    expect(new Set(all.combos.map((c) => c.join())).size).toBe(24);
    const s1 = combinations([30, 40, 20], 500, 42);
    expect(s1.sampled).toBe(true);
    expect(s1.total).toBe(24000);
    expect(s1.combos.length).toBe(500);
    expect(new Set(s1.combos.map((c) => c.join())).size).toBe(500);
    expect(combinations([30, 40, 20], 500, 42).combos.map((c) => c.join())).toEqual(s1.combos.map((c) => c.join())); // same seed, same sample
    expect(combinations([30, 40, 20], 500, 43).combos.map((c) => c.join())).not.toEqual(s1.combos.map((c) => c.join()));
  });
  it('an unknown instrument id in plan.candidates is a ConfigError naming the key', () => {
    const c = resolveCampaign(raw({ candidates: { nobody: [[0, 0]] } }), '<memory>');
    expect(() => planCampaign(c)).toThrow(ConfigError);
    expect(() => planCampaign(c)).toThrow(/plan\.candidates\.nobody/);
  });
});

describe('layout search', () => {
  it('a candidate set that contains the own layout never ranks below it; the own layout is scored as the trust map', () => {
    const r = planCampaign(
      resolveCampaign(raw({ candidates: { aft: { east: { min: 500, max: 1100 }, north: { min: -300, max: 300 }, step_m: 100 }, north: [[150, 400], [360, 400], [0, 300]] } }), '<memory>'),
      { pointing: false },
    );
    const L = r.layout!;
    expect(L.total).toBe(7 * 7 * 3); // hand count: 7 x 7 area points, 3 listed points
    expect(L.evaluated + L.skippedCoincident).toBe(L.total);
    expect(L.sampled).toBe(false);
    // the baseline equals the trust map of the campaign's own layout (same kernels): exact
    expect(L.baseline.rotor.all).toBe(r.planes[0].rotor.all);
    expect(L.baseline.plane.all).toBe(r.planes[0].plane.all);
    // (900, 0) is a grid point of the aft area and (150, 400) is listed: the own layout is among the candidates
    expect(L.ranked[0].rotor.all).toBeGreaterThanOrEqual(L.baseline.rotor.all);
    expect(L.gain.rotorAll).toBeCloseTo(L.ranked[0].rotor.all - L.baseline.rotor.all, 15);
    for (let k = 1; k < L.ranked.length; k++) expect(L.ranked[k].rotor.all).toBeLessThanOrEqual(L.ranked[k - 1].rotor.all);
  });
  it('moving the aft lidar closer to the plane helps w (the beams diverge more from the plane)', () => {
    // With the aft lidar at 900 m the beams to the lower plane are nearly coplanar with the two side beams; at
    // 500 m its elevation to the same cells is about three times larger. Expected: rotor-disk w fraction rises.
    const r = planCampaign(resolveCampaign(raw({ candidates: { aft: [[500, 0], [900, 0]] } }), '<memory>'), { pointing: false });
    const L = r.layout!;
    expect(L.ranked[0].positions[2]).toEqual([500, 0, 2]);
    expect(L.ranked[0].rotor.w).toBeGreaterThan(L.baseline.rotor.w);
    expect(L.ranked[1].rotor.all).toBe(L.baseline.rotor.all); // rank 2 is the own layout itself: identical score
  });
  it('beyond the cap: a seeded sample, said so in the notes', () => {
    const r = planCampaign(
      resolveCampaign(raw({ maxCombinations: 20, seed: 5, candidates: { aft: { east: { min: 400, max: 1200 }, north: { min: -400, max: 400 }, step_m: 100 } } }), '<memory>'),
      { pointing: false },
    );
    const L = r.layout!;
    expect(L.sampled).toBe(true);
    expect(L.total).toBe(81);
    expect(L.evaluated + L.skippedCoincident).toBe(20);
    expect(r.summary.notes.some((n) => /sample of 20 drawn with seed 5/.test(n))).toBe(true);
  });
  it('layouts with two instruments in the same place are skipped', () => {
    const r = planCampaign(resolveCampaign(raw({ candidates: { aft: [[150, 400], [600, 0]] } }), '<memory>'), { pointing: false });
    expect(r.layout!.skippedCoincident).toBe(1); // (150, 400, 2) coincides with 'north'
    expect(r.layout!.evaluated).toBe(1);
  });
});
