/**
 * Sampling statistics of a finished window, from the budget sums of its accumulator (grid/accumulator.ts): per
 * instrument the variance inflation of a key's mean by autocorrelated samples, the lag correlation, noise share and
 * integral time scale; per key the trend of its radial velocity. Pure.
 *
 * Units of the series: the ray mean (the mean of a key's samples sharing one time stamp: the range gates of one beam
 * in the cell, which see the same eddy); the run (successive rays of a key with the same beam direction, less than
 * BURST_GAP_S apart: a dwell of a scanner on one point, or a staring beam); the burst (successive rays of a key less than
 * BURST_GAP_S = 5 s apart: one pass of a scanner through the cell, whatever points it aimed at).
 *
 * Variance of a key's mean. If the samples were independent it would be s^2 / n. With B >= 2 bursts, taken as
 * independent of each other (a scanner's revisit time long against the integral time scale), it is estimated from
 * the data without a correlation model, as the cluster-robust (sandwich) variance of a weighted mean over the bursts
 * (burstMeanVariance; White 1980, Liang & Zeger 1986): B / (B - 1) sum_b w_b^2 (r_b - rbar)^2 / (sum w_b)^2, w_b the
 * burst's samples (capped at W_CAP), which is right whether a burst's samples are correlated or not and for bursts
 * of unequal size. r_b = a_b - V . e_b: the burst mean less the projection of the cell's retrieved velocity V on the
 * burst's mean beam vector e_b, so that the differences between the points and beam directions a scanner's passes
 * bring into one cell do not count as sampling error (the sums over bursts in the accumulator make this exact
 * algebra; V comes from the solve, so robustFilter gives a first estimate without it and retrieveStats refines it
 * once every cell is solved: robustFilter.ts samplingSums). Before this (the plain variance of the burst means over
 * B) the term over-stated w on simulated campaigns: bursts of 1 to 32 samples (the plain scatter exceeds s^2 / n by
 * the ratio of the arithmetic to the harmonic mean of the n_b) and of several beam directions. The
 * inflation factor F = var / (s^2 / n) is pooled over all keys of the instrument in the window (sum of the
 * numerators over sum of the denominators, keys with B >= 2); each key's own factor (from its B bursts) is shrunk
 * toward the instrument's, F_key = (B F_own + 10 F) / (B + 10), so that a cell with a few bursts borrows the
 * instrument's. F is not floored at 1: the scatter s^2 of a key also holds the fixed spread of the points and beam
 * directions inside the cell (gates of rays aimed at neighbouring cells, the flow's gradient across them), which
 * every pass repeats, so it does not vary the burst means and is no error of the key's mean; there s^2 / n
 * over-states the variance and F < 1 (a floor at 1 also biased the sum upward on independent samples, where F
 * scatters about 1). Only a guard MIN_INFLATION against a degenerate estimate. Each key's mean then has
 * var = F_key s^2 / n, N_eff = n / min(F_key, 1). This is the sampling
 * error of a mean over autocorrelated samples (Lenschow, Mann & Kristensen 1994, J. Atmos. Oceanic Technol. 11,
 * 661-673: var = 2 tau s^2 / T for a record of length T >> tau) measured by the scatter of independent sub-means.
 * Coverage (share of true values within two combined standard uncertainties, README, with budget.ts's direction
 * and per-instrument position terms): simulator seeds 7, 11, 23, 31, 43, independent samples u 93.0-95.5 %,
 * v 92.8-95.7 %, w 93.9-97.9 %; correlated (1 s) u 91.9-94.9 %, v 91.8-96.8 %, w 95.5-97.6 %; the
 * advected-turbulence campaign of test/helpers/advectedCampaign.ts (seeds 5-9) 93.8-98.0 % for every component.
 * With the inflation floored at 1, w reached 98.6 % (seed 31, independent samples).
 *
 * A single burst (a staring beam) or fewer than MIN_RUNS bursts over the instrument's keys: a first-order autoregressive model of the ray means with white noise,
 * C(0) = s_t^2 + s_e^2, C(k) = s_t^2 r^k (k >= 1). Within runs the structure function D(k) = <(a_j - a_{j-k})^2>
 * = 2 (C(0) - C(k)) needs no mean (free of differences between points); with x_k = D(k) / 2 for k = 1, 2, 3:
 *   r = (x3 - x2) / (x2 - x1),   s_t^2 = (x2 - x1) / (r (1 - r)),   s_e^2 = x1 - s_t^2 (1 - r),
 * the noise being the jump of the autocovariance at lag 0 (Lenschow, Wulfmeyer & Senff 2000, J. Atmos. Oceanic
 * Technol. 17, 1330-1347, sect. 2, here by the structure function). Pooled over the instrument's keys. Fallbacks:
 * with s_e^2 < 0 or too few lag-3 pairs, no noise: r = x2 / x1 - 1 (an underestimate of r when there is noise);
 * with x2 <= x1, r = 0; r is clipped to R_MAX. Then, with phi = s_t^2 / (s_t^2 + s_e^2) and R rays,
 *   var(mean) = (1 - phi) C(0) / R + phi C(0) / n_eff(R, r),
 *   n_eff(m, r) = m^2 / (m + 2 sum_{j=1}^{m-1} (m - j) r^j),  sum = r (m (1 - r) - (1 - r^m)) / (1 - r)^2,
 * the effective sample count of an autocorrelated series (e.g. Bayley & Hammersley 1946, J. R. Stat. Soc. Suppl.
 * 8(2), 184-197); for rays dense in time (step dt << tau), r = exp(-dt / tau) and n_eff -> T / (2 tau), T = m dt
 * (Lenschow, Mann & Kristensen 1994). The same fit gives the reported integral time scale tau = -dt / ln r (dt the
 * mean gap of the lag-1 pairs) and the turbulence share phi used to remove the noise from the variance.
 *
 * The budget splits var(mean) into the scatter term s^2 / n (the one the retrieval always had) and the sampling
 * term (F - 1) s^2 / n.
 *
 * Trend (for the non-simultaneity term): b = (mean of the later half - mean of the earlier half) / (T / 2), T the
 * window length (exact for samples spread evenly over the window); its noise is removed in the square,
 * b^2 - var(b), var(b) = (var(mean_late) + var(mean_early)) / (T / 2)^2.
 *
 * Limits: the run and structure sums include the samples the robust filter rejects; their share is removed
 * approximately (instrumentSampling); bursts less than a few integral time scales apart are correlated, which
 * makes F low (the reported integral time scale shows when this happens: it should stay well below the gap between
 * a scanner's passes).
 */
import { A_SCALE, DT_SCALE, E_SCALE, F, SQ_SPLIT, STRIDE, T_SCALE, VR_SCALE, type CellAccumulator } from '../grid/accumulator.ts';

/**
 * Guard on the burst-based inflation from below: a degenerate estimate (every pass alike) must not report no
 * uncertainty. Not a tuning: on the simulated and advected test campaigns the estimates stay above 0.3, and a guard
 * of 0.3 or 0.02 gives the same coverage to the last cell.
 */
export const MIN_INFLATION = 0.1;
/** Largest lag-1 correlation used, dimensionless (a series that hardly decorrelates). */
export const R_MAX = 0.99;
/** Fewest pooled lag pairs for a correlation estimate. */
export const MIN_LAG_PAIRS = 8;

/** One instrument's sampling statistics in a window (pooled over its keys). */
export interface InstrumentSampling {
  /** Variance inflation of a key's mean from the bursts (>= MIN_INFLATION; below 1 when the scatter holds spread the passes repeat), NaN when too few bursts. */
  inflation: number;
  /** Lag-1 correlation of the turbulence between successive rays of a run (0 when none resolved). */
  r: number;
  /** Turbulence share of the within-point variance, s_t^2 / (s_t^2 + s_e^2) (1 when the noise is not separated). */
  phi: number;
  /** Mean gap of the lag-1 pairs, s; integral time scale, s (NaN when not estimated). */
  gap_s: number;
  tau_s: number;
  /** True when there were enough pairs to estimate r. */
  estimated: boolean;
}

/**
 * Variance of slot s's mean from its bursts (m^2/s^2; NaN with fewer than two bursts): the cluster-robust (sandwich)
 * variance of a weighted mean, B / (B - 1) sum_b w_b^2 (r_b - rbar)^2 / (sum_b w_b)^2, with weights w_b = n_b
 * (capped at W_CAP), which holds whether a burst's samples are independent or correlated, and for bursts of
 * unequal size (the plain scatter of the burst means divided by B would not: for independent samples it would
 * exceed s^2 / n by the ratio of the arithmetic to the harmonic mean of the n_b). r_b = a_b - V . e_b: with the
 * cell's velocity `vel` (rotor frame, m/s, at vel[key * 3]; NaN when not solved) the part of the burst means that
 * their mean beam direction explains is removed; without it r_b = a_b. rbar is the weighted mean of the r_b. From
 * the accumulator's burst sums: sum (w r)^2 = sum T^2 - 2 V . sum T f + V^T (sum f f^T) V, sum w (w r) = sum w T -
 * V . sum w f, rbar = (sum T - V . sum f) / sum w (T = w a, f = w e). `d2` (m^2/s^2): the rejected samples' squared
 * deviations, each of which entered its burst's w r once (instrumentSampling).
 */
export function burstMeanVariance(m: Float64Array, o: number, key: number, d2: number, vel?: Float64Array): number {
  const B = m[o + F.rb];
  if (B < 2) return NaN;
  const A = A_SCALE, E = E_SCALE;
  const sw = m[o + F.sw], sw2 = m[o + F.sw2];
  let q2 = (m[o + F.sT2h] * SQ_SPLIT + m[o + F.sT2l]) / (A * A);
  let q1 = m[o + F.swT] / A;
  let r = m[o + F.sT] / A;
  const vx = vel ? vel[key * 3] : NaN;
  if (vx === vx && vel) {
    const vy = vel[key * 3 + 1], vz = vel[key * 3 + 2];
    const sp = (h: number) => m[o + h] * SQ_SPLIT + m[o + h + 1];
    const vTf = (vx * sp(F.Texh) + vy * sp(F.Teyh) + vz * sp(F.Tezh)) / (A * E);
    const vffv = (vx * vx * sp(F.exxh) + vy * vy * sp(F.eyyh) + vz * vz * sp(F.ezzh)
      + 2 * (vx * vy * sp(F.exyh) + vx * vz * sp(F.exzh) + vy * vz * sp(F.eyzh))) / (E * E);
    q2 = q2 - 2 * vTf + vffv;
    q1 -= (vx * m[o + F.swwex] + vy * m[o + F.swwey] + vz * m[o + F.swwez]) / E;
    r -= (vx * m[o + F.swex] + vy * m[o + F.swey] + vz * m[o + F.swez]) / E;
  }
  const rbar = r / sw;
  const S = q2 - 2 * rbar * q1 + rbar * rbar * sw2 - d2;
  return Math.max(0, (B / (B - 1)) * S / (sw * sw));
}

/** Weight (in bursts) of the instrument's pooled inflation against a key's own estimate. */
export const SHRINK_BURSTS = 10;
/** Fewest bursts (over the instrument's keys with two or more) for the burst-based inflation. */
export const MIN_RUNS = 20;

/**
 * Pooled statistics of every instrument of a finished window's accumulator (its rays closed). `dev2` (per slot,
 * m^2/s^2, optional): the squared deviations of the samples the robust filter rejected from the kept mean. Each
 * rejected sample with deviation d moved its run mean by d / (n / B) and its ray mean by d / (n / R), entering at
 * most two pairs of each lag: these shares are removed from the run variance and the structure sums.
 */
export function instrumentSampling(acc: CellAccumulator, dev2?: Float64Array, vel?: Float64Array): InstrumentSampling[] {
  const I = acc.instrumentCount;
  const W = 10;
  const sums = new Float64Array(I * W);
  const m = acc.sums;
  const A2 = A_SCALE * A_SCALE, V2 = VR_SCALE * VR_SCALE;
  for (let s = 0; s < acc.slots; s++) {
    const i = acc.keyOf[s] % I, o = s * STRIDE, p = i * W;
    const B = m[o + F.rb], n = m[o + F.n], R = m[o + F.ra];
    const d2 = dev2 ? dev2[s] : 0;
    // The rejected samples' share of a lag's sum of squared ray-mean differences (A_SCALE^2 units).
    const spike = d2 > 0 && R > 0 ? (2 * d2 * A2) / ((n / R) * (n / R)) : 0;
    sums[p] += m[o + F.l1n]; sums[p + 2] += m[o + F.l1d];
    sums[p + 1] += Math.max(0, m[o + F.l1h] * SQ_SPLIT + m[o + F.l1l] - (m[o + F.l1n] > 0 ? spike : 0));
    sums[p + 3] += m[o + F.l2n]; sums[p + 4] += Math.max(0, m[o + F.l2h] * SQ_SPLIT + m[o + F.l2l] - (m[o + F.l2n] > 0 ? spike : 0));
    sums[p + 5] += m[o + F.l3n]; sums[p + 6] += Math.max(0, m[o + F.l3h] * SQ_SPLIT + m[o + F.l3l] - (m[o + F.l3n] > 0 ? spike : 0));
    if (B >= 2 && n >= 2) {
      const vMean = burstMeanVariance(m, o, acc.keyOf[s], d2, vel);
      const sv = m[o + F.sv] / VR_SCALE;
      const s2 = Math.max(0, (m[o + F.sv2h] * SQ_SPLIT + m[o + F.sv2l]) / V2 - (sv * sv) / n - d2) / (n - 1);
      sums[p + 7] += vMean;
      sums[p + 8] += s2 / n;
      sums[p + 9] += B;
    }
  }
  const out: InstrumentSampling[] = [];
  for (let i = 0; i < I; i++) {
    const p = i * W;
    const n1 = sums[p], n2 = sums[p + 3], n3 = sums[p + 5];
    const res: InstrumentSampling = {
      inflation: sums[p + 9] >= MIN_RUNS && sums[p + 8] > 0 ? Math.max(MIN_INFLATION, sums[p + 7] / sums[p + 8]) : NaN,
      r: 0, phi: 1, gap_s: n1 > 0 ? sums[p + 2] / n1 / DT_SCALE : NaN, tau_s: NaN, estimated: false,
    };
    out.push(res);
    if (n2 < MIN_LAG_PAIRS) continue;
    res.estimated = true;
    const x1 = sums[p + 1] / n1 / A2 / 2, x2 = sums[p + 4] / n2 / A2 / 2;
    if (!(x2 > x1) || !(x1 > 0)) { res.tau_s = 0; continue; }
    let r = NaN, phi = 1;
    if (n3 >= MIN_LAG_PAIRS) {
      const x3 = sums[p + 6] / n3 / A2 / 2;
      const rr = (x3 - x2) / (x2 - x1);
      if (rr > 0 && rr < 1) {
        const st = (x2 - x1) / (rr * (1 - rr));
        const se = x1 - st * (1 - rr);
        if (se >= 0) { r = rr; phi = st / (st + se); }
      }
    }
    if (!(r === r)) r = Math.min(R_MAX, Math.max(0, x2 / x1 - 1)); // no noise: x2 / x1 = 1 + r
    res.r = Math.min(R_MAX, r);
    res.phi = phi;
    res.tau_s = res.r > 0 ? -res.gap_s / Math.log(res.r) : 0;
  }
  return out;
}

/** Results for one key, written into a reusable object. */
export interface KeySampling {
  /** Rays (distinct time stamps) of the key and runs. */
  rays: number;
  runs: number;
  /** Turbulence variance of the ray means, phi C(0), m^2/s^2 (NaN with fewer than two rays). */
  turbVar: number;
  /** Variance inflation of the key's mean over s^2 / n (burst-based: >= MIN_INFLATION; model-based: >= 1). */
  inflation: number;
  /** Mean sample time, Unix s. */
  meanTime_s: number;
  /** Samples and mean v_r of the earlier and later half of the window (n = 0 when unknown). */
  nEarly: number;
  vEarly: number;
  nLate: number;
  vLate: number;
}

export function emptyKeySampling(): KeySampling {
  return { rays: 0, runs: 0, turbVar: NaN, inflation: 1, meanTime_s: NaN, nEarly: 0, vEarly: NaN, nLate: 0, vLate: NaN };
}

/** Effective sample count of n values with lag-1 correlation r (AR(1)), between 1 and n. */
export function effectiveCount(n: number, r: number): number {
  if (!(r > 0) || n <= 1) return n;
  const rr = Math.min(r, 1 - 1e-12);
  const sum = (rr * (n * (1 - rr) - (1 - rr ** n))) / ((1 - rr) * (1 - rr));
  return Math.min(n, Math.max(1, (n * n) / (n + 2 * sum)));
}

/** Sampling statistics of slot s of a finished window's accumulator, with its instrument's pooled statistics. */
export function keySampling(acc: CellAccumulator, s: number, ins: InstrumentSampling, out: KeySampling, vel?: Float64Array): KeySampling {
  const m = acc.sums, o = s * STRIDE;
  const n = m[o + F.n];
  const A2 = A_SCALE * A_SCALE, V2 = VR_SCALE * VR_SCALE;
  const R = m[o + F.ra];
  out.rays = R; out.runs = m[o + F.rb]; out.turbVar = NaN; out.inflation = 1;
  out.meanTime_s = n > 0 ? ((m[o + F.th] / n) * SQ_SPLIT + m[o + F.tl] / n) / T_SCALE : NaN;
  const sum = m[o + F.sv] / VR_SCALE;
  const nl = m[o + F.hn];
  out.nLate = nl;
  out.nEarly = nl > 0 ? n - nl : 0;
  out.vLate = nl > 0 ? m[o + F.hv] / VR_SCALE / nl : NaN;
  out.vEarly = out.nEarly > 0 ? (sum - m[o + F.hv] / VR_SCALE) / out.nEarly : NaN;
  if (R < 2 || n < 2) return out;
  const sa = m[o + F.sa] / A_SCALE;
  const c0 = Math.max(0, ((m[o + F.sa2h] * SQ_SPLIT + m[o + F.sa2l]) / A2 - (sa * sa) / R) / (R - 1));
  out.turbVar = ins.phi * c0;
  const V2s = VR_SCALE * VR_SCALE;
  const B = m[o + F.rb];
  const s2k = Math.max(0, (m[o + F.sv2h] * SQ_SPLIT + m[o + F.sv2l]) / V2s - (sum * sum) / n) / (n - 1);
  if (ins.inflation === ins.inflation) {
    out.inflation = ins.inflation;
    if (B >= 2 && s2k > 0) {
      // The key's own inflation, shrunk toward the instrument's: weights B and SHRINK_BURSTS.
      const own = burstMeanVariance(m, o, acc.keyOf[s], 0, vel) / (s2k / n);
      out.inflation = Math.max(MIN_INFLATION, (B * own + SHRINK_BURSTS * ins.inflation) / (B + SHRINK_BURSTS));
    }
  } else if (ins.estimated) {
    const s2 = Math.max(0, (m[o + F.sv2h] * SQ_SPLIT + m[o + F.sv2l]) / V2 - (sum * sum) / n) / (n - 1);
    const vm = ((1 - ins.phi) * c0) / R + out.turbVar / effectiveCount(R, ins.r);
    if (s2 > 0) out.inflation = Math.max(1, (vm * n) / s2);
  }
  return out;
}
