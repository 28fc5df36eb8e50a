/**
 * Profiles from one instrument (src/profile): the velocity-azimuth display fit and Doppler beam swinging against
 * outside checks, the flags for bad input, and the target's keying.
 * Outside sources: Browning & Wexler (1968), J. Appl. Meteor. 7, 105-113 (the harmonic fit; notation from memory);
 * ../shared/REFERENCES.md section 8 (check values computed with numpy); test/reference/geometry_single.py (numpy
 * weighted least squares, printed output in geometry_single.out, quoted beside each value).
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { CellAccumulator } from '../src/grid/accumulator.ts';
import { ProfileTarget, profilerLayouts } from '../src/profile/target.ts';
import { sampleOf, windowFrame } from '../src/grid/target.ts';
import { largestGap, solveProfile, speedDirection } from '../src/profile/solve.ts';
import { inflowFromProfile } from '../src/profile/inflow.ts';
import { robustFilter } from '../src/retrieval/robustFilter.ts';
import { beamOf, putKey, statsOf } from './helpers/geometryStats.ts';

function campaign(profile: Record<string, unknown>) {
  return resolveCampaign({
    name: 't', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120 },
    instruments: [{ id: 'p', role: 'profiler', position_m: [0, 0, 0], profile }],
    windDirection: { kind: 'fixed', deg: 270 },
  }, '<memory>');
}

const vad = { mode: 'vad', heights_m: { min: 100, max: 100, step: 20 }, sectors: 12 };

/** Stats of one height with the given (azimuth, elevation, mean v_r, sd, n) sectors. */
function ring(layoutProfile: Record<string, unknown>, sectors: { az: number; el: number; vr: number; sd?: number; n?: number }[]) {
  const c = campaign(layoutProfile);
  const [l] = profilerLayouts(c.instruments);
  const st = statsOf((l.heights.length * (l.sectors + 1)) * 1, 1);
  for (const s of sectors) {
    const sector = s.el >= 80 ? l.sectors : Math.round((((s.az % 360) + 360) % 360) / (360 / l.sectors)) % l.sectors;
    putKey(st, sector, s.n ?? 50, s.vr, s.sd ?? 0.2, beamOf(s.az, s.el), 50, 100);
  }
  return { l, st };
}

describe('VAD fit (Browning & Wexler 1968)', () => {
  it('recovers u, v, w, speed and direction of a uniform wind on a 60 degree cone (REFERENCES.md section 8)', () => {
    // REFERENCES.md 8 [numpy]: u = 5, v = -3, w = 0.2, phi = 60, theta = 0..330 step 30: a0 = 0.173205, a1 = -1.5,
    // b1 = 2.5; speed 5.830952, direction 300.963757. v_r computed here from the same formula.
    const U = [5, -3, 0.2];
    const secs = Array.from({ length: 12 }, (_, k) => {
      const b = beamOf(30 * k, 60);
      return { az: 30 * k, el: 60, vr: b[0] * U[0] + b[1] * U[1] + b[2] * U[2] };
    });
    // Two of the quoted v_r values, as a check of the beam formula itself (REFERENCES.md 8, 1e-6: printed digits).
    expect(secs[0].vr).toBeCloseTo(-1.326795, 6);
    expect(secs[3].vr).toBeCloseTo(2.673205, 6);
    const { l, st } = ring(vad, secs);
    const [p] = solveProfile(st, l);
    // Noise-free: exact to rounding (1e-9 m/s).
    expect(p.u_ms).toBeCloseTo(5, 9);
    expect(p.v_ms).toBeCloseTo(-3, 9);
    expect(p.w_ms).toBeCloseTo(0.2, 9);
    expect(p.speed_ms).toBeCloseTo(5.830952, 6);
    expect(p.direction_deg).toBeCloseTo(300.963757, 5);
    // The harmonic coefficients of the reference: b1 = u cos(phi), a1 = v cos(phi), a0 = w sin(phi).
    expect(p.u_ms * Math.cos(Math.PI / 3)).toBeCloseTo(2.5, 9);
    expect(p.v_ms * Math.cos(Math.PI / 3)).toBeCloseTo(-1.5, 9);
    expect(p.w_ms * Math.sin(Math.PI / 3)).toBeCloseTo(0.173205, 6);
    expect(p.flag).toBe('ok');
    expect(p.r2).toBeCloseTo(1, 12);
  });

  it('matches numpy weighted least squares with noise, including the chi2-inflated uncertainties (geometry_single.out, part 2)', () => {
    // geometry_single.out: noisy U [-5.994942 4.001574 0.299807]; chi2/dof 2.2157847690608437 (with sd 0.2; ours
    // uses the n - 1 sd of +/- samples, the same inflated covariance since C * chi2 does not depend on sigma);
    // noisy speed sd 7.207768551620374 0.02977102463175121; noisy dir sd_deg 123.7227803938254 0.23665494403200427;
    // noisy rmse r2 0.033285017418208176 0.9999147059259343.
    const U = [-6, 4, 0.3];
    const secs = Array.from({ length: 8 }, (_, k) => {
      const b = beamOf(45 * k, 45);
      return { az: 45 * k, el: 45, vr: b[0] * U[0] + b[1] * U[1] + b[2] * U[2] + 0.05 * Math.sin(1.7 * k + 0.3) };
    });
    const { l, st } = ring({ ...vad, sectors: 8 }, secs);
    const [p] = solveProfile(st, l);
    // 1e-6: the printed digits of the reference.
    expect(p.u_ms).toBeCloseTo(-5.994942, 6);
    expect(p.v_ms).toBeCloseTo(4.001574, 6);
    expect(p.w_ms).toBeCloseTo(0.299807, 6);
    expect(p.speed_ms).toBeCloseTo(7.207769, 6);
    expect(p.sspeed_ms).toBeCloseTo(0.029771, 6);
    expect(p.direction_deg).toBeCloseTo(123.722780, 5);
    expect(p.sdirection_deg).toBeCloseTo(0.236655, 6);
    expect(p.rmse_ms).toBeCloseTo(0.033285, 6);
    expect(p.r2).toBeCloseTo(0.999915, 6);
  });

  it('speed and direction uncertainty follow first-order propagation (GUM): zero covariance case by hand', () => {
    // u = 3, v = 4 (S = 5), s_u = 0.1, s_v = 0.2, no covariance: s_S = sqrt(9*0.01 + 16*0.04)/5 = sqrt(0.73)/5;
    // s_D = sqrt(16*0.01 + 9*0.04)/25 rad = sqrt(0.52)/25 rad.
    const r = speedDirection(3, 4, 0.01, 0.04, 0);
    expect(r.sspeed).toBeCloseTo(Math.sqrt(0.73) / 5, 12);
    expect(r.sdir).toBeCloseTo((Math.sqrt(0.52) / 25) * (180 / Math.PI), 10);
    // Wind toward north-east (u = v = 1 > 0) comes from 225 degrees.
    expect(speedDirection(1, 1, 0, 0, 0).dir).toBeCloseTo(225, 12);
  });
});

describe('DBS (four beams 90 degrees apart, optional vertical beam)', () => {
  const dbs = { mode: 'dbs', heights_m: { min: 100, max: 100, step: 20 }, pattern: { elevation_deg: 62, azimuths_deg: [0, 90, 180, 270], vertical: true, ranges_m: [100] } };
  // REFERENCES.md 8 [numpy], zenith 28: v_N, v_E, v_S, v_W, v_up = -1.231825, 2.523947, 1.585004, -2.170768, 0.2.
  const quoted = [{ az: 0, el: 62, vr: -1.231825 }, { az: 90, el: 62, vr: 2.523947 }, { az: 180, el: 62, vr: 1.585004 }, { az: 270, el: 62, vr: -2.170768 }];

  it('equals the classic formulas u = (v_E - v_W)/(2 sin z), v = (v_N - v_S)/(2 sin z) with and without the vertical beam', () => {
    const four = ring(dbs, quoted);
    const [p4] = solveProfile(four.st, four.l);
    // Classic from the quoted values: u = (2.523947 + 2.170768)/(2 sin 28) = 5.0000; v = -3.0000 (geometry_single.out:
    // dbs classic u v 5.0 -3.0). 2e-6: the quoted values carry 6 decimals.
    expect(p4.u_ms).toBeCloseTo(5, 5);
    expect(p4.v_ms).toBeCloseTo(-3, 5);
    expect(p4.w_ms).toBeCloseTo(0.2, 5);
    // The declared vertical beam is missing: flagged, the fit kept from the slanted beams.
    expect(p4.flag).toBe('missing_beam');
    expect(p4.reason).toMatch(/vertical beam/);
    const five = ring(dbs, [...quoted, { az: 0, el: 90, vr: 0.2 }]);
    const [p5] = solveProfile(five.st, five.l);
    expect(p5.flag).toBe('ok');
    expect(p5.u_ms).toBeCloseTo(5, 5);
    expect(p5.w_ms).toBeCloseTo(0.2, 5);
  });

  it('a missing slanted beam gives no fit and a reason naming where the gap is (never a silent zero)', () => {
    const { l, st } = ring(dbs, [quoted[0], quoted[1], quoted[2], { az: 0, el: 90, vr: 0.2 }]);
    const [p] = solveProfile(st, l);
    expect(p.flag).toBe('missing_beam');
    expect(Number.isNaN(p.u_ms)).toBe(true);
    expect(p.reason).toMatch(/around azimuth 270/);
  });
});

describe('bad input and the homogeneity check', () => {
  it('too few azimuths for the fit: flagged with no values', () => {
    const { l, st } = ring(vad, [{ az: 0, el: 60, vr: 1 }, { az: 120, el: 60, vr: 2 }, { az: 240, el: 60, vr: 0.5 }]);
    const [p] = solveProfile(st, l);
    expect(p.flag).toBe('too_few_azimuths');
    expect(Number.isNaN(p.speed_ms)).toBe(true);
    expect(p.reason).toMatch(/3 sectors/);
  });

  it('a one-sided cone is flagged azimuth_gap (values kept)', () => {
    const U = [5, -3, 0];
    const secs = [0, 30, 60, 90, 120].map((az) => { const b = beamOf(az, 60); return { az, el: 60, vr: b[0] * U[0] + b[1] * U[1] }; });
    const { l, st } = ring(vad, secs);
    const [p] = solveProfile(st, l);
    expect(p.flag).toBe('azimuth_gap');
    expect(p.maxGap_deg).toBeCloseTo(240, 6);
    expect(p.u_ms).toBeCloseTo(5, 6);
  });

  it('a wind that differs across the ring fails the homogeneity check', () => {
    // Half the ring sees 5 m/s from the west, the other half 1 m/s from the south: no uniform wind fits.
    const secs = Array.from({ length: 12 }, (_, k) => {
      const b = beamOf(30 * k, 60);
      const U = k < 6 ? [5, 0, 0] : [0, 1, 0];
      return { az: 30 * k, el: 60, vr: b[0] * U[0] + b[1] * U[1] };
    });
    const { l, st } = ring(vad, secs);
    const [p] = solveProfile(st, l);
    expect(p.flag).toBe('inhomogeneous');
    expect(p.r2).toBeLessThan(0.9);
  });

  it('largestGap works on the circle', () => {
    expect(largestGap([350, 10])).toBe(340);
    expect(largestGap([0, 90, 180, 270])).toBe(90);
  });
});

describe('profile target', () => {
  it('keys samples by height bin and north-centred sector, the vertical beam apart', () => {
    const c = campaign({ mode: 'dbs', heights_m: { min: 40, max: 100, step: 20 }, sectors: 4 });
    const layouts = profilerLayouts(c.instruments);
    const tg = new ProfileTarget(layouts, 1, 0);
    const acc = new CellAccumulator(tg.keyCount, 1);
    const frame = windowFrame(0, 1, 0);
    const add = (az: number, el: number, z: number) => { const b = beamOf(az, el); return tg.add(acc, frame, 0, sampleOf(1, b[0], b[1], b[2], 0, 0, z)); };
    expect(add(359, 62, 61)).toBe(true); // sector 0 (north), height bin 1 (60 m)
    expect(add(44, 62, 61)).toBe(true); // still sector 0: within 45 deg of north
    expect(add(46, 62, 61)).toBe(true); // sector 1 (east)
    expect(add(0, 90, 61)).toBe(true); // vertical sector 4
    expect(add(0, 62, 111)).toBe(false); // above the last bin (100 + 10)
    const keys = [...acc.keyOf.slice(0, acc.slots)].sort((a, b) => a - b);
    // key = hb * (S + 1) + sector with one instrument: 1*5+0, 1*5+1, 1*5+4.
    expect(keys).toEqual([5, 6, 9]);
    const r = robustFilter(acc, { enabled: true, k: 3.5, minSamples: 5 });
    expect(r.stats.n[5]).toBe(2);
  });
});

describe('a profile as inflow reference', () => {
  it('projects each ok height on the downstream direction and fits the law through them with their uncertainty', () => {
    // Power law alpha = 0.2, 8 m/s at 100 m (REFERENCES.md 5 [numpy]: V(60) = 7.223044, V(160) = 8.788484), wind
    // from 270 (u = +S east): the projection on d = -(sin 270, cos 270) = (1, 0) returns S.
    const pts = [60, 100, 160].map((z) => {
      const S = 8 * Math.pow(z / 100, 0.2);
      return { instrumentId: 'p', height_m: z, sampleHeight_m: z, radius_m: 50, u_ms: S, v_ms: 0, w_ms: 0, su_ms: 0.05, sv_ms: 0.05, sw_ms: 0.02, speed_ms: S, sspeed_ms: 0.05, direction_deg: 270, sdirection_deg: 0.3, sectors: 12, samples: 600, rmse_ms: 0.05, r2: 0.99, chi2dof: 1, maxGap_deg: 30, flag: 'ok' as const, reason: '' };
    });
    expect(pts[0].speed_ms).toBeCloseTo(7.223044, 6);
    const p = inflowFromProfile([...pts, { ...pts[0], height_m: 200, sampleHeight_m: 200, flag: 'too_few_azimuths' }], 270, 100, 'power', 'p');
    expect(p.ok).toBe(true);
    expect(p.alpha).toBeCloseTo(0.2, 9);
    expect(p.hubSpeed_ms).toBeCloseTo(8, 9);
    expect(p.heights_m).toEqual([60, 100, 160]); // the flagged height is left out
    expect(p.speedsSd_ms).toEqual([0.05, 0.05, 0.05]);
  });
});
