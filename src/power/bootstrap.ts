/**
 * The nonparametric bootstrap of Efron & Tibshirani (1993), An Introduction to the Bootstrap (Chapman & Hall):
 * resample each group of observations with replacement to its own size, recompute the statistic, repeat B times.
 * - standard error: the sample standard deviation of the B replicates (their eq. 6.6 [from memory]);
 * - percentile interval at level 1 - 2 alpha: the alpha and 1 - alpha quantiles of the replicates (chapter 13,
 *   eq. 13.5 [from memory]); quantiles by linear interpolation between order statistics (numpy's default, as
 *   scipy.stats.bootstrap uses with method="percentile").
 * Several groups (baseline and steered windows, per bin) are resampled independently: the two-sample bootstrap
 * (their chapter 8 [from memory]). Randomness: the seeded mulberry32 generator, so a run repeats exactly.
 */
import { mulberry32 } from '../math/random.ts';
import { quantile } from '../wake/stats.ts';

export interface BootstrapSettings {
  replicates: number;
  /** Confidence level of the interval, e.g. 0.95. */
  confidence: number;
  seed: number;
}

export interface BootstrapResult {
  /** The statistic on the data as they are. */
  estimate: number;
  /** Standard deviation of the finite replicates. */
  se: number;
  lo: number;
  hi: number;
  /** Replicates that gave a finite value (a resample can leave a ratio undefined). */
  finite: number;
}

/** Draws `n` indices uniformly from [0, n) with replacement into out. */
export function resampleIndices(rnd: () => number, n: number, out: Int32Array): void {
  for (let i = 0; i < n; i++) out[i] = Math.floor(rnd() * n);
}

/**
 * Bootstrap of a statistic of several independent groups. `stat(indices)` receives, per group, the indices of the
 * group's observations to use (the identity for the estimate, a resample for each replicate) and returns a number,
 * or an array of numbers (several statistics from the same resamples, e.g. per-bin gains and their combination).
 */
export function bootstrapGroups(sizes: readonly number[], stat: (indices: Int32Array[]) => number[], s: BootstrapSettings): BootstrapResult[] {
  const identity = sizes.map((n) => Int32Array.from({ length: n }, (_, i) => i));
  const estimate = stat(identity);
  const K = estimate.length;
  const reps: Float64Array[] = Array.from({ length: K }, () => new Float64Array(s.replicates));
  const rnd = mulberry32(s.seed);
  const draw = sizes.map((n) => new Int32Array(n));
  for (let b = 0; b < s.replicates; b++) {
    sizes.forEach((n, g) => resampleIndices(rnd, n, draw[g]));
    const v = stat(draw);
    for (let k = 0; k < K; k++) reps[k][b] = v[k];
  }
  const alpha = (1 - s.confidence) / 2;
  return estimate.map((e, k) => {
    const r = reps[k];
    let n = 0, m = 0;
    for (let b = 0; b < r.length; b++) if (Number.isFinite(r[b])) { n++; m += r[b]; }
    m /= n || 1;
    let ss = 0;
    for (let b = 0; b < r.length; b++) if (Number.isFinite(r[b])) ss += (r[b] - m) ** 2;
    return { estimate: e, se: n > 1 ? Math.sqrt(ss / (n - 1)) : NaN, lo: quantile(r, alpha), hi: quantile(r, 1 - alpha), finite: n };
  });
}
