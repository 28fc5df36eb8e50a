/**
 * Summary statistics and the Student t quantile used for confidence intervals (the quantile from the stdlib
 * library's Student t distribution; checked against scipy.stats.t.ppf in the tests).
 */
import tQuantile from '@stdlib/stats-base-dists-t-quantile';
import type { Stat } from './types.ts';

/** Quantile t_{q, nu} (0 < q < 1); NaN for nu < 1. */
export function studentTQuantile(q: number, nu: number): number {
  if (!(nu >= 1) || !(q > 0 && q < 1)) return NaN;
  return tQuantile(q, nu);
}

/** Mean, sample standard deviation, count and 95 % CI half-width (Student t) of the finite values. */
export function stat(values: ArrayLike<number>): Stat {
  let n = 0, s = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) { n++; s += values[i]; }
  if (n === 0) return { mean: NaN, sd: NaN, n: 0, ci95: NaN };
  const mean = s / n;
  let ss = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) ss += (values[i] - mean) ** 2;
  const sd = n > 1 ? Math.sqrt(ss / (n - 1)) : NaN;
  const ci95 = n > 1 ? (studentTQuantile(0.975, n - 1) * sd) / Math.sqrt(n) : NaN;
  return { mean, sd, n, ci95 };
}

/** q-quantile (0..1, linear interpolation) of the finite values; NaN when none. */
export function quantile(values: ArrayLike<number>, q: number): number {
  const a: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) a.push(values[i]);
  if (a.length === 0) return NaN;
  a.sort((x, y) => x - y);
  const pos = q * (a.length - 1);
  const i = Math.floor(pos);
  return i + 1 < a.length ? a[i] + (pos - i) * (a[i + 1] - a[i]) : a[i];
}

export function median(values: ArrayLike<number>): number {
  return quantile(values, 0.5);
}
