/**
 * The data-driven CNR limit (src/qc/cnrEvidence.ts, src/qc/cnrLimit.ts): against an independent numpy computation of
 * the same statistic (test/reference/cnr_limit.py, output quoted), and on synthetic samples our simulator did not
 * shape (test/helpers/junkSamples.ts: every row its own angles, a wake-like deficit with doubled turbulence in it,
 * realistic CNR spread) with known break points, several junk levels, kinds and shares; the fallbacks.
 */
import { describe, expect, it } from 'vitest';
import { cnrEvidence } from '../src/qc/cnrEvidence.ts';
import { chooseCnrLimit, estimateCnrLimit } from '../src/qc/cnrLimit.ts';
import { junkSamples } from './helpers/junkSamples.ts';

/** The reference data set of test/reference/cnr_limit.py (its docstring states the formulas). */
function referenceData() {
  const N = 6000;
  const time = new Float64Array(N), azimuth = new Float64Array(N), elevation = new Float64Array(N), range = new Float64Array(N);
  const radialVelocity = new Float64Array(N), cnr = new Float64Array(N);
  const u = (i: number, k: number) => { const x = Math.sin(12.9898 * i + 78.233 * k) * 43758.5453; return x - Math.floor(x); };
  for (let i = 0; i < N; i++) {
    time[i] = 1.7e9 + 0.1 * i;
    azimuth[i] = 100.3 + (Math.floor(i / 8) % 10);
    elevation[i] = 2.3;
    range[i] = 65 + 30 * (i % 8);
    cnr[i] = -5 - 3 * (i % 8) + 4 * (u(i, 1) - 0.5);
    radialVelocity[i] = cnr[i] < -20 ? -15 + 30 * u(i, 3) : 6 * Math.sin((azimuth[i] * Math.PI) / 180) + 0.8 * (u(i, 2) - 0.5) * Math.sqrt(12) * 0.5;
  }
  return { length: N, time, azimuth, elevation, range, radialVelocity, cnr };
}

describe('CNR limit: against the numpy reference (test/reference/cnr_limit.py)', () => {
  // Printed by `python3 test/reference/cnr_limit.py` (numpy 2.4; test/reference/cnr_limit.out):
  //   referenced 5360, scatter 0.512632, reference share 0.000000, limit -20.0 (the class [-21, -19) refined bin by bin)
  //     class [-28, -25) n 554 inconsistent share 0.850181
  //     class [-25, -24) n 290 inconsistent share 0.875862
  //     class [-24, -22) n 364 inconsistent share 0.854396
  //     class [-22, -21) n 318 inconsistent share 0.858491
  //     class [-21, -19) n 377 inconsistent share 0.472149
  //     class [-19, -18) n 306 ... [-5, -3) n 302: inconsistent share 0 (ten classes)
  it('the scatter, every class and the limit', () => {
    const ev = cnrEvidence(referenceData());
    const d = chooseCnrLimit(ev);
    expect(ev.referenced).toBe(5360); // counts: exact
    // Printed to 6 decimals; the same arithmetic (sin may differ by an ulp, amplified by 43758 to ~1e-11): 1e-6.
    expect(ev.scatter_ms).toBeCloseTo(0.512632, 6);
    const want = [[-28, -25, 554, 0.850181], [-25, -24, 290, 0.875862], [-24, -22, 364, 0.854396], [-22, -21, 318, 0.858491], [-21, -19, 377, 0.472149]];
    want.forEach(([lo, hi, n, share], k) => {
      expect([d.classes[k].lo_db, d.classes[k].hi_db, d.classes[k].samples]).toEqual([lo, hi, n]); // exact
      expect(d.classes[k].inconsistentShare).toBeCloseTo(share, 6); // printed to 6 decimals
    });
    expect(d.classes.map((c) => [c.lo_db, c.samples]).slice(5)).toEqual([[-19, 306], [-18, 379], [-16, 280], [-15, 386], [-13, 267], [-12, 378], [-10, 308], [-9, 364], [-7, 487], [-5, 302]]);
    expect(d.classes.slice(5).every((c) => c.inconsistentShare === 0)).toBe(true);
    expect(d.referenceShare).toBe(0);
    expect(d.min_db).toBe(-20); // exact: a bin edge
    expect(d.status).toBe('break');
  });
});

describe('CNR limit: known break points on data our simulator did not shape', () => {
  // Every row its own angles; CNR spread 2.5 dB about its range trend; turbulence 0.4 m/s, doubled in the deficit.
  // Tolerance: the limit is a class edge and classes are 1 dB wide where data are dense: within 1 dB of the true
  // break. Above it the samples are all good, so a limit higher than the break by up to 1 dB rejects at most one
  // class of good samples; lower would let a class of junk in.
  const cases: [number, 'uniform' | 'gauss', number][] = [
    [-18, 'uniform', 1], [-22, 'gauss', 1], [-25, 'uniform', 0.5], [-28, 'gauss', 0.5], [-31, 'uniform', 1],
  ];
  for (const [level, kind, share] of cases) {
    it(`junk below ${level} dB (${kind}, ${share * 100} % of the samples below it)`, () => {
      const s = junkSamples({ junkBelow_db: level, junkKind: kind, junkShare: share, rows: 40000, seed: 100 - level, cnr250_db: level < -29 ? -12 : -8 });
      const { decision: d } = estimateCnrLimit(s);
      expect(d.status).toBe('break');
      expect(d.min_db).toBeGreaterThanOrEqual(level);
      expect(d.min_db).toBeLessThanOrEqual(level + 1);
    });
  }

  it('a junk population of velocities near zero (Gaussian, sd 2 m/s) is found as well', () => {
    const s = junkSamples({ junkBelow_db: -24, junkKind: 'gauss', junkSpan_ms: 6, rows: 40000, seed: 5 });
    const { decision: d } = estimateCnrLimit(s);
    expect(d.min_db).toBeGreaterThanOrEqual(-24); // 1 dB, as above
    expect(d.min_db).toBeLessThanOrEqual(-23);
  });
});

describe('CNR limit: no break, too few samples, no CNR', () => {
  it('all data good: no clear break, the permissive fallback (the lower of -35 dB and the lowest CNR seen)', () => {
    const s = junkSamples({ junkBelow_db: -99, rows: 40000 });
    const { decision: d } = estimateCnrLimit(s);
    expect(d.status).toBe('no-break');
    let lowest = Infinity;
    for (let i = 0; i < s.length; i++) lowest = Math.min(lowest, s.cnr[i]);
    // The fallback is min(-35, floor of the lowest CNR): exact.
    expect(d.min_db).toBe(Math.min(-35, Math.floor(lowest)));
  });

  it('too few samples: the limit without evidence, said so', () => {
    const s = junkSamples({ junkBelow_db: -25, rows: 1500 });
    const { decision: d } = estimateCnrLimit(s, {}, { withoutEvidence_db: -26 });
    expect(d.status).toBe('too-few-samples');
    expect(d.min_db).toBe(-26);
  });

  it('no CNR column (NaN everywhere): no-cnr', () => {
    const s = junkSamples({ junkBelow_db: -25, rows: 5000 });
    s.cnr.fill(NaN);
    const { decision: d } = estimateCnrLimit(s);
    expect(d.status).toBe('no-cnr');
  });

  it('empty input', () => {
    const s = junkSamples({ junkBelow_db: -25, rows: 0 });
    expect(estimateCnrLimit(s).decision.status).toBe('no-cnr');
  });
});
