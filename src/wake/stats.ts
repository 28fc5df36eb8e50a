/**
 * Summary statistics and the Student t quantile used for confidence intervals.
 *
 * t quantile: inverts the Student t CDF F(t; nu) = 1 - I_x(nu/2, 1/2)/2 for t > 0, x = nu/(nu + t^2), with the
 * regularised incomplete beta function I_x evaluated by its continued fraction (Press et al., Numerical Recipes,
 * 3rd ed., section 6.4; Abramowitz & Stegun 1964, section 26.7 [from memory]). Checked against scipy.stats.t.ppf.
 */
import type { Stat } from './types.ts';

function logGamma(x: number): number {
  // Lanczos (1964) approximation with the widely used g = 7, 9-term coefficient set.
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  x -= 1;
  let a = c[0];
  const t = x + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (x + i);
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
}

function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  let c = 1, d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 300; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a - 1 + m2) * (a + m2));
    d = 1 + aa * d; if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c; if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d; h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + 1 + m2));
    d = 1 + aa * d; if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c; if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return h;
}

/** Regularised incomplete beta I_x(a, b). */
export function incompleteBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const lbt = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x);
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(lbt) * betaContinuedFraction(a, b, x)) / a;
  return 1 - (Math.exp(lbt) * betaContinuedFraction(b, a, 1 - x)) / b;
}

/** Student t CDF with nu degrees of freedom. */
export function studentTCdf(t: number, nu: number): number {
  const x = nu / (nu + t * t);
  const tail = 0.5 * incompleteBeta(x, nu / 2, 0.5);
  return t >= 0 ? 1 - tail : tail;
}

/** Quantile t_{q, nu} (0 < q < 1) by bisection on the CDF; NaN for nu < 1. */
export function studentTQuantile(q: number, nu: number): number {
  if (!(nu >= 1) || !(q > 0 && q < 1)) return NaN;
  if (q === 0.5) return 0;
  const sign = q > 0.5 ? 1 : -1;
  const target = q > 0.5 ? q : 1 - q;
  let lo = 0, hi = 1;
  while (studentTCdf(hi, nu) < target) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (studentTCdf(mid, nu) < target) lo = mid;
    else hi = mid;
  }
  return sign * 0.5 * (lo + hi);
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
