/**
 * Median and MAD (src/qc/robust.ts) against a plain sort-based reference (the definition: middle of the sorted
 * values, mean of the two middle ones for an even count) on random data, including even counts, ties and sorted or
 * reversed input (the worst cases for a naive selection pivot).
 */
import { describe, expect, it } from 'vitest';
import { MAD_TO_SIGMA, mad, median, medianInPlace, robustSigma, selectInPlace } from '../src/qc/robust.ts';
import { mulberry32 as rng } from '../src/math/random.ts';


function sortedMedian(x: ArrayLike<number>): number {
  const s = Array.from(x).sort((p, q) => p - q);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}

function sortedMad(x: ArrayLike<number>): number {
  const m = sortedMedian(x);
  return sortedMedian(Array.from(x, (v) => Math.abs(v - m)));
}

describe('median and MAD against a sorted reference', () => {
  const r = rng(7);
  const cases: number[][] = [];
  for (const n of [1, 2, 3, 4, 5, 10, 11, 64, 257, 1000, 1001]) {
    cases.push(Array.from({ length: n }, () => r() * 20 - 10));
    cases.push(Array.from({ length: n }, () => Math.round(r() * 6))); // many ties
  }
  cases.push(Array.from({ length: 500 }, (_, i) => i)); // sorted
  cases.push(Array.from({ length: 500 }, (_, i) => 500 - i)); // reversed
  cases.push(Array.from({ length: 400 }, () => 3.25)); // all equal

  it('median equals the sorted middle (exactly: both pick or average the same stored values)', () => {
    for (const c of cases) expect(median(c)).toBe(sortedMedian(c));
  });
  it('MAD equals the sorted-reference MAD (exactly, same reason)', () => {
    for (const c of cases) expect(mad(c)).toBe(sortedMad(c));
  });
  it('selectInPlace returns the k-th order statistic and partitions around it', () => {
    for (const c of cases) {
      const s = Array.from(c).sort((p, q) => p - q);
      for (const k of [0, c.length >> 1, c.length - 1]) {
        const a = Float64Array.from(c);
        expect(selectInPlace(a, 0, a.length, k)).toBe(s[k]);
        for (let i = 0; i < k; i++) expect(a[i]).toBeLessThanOrEqual(a[k]);
        for (let i = k + 1; i < a.length; i++) expect(a[i]).toBeGreaterThanOrEqual(a[k]);
      }
    }
  });
  it('medianInPlace on a sub-range ignores values outside it', () => {
    const a = Float64Array.from([100, 5, 1, 3, 2, -100]);
    expect(medianInPlace(a, 1, 5)).toBe(2.5); // sorted 1 2 3 5 -> (2 + 3) / 2
    expect(a[0]).toBe(100);
    expect(a[5]).toBe(-100);
  });
  it('empty input gives NaN', () => {
    expect(median([])).toBeNaN();
    expect(mad([])).toBeNaN();
  });
});

describe('robust scale', () => {
  it('1.4826 is 1/Phi^-1(3/4) (scipy: 1/norm.ppf(0.75) = 1.482602218505602, test/reference/robust_reference.py)', () => {
    expect(MAD_TO_SIGMA).toBeCloseTo(1.482602218505602, 14);
  });
  it('1.4826 * MAD estimates sigma of Gaussian data (n = 20000, sd of the estimate ~ 1.17 sigma/sqrt(n) ~ 0.8 %: 5 % tolerance)', () => {
    const r = rng(11);
    const n = 20000, sigma = 0.7;
    const x = new Float64Array(n);
    for (let i = 0; i < n; i += 2) {
      // Box-Muller
      const u1 = r() || 1e-12, u2 = r();
      const rad = Math.sqrt(-2 * Math.log(u1));
      x[i] = sigma * rad * Math.cos(2 * Math.PI * u2);
      x[i + 1] = sigma * rad * Math.sin(2 * Math.PI * u2);
    }
    const m = median(x);
    const s = robustSigma(x, 0, n, m, new Float64Array(n));
    expect(Math.abs(s / sigma - 1)).toBeLessThan(0.05);
  });
  it('MAD = 0 falls back to 1.2533 * mean absolute deviation (common practice), and 0 only for identical values', () => {
    const x = Float64Array.from([1, 1, 1, 1, 1, 1, 1, 1, 1, 11]); // MAD 0, mean |x - 1| = 1
    expect(mad(x)).toBe(0);
    expect(robustSigma(x, 0, 10, 1, new Float64Array(10))).toBeCloseTo(1.2533141373155003, 12); // sqrt(pi/2) * 1
    expect(robustSigma(Float64Array.from([2, 2, 2]), 0, 3, 2, new Float64Array(3))).toBe(0);
  });
});
