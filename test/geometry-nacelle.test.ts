/**
 * Nacelle-mounted forward-looking instruments: the nacelle frame (geometry/nacelle.ts), the pair reconstruction,
 * shear correction and induction (src/nacelle), and the bad-input rules.
 * Outside sources: ../shared/REFERENCES.md section 9 (two-beam formulas and the vortex-sheet ratio, numpy check
 * values; the induction model as used by Medici et al. 2011, Wind Energy 14, 691-697, from memory); section 5 (power
 * law, IEC 61400-1 normal wind profile, from memory); IEC 61400-50-3:2022 definitions of the reconstructed
 * horizontal wind speed and relative wind direction for two-beam nacelle lidars (from memory: the same two-beam
 * formulas); test/reference/geometry_single.py (numpy; output quoted beside the values).
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { ConfigError } from '../src/errors.ts';
import { calibratedUnitVector, calibrationMatrix, unitVector } from '../src/geometry/beam.ts';
import { NacelleFrame, NacelleMiss, SeriesInterpolator, nacelleBeamSite, nacelleOrigin } from '../src/geometry/nacelle.ts';
import { inductionFactor, inductionRatio } from '../src/nacelle/induction.ts';
import { shearCorrection, solveNacelle, wrap180 } from '../src/nacelle/solve.ts';
import { nacelleLayouts } from '../src/nacelle/target.ts';
import { beamOf, putKey, statsOf } from './helpers/geometryStats.ts';

const base = {
  name: 't', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100, series: { file: 'turbine.csv' } },
  windDirection: { kind: 'fixed', deg: 270 },
};

describe('the nacelle frame', () => {
  it('with no tilt or roll a beam at nacelle-relative azimuth a points at site azimuth psi + a', () => {
    const out = new Float64Array(3);
    for (const [psi, a, el] of [[270, -15, 0], [10, 20, 5], [359, 15, -6]]) {
      nacelleBeamSite(psi, a, el, 0, 0, 0, out);
      const u = unitVector(psi + a, el);
      // Exact geometry: 1e-12.
      for (let k = 0; k < 3; k++) expect(out[k]).toBeCloseTo(u[k], 12);
    }
  });

  it('tilt and roll compose like the ground calibration with heading = nacelle direction (one rotation for both)', () => {
    const out = new Float64Array(3);
    nacelleBeamSite(230, 12, 4, 1.5, 0.8, -0.4, out);
    const ref = calibratedUnitVector(calibrationMatrix({ heading_deg: 231.5, pitch_deg: 0.8, roll_deg: -0.4 }), 12, 4);
    for (let k = 0; k < 3; k++) expect(out[k]).toBeCloseTo(ref[k], 12);
    // Positive tilt raises a beam along the axis.
    nacelleBeamSite(0, 0, 0, 0, 2, 0, out);
    expect(out[2]).toBeCloseTo(Math.sin((2 * Math.PI) / 180), 12);
  });

  it('the mount turns with the nacelle: forward, then left looking forward', () => {
    // Facing east (psi = 90): forward = east, left = north.
    const p = nacelleOrigin([10, 20, 0], [5, 2, 90], 90);
    expect(p[0]).toBeCloseTo(15, 12);
    expect(p[1]).toBeCloseTo(22, 12);
    expect(p[2]).toBe(90);
  });

  it('interpolates the nacelle direction across north and leaves gaps empty', () => {
    const s = new SeriesInterpolator(Float64Array.from([0, 60, 120, 400]), Float64Array.from([358, 2, 4, 10]), 120, true);
    expect(s.at(30)).toBeCloseTo(0, 12); // halfway from 358 to 2 across north
    expect(s.at(90)).toBeCloseTo(3, 12);
    expect(Number.isNaN(s.at(200))).toBe(true); // 120 -> 400 is a 280 s gap > 120 s
    expect(s.at(-100)).toBe(358); // within 120 s before the first row
    expect(Number.isNaN(s.at(-200))).toBe(true);
  });

  it('reports a missing direction and a beam outside the forward half instead of placing the sample', () => {
    const series = { file: '', time: Float64Array.from([0, 60]), values: { yaw_deg: Float64Array.from([270, 270]) } };
    const f = new NacelleFrame(series, 120, { heading_deg: 0, pitch_deg: 0, roll_deg: 0 }, [0, 0, 0], [0, 0, 100], true);
    const out = new Float64Array(6);
    expect(f.beam(30, 15, 0, out)).toBe(NacelleMiss.none);
    expect(f.beam(1000, 15, 0, out)).toBe(NacelleMiss.noDirection);
    // A site azimuth (255) given as nacelle-relative: behind the rotor for a forward-looking instrument.
    expect(f.beam(30, 255, 0, out)).toBe(NacelleMiss.notForward);
  });
});

describe('two-beam reconstruction (REFERENCES.md section 9)', () => {
  // geometry_single.out: nacelle v1 v2 [-8.889195 -8.402224]; nacelle speed dir gamma 9.000000000000002 264.0 6.0.
  const c = resolveCampaign({ ...base, instruments: [{ id: 'n', role: 'nacelle', files: [], nacelle: { beams: [{ azimuth_deg: -15, elevation_deg: 0 }, { azimuth_deg: 15, elevation_deg: 0 }], ranges_m: [250] } }] }, '<memory>');
  const [l] = nacelleLayouts(c.instruments);
  const ctx = { hubHeight_m: 100, rotorDiameter_m: 100, ctAt: () => 0.75, nacelle_deg: 270, seriesGap: '' };

  it('recovers U = 9 m/s and a yaw misalignment of +6 degrees from the quoted radial velocities', () => {
    const st = statsOf(2, 1);
    // Nacelle facing 270; beam 1 at -15 (site 255), beam 2 at +15 (site 285).
    putKey(st, 0, 40, -8.889195, 0.3, beamOf(255, 0), 250, 100);
    putKey(st, 1, 40, -8.402224, 0.3, beamOf(285, 0), 250, 100);
    const r = solveNacelle(st, l, { index: 0, start_s: 0, end_s: 600 }, ctx);
    // 1e-5: the quoted values carry 6 decimals.
    expect(r.hubSpeed_ms).toBeCloseTo(9, 5);
    expect(r.direction_deg).toBeCloseTo(264, 4);
    expect(r.yawMisalignment_deg).toBeCloseTo(6, 4);
    // The tangent formula of the reference gives the same angle (geometry_single.out: nacelle tan formula 6.0).
    const a = (15 * Math.PI) / 180;
    expect((Math.atan((-8.889195 + 8.402224) / ((-8.889195 - 8.402224) * Math.tan(a))) * 180) / Math.PI).toBeCloseTo(6, 4);
    expect(r.flag).toBe('ok');
    // Uncertainty: two beams, s/sqrt(n) each, propagated through A^-1; positive and small.
    expect(r.shubSpeed_ms).toBeGreaterThan(0);
    expect(r.shubSpeed_ms).toBeLessThan(0.2);
    // Induction at 2.5 D with Ct = 0.75 -> a = 0.25 (geometry_single.out: a from Ct=0.75 0.25; induction xi 5.0
    // 0.9951451689227301 since 2.5 D = 5 R).
    expect(r.induction_a).toBeCloseTo(0.25, 12);
    expect(r.inductionRatio).toBeCloseTo(0.995145, 6);
    expect(r.freeStream_ms).toBeCloseTo(9 / 0.9951451689227301, 4);
  });

  it('a beam without data leaves the window without values and says which beam', () => {
    const st = statsOf(2, 1);
    putKey(st, 0, 40, -8.889195, 0.3, beamOf(255, 0), 250, 100);
    const r = solveNacelle(st, l, { index: 0, start_s: 0, end_s: 600 }, ctx);
    expect(r.flag).toBe('no_data');
    expect(Number.isNaN(r.hubSpeed_ms)).toBe(true);
    expect(r.reason).toMatch(/beam 2 without data/);
  });

  it('a turbine-series gap in the window flags it with the reason', () => {
    const st = statsOf(2, 1);
    putKey(st, 0, 40, -8.889195, 0.3, beamOf(255, 0), 250, 100);
    putKey(st, 1, 40, -8.402224, 0.3, beamOf(285, 0), 250, 100);
    const r = solveNacelle(st, l, { index: 0, start_s: 0, end_s: 600 }, { ...ctx, seriesGap: 'nacelle direction missing: no turbine-series row for 300 s' });
    expect(r.flag).toBe('nacelle_series_gap');
    expect(r.reason).toMatch(/300 s/);
  });
});

describe('four beams: shear exponent and the shear-corrected hub speed', () => {
  it('recovers alpha = 0.2 and V_hub = 8 from the power-law worked example (REFERENCES.md 5)', () => {
    // REFERENCES.md 5 [numpy]: V_hub = 8, z_hub = 100, alpha = 0.2: V(40) = 6.660426, V(160) = 8.788484.
    const r = shearCorrection(8.788484, 0.05, 160, 6.660426, 0.05, 40, 100);
    // 1e-6: the quoted digits.
    expect(r.alpha).toBeCloseTo(0.2, 6);
    expect(r.hub).toBeCloseTo(8, 5);
    // s_alpha = sqrt((0.05/8.788)^2 + (0.05/6.660)^2) / ln 4, by hand.
    expect(r.salpha).toBeCloseTo(Math.hypot(0.05 / 8.788484, 0.05 / 6.660426) / Math.log(4), 9);
  });

  it('reconstructs each pair, the shear and the direction from four beams at two heights', () => {
    const c = resolveCampaign({ ...base, instruments: [{ id: 'n', role: 'nacelle', files: [], nacelle: { beams: [
      { azimuth_deg: -15, elevation_deg: 8 }, { azimuth_deg: 15, elevation_deg: 8 }, { azimuth_deg: -15, elevation_deg: -8 }, { azimuth_deg: 15, elevation_deg: -8 },
    ], ranges_m: [200, 300], distance_D: 2.5 } }] }, '<memory>');
    const [l] = nacelleLayouts(c.instruments);
    const st = statsOf(8, 1);
    const psi = 200, D = 195; // yaw misalignment +5
    for (const [g, r] of [200, 300].entries()) {
      for (let b = 0; b < 4; b++) {
        const el = b < 2 ? 8 : -8, az = b % 2 ? 15 : -15;
        const z = 100 + r * Math.sin((el * Math.PI) / 180);
        const S = 8 * Math.pow(z / 100, 0.2);
        const n = beamOf(psi + az, el);
        const U = [-S * Math.sin((D * Math.PI) / 180), -S * Math.cos((D * Math.PI) / 180)];
        const up = r * Math.cos((el * Math.PI) / 180) * Math.cos((az * Math.PI) / 180);
        putKey(st, b * 2 + g, 30, n[0] * U[0] + n[1] * U[1], 0.2, n, up, z);
      }
    }
    const r = solveNacelle(st, l, { index: 0, start_s: 0, end_s: 600 }, { hubHeight_m: 100, rotorDiameter_m: 100, ctAt: () => 0.8, nacelle_deg: psi, seriesGap: '' });
    // w = 0 and exact power law: the reconstruction is exact to rounding (1e-9).
    expect(r.alpha).toBeCloseTo(0.2, 9);
    expect(r.hubSpeedShear_ms).toBeCloseTo(8, 9);
    expect(r.yawMisalignment_deg).toBeCloseTo(5, 9);
    expect(r.direction_deg).toBeCloseTo(195, 9);
    expect(r.flag).toBe('ok');
    // distance 250 m lies between the gates' upstream distances (about 191 and 287 m).
    expect(r.distance_m).toBe(250);
  });
});

describe('induction (vortex-sheet model)', () => {
  it('matches the numpy values of REFERENCES.md 9 and momentum theory', () => {
    // geometry_single.out: induction xi 1.0 0.9267766952966369; 2.5 0.9821191727213149; 5.0 0.9951451689227301.
    expect(inductionRatio(0.25, 50, 50)).toBeCloseTo(0.926777, 6);
    expect(inductionRatio(0.25, 125, 50)).toBeCloseTo(0.982119, 6);
    expect(inductionRatio(0.25, 250, 50)).toBeCloseTo(0.995145, 6);
    // Ct = 4 a (1 - a): a = 0.25 for Ct = 0.75 (by hand).
    expect(inductionFactor(0.75)).toBeCloseTo(0.25, 12);
    expect(inductionFactor(0)).toBe(0);
  });

  it('wraps yaw misalignment to (-180, 180]', () => {
    expect(wrap180(355)).toBe(-5);
    expect(wrap180(-190)).toBe(170);
    expect(wrap180(180)).toBe(180);
  });
});

describe('campaign rules for nacelle beams', () => {
  it('nacelle-relative beams without a turbine series: one clear error naming the key', () => {
    const bad = { ...base, turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100 }, instruments: [{ id: 'n', role: 'nacelle', nacelle: { beams: [{ azimuth_deg: -15, elevation_deg: 0 }, { azimuth_deg: 15, elevation_deg: 0 }], ranges_m: [250] } }] };
    expect(() => resolveCampaign(bad, 'c.yaml')).toThrow(ConfigError);
    expect(() => resolveCampaign(bad, 'c.yaml')).toThrow(/instruments\[0\]\.beamFrame: .*turbine\.series/);
  });

  it('three beams, or four not forming two pairs, are refused', () => {
    const three = { ...base, instruments: [{ id: 'n', role: 'nacelle', nacelle: { beams: [{ azimuth_deg: -15, elevation_deg: 0 }, { azimuth_deg: 15, elevation_deg: 0 }, { azimuth_deg: 0, elevation_deg: 5 }], ranges_m: [250] } }] };
    expect(() => resolveCampaign(three, 'c.yaml')).toThrow(/2 beams \(one pair\) or 4/);
  });
});
