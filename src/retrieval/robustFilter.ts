/**
 * Robust outlier filter per (plane, cell, instrument) key of one window, on the key's radial-velocity histogram
 * (qc/vrHistogram.ts): reject the samples farther than k * sigma_hat from the median, sigma_hat = 1.4826 * MAD
 * (consistent with the standard deviation for Gaussian data; common practice). Keys with fewer than
 * robust.minSamples samples are not filtered.
 *
 * MAD = 0 (more than half of the key's samples in one bin, e.g. quantised or noise-free data): the MAD gives no
 * scale, and rejecting every value that differs from the median would throw away real data. The scale then falls
 * back to 1.2533 * mean absolute deviation about the median, positive as soon as one value differs, so an isolated
 * spike in otherwise constant data is still rejected; a key of identical values loses nothing. For
 * k * 1.4826 >= 1 at least half of a key is kept, so a filtered key never becomes empty.
 *
 * Tolerance against the exact filter on the samples (qc/robust.ts): the median and MAD are those of the bin centres
 * (bins of width delta = 2^(L-7) m/s, 0.0078 m/s at the finest level), so the median is within delta/2 and the MAD
 * within delta of the exact ones, and only samples within about (1 + 1.5 k) delta of the exact limit can be decided
 * differently (test/retrieval-robust-hist.test.ts). The kept sums are the exact sums minus the rejected samples'
 * bin centres (their beam vectors and positions taken as the key's mean), so with nothing rejected they are exact.
 *
 * With the window's bounds given, the key's sampling statistics (sampling.ts) fill the budget sums of CellStats:
 * the sampling variance beyond s^2 / n, the turbulence and noise variances, the time offset and trend error.
 */
import { F, MAX_SAMPLES_PER_KEY, POS_SCALE, DIR_SCALE, SQ_SPLIT, STRIDE, VR_SCALE, type CellAccumulator } from '../grid/accumulator.ts';
import { emptyHistogramStats, robustStats } from '../qc/vrHistogram.ts';
import { emptyCellStats, type CellStats } from './cellStats.ts';
import type { RobustSettings } from './settings.ts';
import { emptyKeySampling, instrumentSampling, keySampling, type InstrumentSampling, type KeySampling } from './sampling.ts';

export interface RobustResult {
  /** Kept-sample statistics per key. */
  stats: CellStats;
  /** Samples rejected by the filter, per instrument. */
  outliers: Float64Array;
  /**
   * With the budget on: what refines the sampling statistics once the cells are solved (samplingSums with the
   * cells' velocities; retrieveStats calls it before the budget pass). Valid until the accumulator is reset.
   */
  sampling?: WindowSampling;
}

/** A finished window's accumulator with what its sampling statistics need beside the kept statistics. */
export interface WindowSampling {
  acc: CellAccumulator;
  /** Per slot: squared deviations of the rejected samples from the kept mean, m^2/s^2. */
  dev2: Float64Array;
  window: { start_s: number; end_s: number };
}

/** Apply the filter to every key of a finished window's accumulator. */
export function robustFilter(acc: CellAccumulator, robust: RobustSettings, window?: { start_s: number; end_s: number }): RobustResult {
  const I = acc.instrumentCount;
  const stats = emptyCellStats(acc.keyCount, I);
  const outliers = new Float64Array(I);
  const hs = emptyHistogramStats();
  const minN = Math.max(3, robust.minSamples);
  const budget = window !== undefined && acc.budget;
  if (budget) acc.closeRays();
  // Per slot: squared deviations of the rejected samples from the kept mean (m^2/s^2), for the budget's sums.
  const dev2 = budget ? new Float64Array(acc.slots) : undefined;
  for (let s = 0; s < acc.slots; s++) {
    const key = acc.keyOf[s];
    const m = acc.sums, o = s * STRIDE;
    const n = m[o + F.n];
    if (n > MAX_SAMPLES_PER_KEY) {
      throw new RangeError(`${n} samples in one window, cell and instrument: more than ${MAX_SAMPLES_PER_KEY}; use shorter windows or smaller cells`);
    }
    let rej = 0, rs = 0, rss = 0;
    if (robust.enabled && n >= minN) {
      robustStats(acc.hist, s, robust.k, hs);
      rej = hs.rejected; rs = hs.rejectedSum; rss = hs.rejectedSumSq;
    }
    const kept = n - rej;
    const frac = kept / n;
    stats.n[key] = kept;
    stats.sv[key] = m[o + F.sv] / VR_SCALE - rs;
    stats.sv2[key] = (m[o + F.sv2h] * SQ_SPLIT + m[o + F.sv2l]) / (VR_SCALE * VR_SCALE) - rss;
    stats.sx[key] = (m[o + F.sx] / DIR_SCALE) * frac;
    stats.sy[key] = (m[o + F.sy] / DIR_SCALE) * frac;
    stats.sz[key] = (m[o + F.sz] / DIR_SCALE) * frac;
    stats.spy[key] = (m[o + F.spy] / POS_SCALE) * frac;
    stats.spz[key] = (m[o + F.spz] / POS_SCALE) * frac;
    outliers[key % I] += rej;
    if (dev2 && rej > 0 && kept > 0) {
      const mu = stats.sv[key] / kept;
      dev2[s] = Math.max(0, rss - 2 * mu * rs + rej * mu * mu);
    }
  }
  if (budget && dev2 && window) {
    const sampling = { acc, dev2, window };
    samplingSums(stats, sampling);
    return { stats, outliers, sampling };
  }
  return { stats, outliers };
}

/**
 * The budget sums of every key of a window (CellStats docblock; overwritten, so it can run again): from the key's and
 * its instrument's sampling statistics (sampling.ts). `vel` (rotor frame, m/s, three per key; NaN where the cell
 * was not solved): the cells' retrieved velocities, whose projection on each burst's mean beam is removed from
 * the burst means' scatter; without it the plain scatter is used.
 */
export function samplingSums(stats: CellStats, w: WindowSampling, vel?: Float64Array): void {
  const { acc, dev2, window } = w;
  const ks = emptyKeySampling();
  const tMid = (window.start_s + window.end_s) / 2, halfT = (window.end_s - window.start_s) / 2;
  const I = acc.instrumentCount;
  const insSampling = instrumentSampling(acc, dev2, vel);
  for (let s = 0; s < acc.slots; s++) {
    const key = acc.keyOf[s];
    const kept = stats.n[key];
    if (kept < 2) continue;
    const is = insSampling[key % I];
    budgetSums(stats, key, kept, keySampling(acc, s, is, ks, vel), is, tMid, halfT);
  }
}

/** The budget sums of one key (CellStats docblock) from its sampling statistics and its kept samples. */
function budgetSums(stats: CellStats, key: number, n: number, ks: KeySampling, is: InstrumentSampling, tMid: number, halfT: number): void {
  const sv = stats.sv[key];
  const s2 = Math.max(0, stats.sv2[key] - (sv * sv) / n) / (n - 1);
  const vm = (ks.inflation * s2) / n;
  const ub2 = vm - s2 / n;
  stats.vb[key] = n * n * ub2;
  stats.ne[key] = n / Math.max(1, ks.inflation); // an effective count above n would say more than the samples
  if (is.estimated) {
    // Turbulence variance of v_r: the instrument's turbulence share of the kept samples' variance (noise removed).
    stats.vt[key] = n * is.phi * s2;
    stats.vn[key] = n * (1 - is.phi) * s2;
    stats.ta[key] = n * is.tau_s;
    stats.nb[key] = n;
  }
  const dt = ks.meanTime_s - tMid;
  if (!Number.isFinite(dt)) return;
  stats.st[key] = n * dt;
  if (ks.nLate > 0 && ks.nEarly > 0 && halfT > 0) {
    // Trend of v_r and its noise (sampling.ts); the squared trend minus its variance, floored at zero.
    const b = (ks.vLate - ks.vEarly) / halfT;
    const varB = (vm * n / ks.nLate + vm * n / ks.nEarly) / (halfT * halfT);
    const b2 = Math.max(0, b * b - varB);
    stats.se[key] = n * Math.sign(b) * Math.sqrt(b2) * dt;
  }
}
