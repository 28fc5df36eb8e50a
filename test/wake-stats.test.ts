import { describe, expect, it } from 'vitest';
import { stat, studentTQuantile, quantile } from '../src/wake/stats.ts';

describe('Student t quantile against scipy.stats.t.ppf (test/reference/wake_stats.py, output beside)', () => {
  it('t_0.975 for 1..100 degrees of freedom', () => {
    // scipy 1.17: nu=1 12.706204736175, 2 4.302652729749, 3 3.182446305284, 4 2.776445105198, 7 2.364624251593,
    // 10 2.228138851986, 30 2.042272456301, 100 1.983971518524
    const want: [number, number][] = [[1, 12.706204736175], [2, 4.302652729749], [3, 3.182446305284], [4, 2.776445105198],
      [7, 2.364624251593], [10, 2.228138851986], [30, 2.042272456301], [100, 1.983971518524]];
    // Bisection to 1e-13 relative on a CDF computed to ~1e-14: 1e-9 relative is safe and far tighter than needed.
    for (const [nu, t] of want) expect(Math.abs(studentTQuantile(0.975, nu) / t - 1)).toBeLessThan(1e-9);
    expect(studentTQuantile(0.025, 5)).toBeCloseTo(-studentTQuantile(0.975, 5), 12); // symmetry
    expect(studentTQuantile(0.975, 0)).toBeNaN();
  });

  it('mean, sd and 95 % CI of a sample (numpy/scipy, same script)', () => {
    // sample [21.0, 25.5, 18.2, 23.9, 26.4]: mean 23.0, sd 3.3786091813, ci95 4.1950973844 (10 decimals printed).
    const s = stat([21.0, 25.5, NaN, 18.2, 23.9, 26.4]);
    expect(s.n).toBe(5); // NaN skipped
    expect(Math.abs(s.mean - 23)).toBeLessThan(1e-12);
    expect(Math.abs(s.sd - 3.3786091813)).toBeLessThan(1e-9);
    expect(Math.abs(s.ci95 - 4.1950973844)).toBeLessThan(1e-9);
    expect(stat([4]).ci95).toBeNaN();
  });

  it('quantile with linear interpolation (numpy.quantile default, hand computed)', () => {
    // [1,2,3,4,5]: q = 0.98 -> position 3.92 -> 4 + 0.92 = 4.92.
    expect(quantile([5, 1, 4, 2, 3], 0.98)).toBeCloseTo(4.92, 12);
  });
});
