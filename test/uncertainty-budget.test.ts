/**
 * The uncertainty budget's terms (src/retrieval/budget.ts, sampling.ts) against hand-worked examples with their
 * sources written beside the arithmetic, the linear propagation against a Monte Carlo propagation of distributions
 * (JCGM 101:2008), the effective-count formula against its published limits, and the accumulator's budget sums
 * against exact merging.
 */
import { describe, expect, it } from 'vitest';
import { CellAccumulator, F, STRIDE } from '../src/grid/accumulator.ts';
import { mulberry32, gaussian } from '../src/math/random.ts';
import { cellBudget, derivatives, NT, probeSecondMoment, secondDerivativeVariances, sensitivity, type BudgetSettings, type CellRows } from '../src/retrieval/budget.ts';
import { emptyCellStats } from '../src/retrieval/cellStats.ts';
import { robustFilter } from '../src/retrieval/robustFilter.ts';
import { burstMeanVariance, effectiveCount, emptyKeySampling, instrumentSampling, keySampling, MIN_INFLATION } from '../src/retrieval/sampling.ts';
import { pulseWidthParameter } from '../src/geometry/probe.ts';
import { cellOf, unit } from './helpers/budgetCell.ts';

const DEG = Math.PI / 180;

function settings(I: number, over: Partial<BudgetSettings> = {}): BudgetSettings {
  return {
    enabled: true, pointingAz_deg: new Float64Array(I), pointingEl_deg: new Float64Array(I), position_m: new Float64Array(I),
    probeMoment2: () => 0, maxCombined_ms: Infinity, ...over,
  };
}

describe('effective sample count of an AR(1) series', () => {
  it('hand-worked: n = 4, r = 0.5 gives 16 / (4 + 2 * 2.125) = 1.93939', () => {
    // sum_{j=1}^{3} (4 - j) 0.5^j = 3 * 0.5 + 2 * 0.25 + 1 * 0.125 = 2.125 (the variance of the mean of an
    // autocorrelated series: Bayley & Hammersley 1946, eq. for the effective number of observations).
    expect(effectiveCount(4, 0.5)).toBeCloseTo(16 / 8.25, 12); // closed form vs hand sum: rounding only
  });

  it('tends to n (1 - r) / (1 + r) for long series and to T / (2 tau) for dense sampling (Lenschow, Mann & Kristensen 1994)', () => {
    const n = 100000, r = 0.6;
    // Large-n limit of the AR(1) variance of the mean (e.g. Zieba 2010, Metrol. Meas. Syst. 17(1), eq. 5).
    expect(effectiveCount(n, r) / (n * (1 - r) / (1 + r))).toBeCloseTo(1, 3); // O(1/n) end effect: below 1e-3
    // Dense sampling: dt = 0.01 s, tau = 1 s, T = n dt = 1000 s: N_eff -> T / (2 tau) = 500 (to O(dt / tau)).
    const dt = 0.01, tau = 1;
    // End effect 2 r / (n (1 - r^2)) = 1e-3 relative, tanh(dt / 2 tau) vs dt / 2 tau 1e-5: within 2e-3.
    expect(Math.abs(effectiveCount(n, Math.exp(-dt / tau)) / (n * dt / (2 * tau)) - 1)).toBeLessThan(2e-3);
    expect(effectiveCount(50, 0)).toBe(50); // independent samples: no correction
  });
});

describe('sampling term from the accumulator', () => {
  it('hand-worked: 20 bursts alternating 1 and 3 m/s, 4 samples each, give the inflation (C_run / B) / (s^2 / n)', () => {
    const acc = new CellAccumulator(1, 1);
    let t = 1000;
    for (let b = 0; b < 20; b++) {
      for (let k = 0; k < 4; k++) acc.add(0, b % 2 ? 3 : 1, 1, 0, 0, 0, 0, t + k * 0.25, NaN);
      t += 60; // 60 s between passes: a new burst each time (gap > 5 s)
    }
    const { stats } = robustFilter(acc, { enabled: false, k: 3.5, minSamples: 5 }, { start_s: 1000, end_s: 2200 });
    // Burst means alternate 1, 3: C_run = 20 * 1 / 19 = 1.052632 (sample variance, mean 2, deviations +-1), over
    // B = 20: var(mean) = 0.0526316. Samples: n = 80, s^2 = 80 * 1 / 79 = 1.012658, s^2 / n = 0.01265823.
    // Inflation F = 0.0526316 / 0.01265823 = 4.157895; sampling variance (F - 1) s^2 / n = 0.0399723.
    const n = 80, s2n = 80 / 79 / 80, vm = 20 / 19 / 20;
    expect(stats.vb[0] / (n * n)).toBeCloseTo(vm - s2n, 9); // fixed-point means (2^-10 m/s) are exact here
    expect(stats.ne[0]).toBeCloseTo(n / (vm / s2n), 6); // effective samples n / F = 19.24
  });

  it('bursts of unequal size and beam direction: the sums give the cluster-robust variance of the weighted mean of a_b - V . e_b', () => {
    // Cluster-robust (sandwich) variance of a mean over clusters (White 1980, Econometrica 48, 817-838; Liang &
    // Zeger 1986, Biometrika 73, 13-22; from memory): var = B / (B - 1) sum_b n_b^2 (r_b - rbar)^2 / (sum n_b)^2,
    // rbar the n-weighted mean of r_b. Computed here directly from the samples, against the accumulator's sums.
    const acc = new CellAccumulator(1, 1);
    const rnd = mulberry32(4);
    const V = [7.5, -0.6, 0.3];
    const sizes = [1, 9, 3, 16, 2, 7, 4, 12];
    const bursts: { n: number; sv: number; e: number[] }[] = [];
    let t = 5000;
    sizes.forEach((nb, b) => {
      // Each burst: rays of 1 to 3 gates, each ray its own beam (the scanner moves on), a burst-level offset + noise.
      const off = 0.4 * gaussian(rnd);
      const rec = { n: 0, sv: 0, e: [0, 0, 0] };
      let left = nb, tr = t;
      while (left > 0) {
        const gates = Math.min(left, 1 + Math.floor(3 * rnd()));
        const e = unit(20 + 30 * rnd() + 4 * b, 2 + 10 * rnd());
        for (let g = 0; g < gates; g++) {
          const vr = V[0] * e[0] + V[1] * e[1] + V[2] * e[2] + off + 0.2 * gaussian(rnd);
          acc.add(0, vr, e[0], e[1], e[2], 0, 0, tr, NaN);
          rec.n++; rec.sv += vr; e.forEach((x, k) => (rec.e[k] += x));
        }
        left -= gates; tr += 0.3;
      }
      bursts.push(rec);
      t += 40; // a new pass (gap > 5 s)
    });
    acc.closeRays();
    const direct = (vel: number[] | undefined) => {
      const r = bursts.map((b) => b.sv / b.n - (vel ? vel.reduce((a, v, k) => a + (v * b.e[k]) / b.n, 0) : 0));
      const N = bursts.reduce((a, b) => a + b.n, 0);
      const rbar = bursts.reduce((a, b, i) => a + b.n * r[i], 0) / N;
      const B = bursts.length;
      return (B / (B - 1)) * bursts.reduce((a, b, i) => a + b.n * b.n * (r[i] - rbar) ** 2, 0) / (N * N);
    };
    const vel = Float64Array.from(V);
    // Tolerance: burst means are rounded to 2^-10 m/s and mean beam components to 2^-12, so each r_b is off by at most
    // 2^-11 + |V|_1 2^-13 = 1.5e-3 m/s; the variance (about 0.02 here) moves by well under 3 %.
    expect(Math.abs(burstMeanVariance(acc.sums, 0, 0, 0, vel) / direct(V) - 1)).toBeLessThan(0.03);
    expect(Math.abs(burstMeanVariance(acc.sums, 0, 0, 0) / direct(undefined) - 1)).toBeLessThan(0.03);
    // The beam directions explain part of the plain scatter: the residual variance is the smaller one here.
    expect(burstMeanVariance(acc.sums, 0, 0, 0, vel)).toBeLessThan(burstMeanVariance(acc.sums, 0, 0, 0));
  });

  it('burst means that differ only by their beam direction (a_b = V . e_b exactly): no sampling variance with V', () => {
    const acc = new CellAccumulator(1, 1);
    const V = [8, 0.5, -0.2];
    let t = 100;
    for (let b = 0; b < 12; b++) {
      const e = unit(30 + 3 * b, 5 + 0.5 * b); // each pass another point of the cell
      for (let k = 0; k < 1 + (b % 4); k++) acc.add(0, V[0] * e[0] + V[1] * e[1] + V[2] * e[2], e[0], e[1], e[2], 0, 0, t + 0.25 * k, NaN);
      t += 30;
    }
    acc.closeRays();
    // Without V the burst means scatter by 8 m/s times the spread of e_x (a few hundredths): a variance of order 1e-2.
    expect(burstMeanVariance(acc.sums, 0, 0, 0)).toBeGreaterThan(1e-3);
    // With V only the rounding of a_b (2^-11 m/s at most) and e_b (8.7 * 2^-13) is left: below (2e-3)^2.
    expect(burstMeanVariance(acc.sums, 0, 0, 0, Float64Array.from(V))).toBeLessThan(4e-6);
  });

  it('structure-function fit recovers the integral time scale and the noise share of an Ornstein-Uhlenbeck series with noise', () => {
    // A staring beam: exp(-|dt| / tau) correlation (Uhlenbeck & Ornstein 1930) with tau = 2 s sampled every 0.5 s
    // (r = exp(-0.25) = 0.7788), turbulence variance 1, white noise variance 0.09: phi = 1 / 1.09 = 0.917.
    const rnd = mulberry32(11);
    const acc = new CellAccumulator(1, 1);
    const tau = 2, dt = 0.5, r = Math.exp(-dt / tau);
    let x = gaussian(rnd);
    for (let j = 0; j < 40000; j++) {
      x = r * x + Math.sqrt(1 - r * r) * gaussian(rnd);
      acc.add(0, 5 + x + 0.3 * gaussian(rnd), 1, 0, 0, 0, 0, 1000 + j * dt, NaN);
    }
    acc.closeRays();
    const [is] = instrumentSampling(acc);
    // 40000 samples: the lag structure is known to about 1 %, the three-lag fit amplifies it about tenfold.
    expect(is.tau_s).toBeGreaterThan(tau * 0.85);
    expect(is.tau_s).toBeLessThan(tau * 1.15);
    expect(is.phi).toBeGreaterThan(0.917 - 0.05);
    expect(is.phi).toBeLessThan(0.917 + 0.05);
    // One run only: the inflation comes from the model, n / N_eff with N_eff ~ n (1 - r) / (1 + r) for the
    // turbulence part: F ~ (0.09 + 1 * (1 + r) / (1 - r)) / 1.09 = 7.37.
    const ks = keySampling(acc, 0, is, emptyKeySampling());
    expect(ks.inflation / 7.37).toBeGreaterThan(0.85); // same tolerance as tau (F follows r)
    expect(ks.inflation / 7.37).toBeLessThan(1.15);
  });

  it('independent samples: no sampling term beyond the scatter (inflation near 1)', () => {
    const rnd = mulberry32(5);
    const acc = new CellAccumulator(1, 1);
    for (let b = 0; b < 60; b++) for (let k = 0; k < 4; k++) acc.add(0, 5 + 0.4 * gaussian(rnd), 1, 0, 0, 0, 0, 1000 + b * 30 + k * 0.25, NaN);
    acc.closeRays();
    const [is] = instrumentSampling(acc);
    // C_run / B over s^2 / n has a scaled chi-square distribution with 59 degrees of freedom: within 1 +- 0.5 at
    // more than 99.9 % (sd sqrt(2 / 59) = 0.18).
    expect(is.inflation).toBeLessThan(1.5);
  });
});

describe('inflation below 1: scatter the passes repeat', () => {
  it('hand-worked: every pass samples the same four points (v_r 1, 2, 3, 4 m/s, no noise): the mean does not vary, F at its guard', () => {
    const acc = new CellAccumulator(1, 1);
    for (let b = 0; b < 24; b++) for (let k = 0; k < 4; k++) acc.add(0, 1 + k, 1, 0, 0, 0, 0, 1000 + b * 30 + k * 0.25, NaN); // 24 passes: MIN_RUNS 20
    acc.closeRays();
    const [is] = instrumentSampling(acc);
    // Burst means all 2.5: the cluster-robust variance is 0 while s^2 / n = (96 * 1.25 / 95) / 96 > 0; the samples'
    // spread is a fixed function of where they sit, no error of the mean. F is held at the guard, not at 1.
    expect(is.inflation).toBeCloseTo(MIN_INFLATION, 12);
  });

  it('a key whose inflation is below 1 has its scatter term lowered by the (negative) sampling sum, the sampling term zero', () => {
    const beams = [[1, 0, 0], [0, 1, 0], [0, 0, 1]];
    const cell = cellOf(beams, [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const st = emptyCellStats(3, 3);
    st.n.set([10, 10, 10]);
    // Instrument 0: F = 0.4 with s^2 / n = 0.01, so vb = n^2 (F - 1) s^2 / n = 100 * (-0.006); instrument 1: F = 2.
    st.vb.set([100 * -0.006, 100 * 0.01, 0]);
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, st, {
      c: 0, secondAxis: 2, level_m: 0, U: new Float64Array(3), D: new Float64Array(15), py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3), Float64Array.of(0.01, 0.01, 0.01), out);
    // H = identity: u = beam 0 alone, v = beam 1 alone (hand-worked: 0.01 - 0.006 = 0.004; 0.01 and 0.01).
    expect(out[0]).toBeCloseTo(0.004, 15);
    expect(out[1]).toBe(0);
    expect(out[NT]).toBeCloseTo(0.01, 15);
    expect(out[NT + 1]).toBeCloseTo(0.01, 15);
  });
});

describe('noise of the curvature in the probe term', () => {
  it('hand-worked: second-difference variance (s_-^2 + 4 s_0^2 + s_+^2) / d^4, removed from the squared curvature', () => {
    // v along y: 0, 0.8, 0 on a 20 m grid: d2v/dy2 = -1.6 / 400 = -0.004; values' standard uncertainty 0.1 m/s:
    // var = (0.01 + 0.04 + 0.01) / 20^4 = 3.75e-7 (of the curvature squared 1.6e-5).
    const f = Float64Array.of(0, 0.8, 0), s = Float64Array.of(0.1, 0.1, 0.1), v2 = new Float64Array(3);
    secondDerivativeVariances(f, s, 3, 1, 20, 20, 1, v2);
    expect(v2[0]).toBeCloseTo(3.75e-7, 18);
    expect(v2[1]).toBe(0); // no stencil along the second axis
    const D = new Float64Array(15);
    D[1 * 5 + 2] = -0.004;
    const cell = cellOf([[0, 1, 0], [1, 0, 0], [0, 0, 1]], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const out = new Float64Array(3 * NT);
    const D2Var = new Float64Array(9);
    D2Var[1 * 3] = v2[0];
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 100, U: Float64Array.of(8, 0, 0), D, py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2),
      insPos: Float64Array.of(100, -300, 0, -200, 0, 0, 100, 0, -300), yc: 0, zc: 0, dirUnc_rad: 0, D2Var,
    }, settings(3, { probeMoment2: () => 237.078 }), new Float64Array(3), out);
    // Beam 0 along y carries v: probe^2 = (m2 / 2)^2 (1.6e-5 - 3.75e-7) (rounding only).
    expect(Math.sqrt(out[1 * NT + 3])).toBeCloseTo(0.5 * 237.078 * Math.sqrt(1.6e-5 - 3.75e-7), 12);
  });
});

describe('merging keeps the budget sums exact except pairs across the boundary', () => {
  it('one window split in two shards: every sum equal, lag-k pairs off by at most k, rays and bursts by one', () => {
    const rnd = mulberry32(9);
    const whole = new CellAccumulator(1, 1), a = new CellAccumulator(1, 1), b = new CellAccumulator(1, 1);
    for (let j = 0; j < 400; j++) {
      const t = 1000 + j * 0.25 + (j % 8 === 0 ? 10 : 0) * Math.floor(j / 8), v = 5 + gaussian(rnd);
      whole.add(0, v, 1, 0, 0, 0, 0, t, 1050);
      (j < 203 ? a : b).add(0, v, 1, 0, 0, 0, 0, t, 1050);
    }
    whole.closeRays();
    a.merge(b);
    const exact = [F.n, F.sv, F.sv2h, F.sv2l, F.th, F.tl, F.hn, F.hv];
    for (const f of exact) expect(a.sums[f], `field ${f}`).toBe(whole.sums[f]); // integer sums: exact
    // One boundary: the pairs of lag k that straddle it, at most k.
    [F.l1n, F.l2n, F.l3n].forEach((f, k) => expect(whole.sums[f] - a.sums[f]).toBeLessThanOrEqual(k + 1));
    expect(a.sums[F.ra] - whole.sums[F.ra]).toBeLessThanOrEqual(1); // a ray cut in two
    expect(a.sums[F.rb] - whole.sums[F.rb]).toBeLessThanOrEqual(1); // a burst cut in two
    expect(STRIDE).toBeGreaterThan(F.hv); // every budget field lives in the accumulator's own array
  });
});

describe('pointing, probe and position terms', () => {
  // Three beams and a uniform wind U = (8, 1, 0.5) m/s (rotor frame); equal weights 1.
  const beams = [unit(30, 10), unit(-40, 15), unit(170, 20)];
  const U = Float64Array.of(8, 1, 0.5);

  it('azimuth error: the hand-derived sensitivity (dn/daz . U) times H, against a Monte Carlo propagation (JCGM 101:2008)', () => {
    const cell = cellOf(beams, [1, 1, 1]);
    const H = new Float64Array(9);
    expect(sensitivity(cell, H)).toBe(true);
    const sAz = 0.5; // degrees, every instrument
    const set = settings(3, { pointingAz_deg: Float64Array.of(sAz, sAz, sAz) });
    const out = new Float64Array(3 * NT);
    const st = emptyCellStats(3, 3);
    cellBudget(cell, H, st, {
      c: 0, secondAxis: 2, level_m: 0, U, D: new Float64Array(15), py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, set, new Float64Array(3), out);
    // Hand: a beam at azimuth a, elevation e measures n(a).U; an azimuth error da changes it by
    // da * (cos e cos a, -cos e sin a, 0) . U = da * (n_y u - n_x v) (derivative of n = (cos e sin a, cos e cos a, sin e)).
    // The WLS is linear, U_hat = H m, so u_k = sqrt(sum_i H_ki^2 (n_iy u - n_ix v)^2) sA (GUM eq. 10).
    const g = beams.map((n) => n[1] * U[0] - n[0] * U[1]);
    for (let k = 0; k < 3; k++) {
      const hand = Math.sqrt(g.reduce((s, gi, i) => s + (H[k * 3 + i] * gi * sAz * DEG) ** 2, 0));
      expect(Math.sqrt(out[k * NT + 2])).toBeCloseTo(hand, 12); // same arithmetic: rounding only
    }
    // Monte Carlo: draw the azimuth errors, measure with the true beams, retrieve with the nominal ones.
    const rnd = mulberry32(3);
    const M = 20000;
    const sum2 = [0, 0, 0];
    for (let j = 0; j < M; j++) {
      const m = beams.map((_, i) => {
        const b = [30, -40, 170][i] + sAz * gaussian(rnd);
        const n = unit(b, [10, 15, 20][i]);
        return n[0] * U[0] + n[1] * U[1] + n[2] * U[2];
      });
      for (let k = 0; k < 3; k++) {
        const est = H[k * 3] * m[0] + H[k * 3 + 1] * m[1] + H[k * 3 + 2] * m[2];
        sum2[k] += (est - U[k]) ** 2;
      }
    }
    for (let k = 0; k < 3; k++) {
      const mc = Math.sqrt(sum2[k] / M), lin = Math.sqrt(out[k * NT + 2]);
      // 20000 draws: the MC standard deviation is known to 1/sqrt(2M) = 0.5 %; the second-order term of a 0.5 degree
      // error is (da^2 / 2) |n . U| ~ 3e-4 m/s, far below. Agreement within 3 %.
      expect(Math.abs(mc / lin - 1)).toBeLessThan(0.03);
    }
  });

  it('where linear and Monte Carlo differ: a 10 degree azimuth error (the cosine term is no longer small)', () => {
    const cell = cellOf(beams, [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const sAz = 10;
    const g = beams.map((n) => n[1] * U[0] - n[0] * U[1]);
    const lin = Math.sqrt(g.reduce((s, gi, i) => s + (H[i] * gi * sAz * DEG) ** 2, 0));
    const rnd = mulberry32(4);
    let s1 = 0, s2 = 0;
    const M = 20000;
    for (let j = 0; j < M; j++) {
      const m = beams.map((_, i) => {
        const n = unit([30, -40, 170][i] + sAz * gaussian(rnd), [10, 15, 20][i]);
        return n[0] * U[0] + n[1] * U[1] + n[2] * U[2];
      });
      const e = H[0] * m[0] + H[1] * m[1] + H[2] * m[2] - U[0];
      s1 += e; s2 += e * e;
    }
    const mean = s1 / M, sd = Math.sqrt(s2 / M - mean * mean);
    // The Monte Carlo shows a bias of order (sigma^2 / 2) n . U (E[cos(da)] = exp(-sigma^2 / 2) = 0.985) that the
    // linear propagation does not have; the spread still agrees within 10 %. Stated in README (Uncertainty).
    expect(Math.abs(mean)).toBeGreaterThan(0.02);
    expect(Math.abs(sd / lin - 1)).toBeLessThan(0.1);
  });

  it('probe term: half the pulsed weighting\'s second moment times the curvature along the beam (hand-worked)', () => {
    // Pulse 200 ns, gate 30 m: r_p = c tau / (4 sqrt(ln 2)) = 299792458 * 2e-7 / (4 * 0.832555) = 18.0043 m
    // (Banakh & Smalikho 1997, as in geometry/probe.ts); second moment of a Gaussian with exp(-s^2 / r_p^2) is
    // r_p^2 / 2 = 162.078 m^2, of the gate (uniform over 30 m) 30^2 / 12 = 75 m^2: m2 = 237.078 m^2.
    const rp = pulseWidthParameter(200e-9);
    expect(rp).toBeCloseTo(18.0043, 3); // hand arithmetic to 4 decimals
    const m2 = probeSecondMoment('pulsed', NaN, { rp_m: rp, gate_m: 30 });
    expect(m2).toBeCloseTo(237.078, 2);
    // A beam along y (n = (0, 1, 0)) in a field v = c y^2 with c = 0.002 1/(m s): d^2 v_r / ds^2 = 2c = 0.004;
    // the probe-averaged v_r is v_r(p) + m2 / 2 * 0.004 = + 0.474 m/s.
    const D = new Float64Array(15);
    D[1 * 5 + 2] = 0.004; // d^2 v / dy^2
    const cell = cellOf([[0, 1, 0], [1, 0, 0], [0, 0, 1]], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 100, U: Float64Array.of(8, 0, 0), D, py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2),
      insPos: Float64Array.of(100, -300, 0, -200, 0, 0, 100, 0, -300), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3, { probeMoment2: () => m2 }), new Float64Array(3), out);
    expect(Math.sqrt(out[1 * NT + 3])).toBeCloseTo(0.5 * 237.078 * 0.004, 3); // v = beam 0 alone (H = identity)
    expect(Math.sqrt(out[0 * NT + 3])).toBeCloseTo(0, 12); // a beam along x sees no curvature of v along x
  });

  it('position term and finite differences: a linear field u = 8 + 0.01 y, effective position 6 m off the centre', () => {
    // Central difference of a linear field is exact: du/dy = 0.01 1/s; offset 6 m: 0.06 m/s.
    const ny = 5, nz = 3, f = new Float64Array(ny * nz);
    for (let iz = 0; iz < nz; iz++) for (let iy = 0; iy < ny; iy++) f[iz * ny + iy] = 8 + 0.01 * (iy * 20);
    const d = new Float64Array(5);
    derivatives(f, ny, nz, 20, 20, 7, d);
    expect(d[0]).toBeCloseTo(0.01, 12);
    expect(d[2]).toBeCloseTo(0, 12);
    const D = new Float64Array(15);
    D.set(d, 0);
    const cell = cellOf([[1, 0, 0], [0, 1, 0], [0, 0, 1]], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 7, secondAxis: 2, level_m: 0, U: Float64Array.of(8.4, 0, 0), D, py: Float64Array.of(6, 6, 6), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3), new Float64Array(3), out);
    expect(Math.sqrt(out[5])).toBeCloseTo(0.06, 12);
  });

  it('position error of an instrument: n . (grad U) times the position uncertainty, each in-plane axis', () => {
    // Beam 0 along y sees v; v = 0.02 z: d v / dz = 0.02; a 2 m position error (each axis) gives 0.04 m/s on v.
    const D = new Float64Array(15);
    D[1 * 5 + 1] = 0.02;
    const cell = cellOf([[0, 1, 0], [1, 0, 0], [0, 0, 1]], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 0, U: Float64Array.of(8, 0, 0), D, py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3, { position_m: Float64Array.of(2, 0, 0) }), new Float64Array(3), out);
    expect(Math.sqrt(out[1 * NT + 2])).toBeCloseTo(0.04, 12);
  });
});

describe('noise term equals the WLS covariance, and the linear propagation equals a Monte Carlo of the means', () => {
  it('three instruments with different scatter: sqrt(sum H^2 s^2 / n) = sqrt([(A^T W A)^-1]_kk) and the MC spread', () => {
    const beams = [unit(20, 5), unit(-50, 12), unit(160, 25)];
    const varMean = [0.01, 0.04, 0.02]; // s_i^2 / n_i, m^2/s^2
    const cell = cellOf(beams, varMean.map((v) => 1 / v));
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const out = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 0, secondAxis: 2, level_m: 0, U: new Float64Array(3), D: new Float64Array(15), py: new Float64Array(3), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
    }, settings(3), Float64Array.from(varMean), out);
    const rnd = mulberry32(8);
    const M = 20000, s2 = [0, 0, 0];
    for (let j = 0; j < M; j++) {
      const e = varMean.map((v) => Math.sqrt(v) * gaussian(rnd));
      for (let k = 0; k < 3; k++) s2[k] += (H[k * 3] * e[0] + H[k * 3 + 1] * e[1] + H[k * 3 + 2] * e[2]) ** 2;
    }
    for (let k = 0; k < 3; k++) {
      // Linear model: the MC standard deviation agrees to its own sampling error 1/sqrt(2M) = 0.5 % (3 % bound).
      expect(Math.abs(Math.sqrt(s2[k] / M) / Math.sqrt(out[k * NT]) - 1)).toBeLessThan(0.03);
    }
  });
});

describe('turbulence statistics', () => {
  it('crossed-beam variance equations recover var u, v, w from three radial variances (hand-worked, covariances zero)', async () => {
    const { turbulenceOfCell } = await import('../src/retrieval/fieldBudget.ts');
    const { emptyFieldBudget } = await import('../src/retrieval/budget.ts');
    // var(v_r) = sum_k n_k^2 var(U_k) when the covariances vanish. Beams (0.8, 0.6, 0), (0.6, -0.8, 0), (0.6, 0, 0.8)
    // and var u, v, w = 1, 0.5, 0.2: 0.64 + 0.36 * 0.5 = 0.82; 0.36 + 0.64 * 0.5 = 0.68; 0.36 + 0.64 * 0.2 = 0.488.
    const beams = [[0.8, 0.6, 0], [0.6, -0.8, 0], [0.6, 0, 0.8]];
    const radial = [0.82, 0.68, 0.488];
    const st = emptyCellStats(3, 3);
    radial.forEach((s2, k) => { st.vt[k] = 100 * s2; st.nb[k] = 100; st.ne[k] = 50; st.vn[k] = 0; st.ta[k] = 0; });
    const b = emptyFieldBudget(1);
    turbulenceOfCell(cellOf(beams, [1, 1, 1]), st, 0, b.turbulence);
    expect(b.turbulence.variance.u[0]).toBeCloseTo(1, 12); // exact solve: rounding only
    expect(b.turbulence.variance.v[0]).toBeCloseTo(0.5, 12);
    expect(b.turbulence.variance.w[0]).toBeCloseTo(0.2, 12);
    // Uncertainty: var(s_i^2) = 2 s_i^4 / N_eff (variance of a Gaussian sample variance, N_eff = 50) propagated
    // through the first row of B^-1, here from Cramer's rule (independent of the code's 3x3 inverse).
    const B = beams.map((n) => n.map((x) => x * x));
    const det = B[0][0] * (B[1][1] * B[2][2] - B[1][2] * B[2][1]) - B[0][1] * (B[1][0] * B[2][2] - B[1][2] * B[2][0]) + B[0][2] * (B[1][0] * B[2][1] - B[1][1] * B[2][0]);
    // first row of the inverse (cofactors of the first column, transposed), Cramer's rule
    const inv0 = [(B[1][1] * B[2][2] - B[1][2] * B[2][1]) / det, -(B[0][1] * B[2][2] - B[0][2] * B[2][1]) / det, (B[0][1] * B[1][2] - B[0][2] * B[1][1]) / det];
    const hand = Math.sqrt(inv0.reduce((s, g, i) => s + g * g * (2 * radial[i] ** 2) / 50, 0));
    expect(b.turbulence.varianceSe.u[0]).toBeCloseTo(hand, 12);
    expect(b.turbulence.vrTurbVar[0]).toBeCloseTo((0.82 + 0.68 + 0.488) / 3, 12); // sample-weighted mean, equal n
  });

  it('added turbulence intensity: sqrt(I_wake^2 - I_ambient^2) of the medians (hand-worked)', async () => {
    const { addedTurbulence } = await import('../src/wake/addedTurbulence.ts');
    // Wake cells (deficit >= 0.3 / 2) have TI 0.14, 0.15, 0.16 (median 0.15); ambient (|deficit| < 0.05) 0.08, 0.09,
    // 0.10 (median 0.09); a cell between (deficit 0.1) counts for neither. sqrt(0.0225 - 0.0081) = 0.12.
    const ti = Float64Array.of(0.14, 0.15, 0.16, 0.08, 0.09, 0.10, 0.5);
    const def = Float64Array.of(0.3, 0.2, 0.25, 0.01, -0.02, 0.0, 0.1);
    const a = addedTurbulence(ti, def, 0.3, 0.05);
    expect([a.wakeCells, a.ambientCells]).toEqual([3, 3]);
    expect(a.added).toBeCloseTo(0.12, 12);
  });
});

describe('timing term (non-simultaneity)', () => {
  it('hand-worked: a linear trend of 0.001 m/s per s sampled off the window middle gives e = sqrt(b^2 - var b) * (mean time - middle)', () => {
    // Window [0, 600): middle 300 s, half length 300 s. 22 passes at t = 60 + 24 k (k = 0..21), 4 samples 0.25 s
    // apart, v = 5 + 0.001 (t - 300), no noise. The recomputation below follows the formulas of sampling.ts and
    // robustFilter.ts step by step from the sample list (not from the accumulator).
    const ts: number[] = [];
    for (let k = 0; k < 22; k++) for (let j = 0; j < 4; j++) ts.push(60 + 24 * k + 0.25 * j);
    const vs = ts.map((t) => 5 + 0.001 * (t - 300));
    const acc = new CellAccumulator(1, 1);
    ts.forEach((t, i) => acc.add(0, vs[i], 1, 0, 0, 0, 0, t, 300));
    const { stats } = robustFilter(acc, { enabled: false, k: 3.5, minSamples: 5 }, { start_s: 0, end_s: 600 });
    const n = ts.length, mean = (a: number[]) => a.reduce((s, x) => s + x, 0) / a.length;
    const dt = mean(ts) - 300; // 60 + 24 * 10.5 + 0.375 - 300 = 12.375 s
    const early = vs.filter((_, i) => ts[i] < 300), late = vs.filter((_, i) => ts[i] >= 300);
    const b = (mean(late) - mean(early)) / 300; // halves estimator, exact for even sampling
    const m = mean(vs);
    const s2 = vs.reduce((s, v) => s + (v - m) ** 2, 0) / (n - 1);
    const bursts = Array.from({ length: 22 }, (_, k) => mean(vs.slice(4 * k, 4 * k + 4)));
    const bm = mean(bursts);
    const cRun = bursts.reduce((s, v) => s + (v - bm) ** 2, 0) / 21;
    const F = Math.max(1, cRun / 22 / (s2 / n)); // one key: its own inflation equals the instrument's
    const vm = (F * s2) / n;
    const varB = (vm * n / late.length + vm * n / early.length) / (300 * 300);
    const e = Math.sign(b) * Math.sqrt(Math.max(0, b * b - varB)) * dt;
    expect(dt).toBeCloseTo(12.375, 9);
    // b = 0.001 * (432.375 - 168.375) / 300 = 0.00088 (halves of 12 and 10 passes): e about 0.0109 m/s, not zero.
    expect(e).toBeGreaterThan(0.01);
    // Burst means are kept to 2^-10 m/s (accumulator.ts): F and var b move by about 1e-4 relative, e far less.
    expect(stats.se[0] / n / e - 1).toBeCloseTo(0, 3);
    expect(stats.st[0] / n).toBeCloseTo(dt, 3); // times to 2^-6 s
  });
});

describe('noise of the gradient in the position term', () => {
  it('hand-worked: central difference variance (s_+^2 + s_-^2) / (2 d)^2, removed from the squared position term', async () => {
    const { derivativeVariances } = await import('../src/retrieval/budget.ts');
    // 3 x 1 cells 20 m apart, standard uncertainties 0.1 m/s: var = (0.01 + 0.01) / 1600 = 1.25e-5 (1/s)^2 at the
    // middle; at an edge one-sided (0.01 + 0.01) / 400 = 5e-5.
    const f = Float64Array.of(8, 8.2, 8.4), s = Float64Array.of(0.1, 0.1, 0.1), out = new Float64Array(2);
    derivativeVariances(f, s, 3, 1, 20, 20, 1, out);
    expect(out[0]).toBeCloseTo(1.25e-5, 15);
    expect(out[1]).toBe(0); // no neighbour along the second axis
    derivativeVariances(f, s, 3, 1, 20, 20, 0, out);
    expect(out[0]).toBeCloseTo(5e-5, 15);
    // In the position term: gradient 0.01 1/s, offset 6 m: p^2 = 3.6e-3, minus 36 * 1.25e-5 = 4.5e-4: sqrt(3.15e-3).
    const D = new Float64Array(15);
    D[0] = 0.01;
    const cell = cellOf([[1, 0, 0], [0, 1, 0], [0, 0, 1]], [1, 1, 1]);
    const H = new Float64Array(9);
    sensitivity(cell, H);
    const res = new Float64Array(3 * NT);
    cellBudget(cell, H, emptyCellStats(3, 3), {
      c: 1, secondAxis: 2, level_m: 0, U: Float64Array.of(8.2, 0, 0), D, py: Float64Array.of(6, 6, 6), pz: new Float64Array(3), ins: Int32Array.of(0, 1, 2), yc: 0, zc: 0, dirUnc_rad: 0,
      DVar: Float64Array.of(1.25e-5, 0, 0, 0, 0, 0),
    }, settings(3), new Float64Array(3), res);
    expect(Math.sqrt(res[5])).toBeCloseTo(Math.sqrt(3.15e-3), 12);
  });
});
