import { describe, expect, it } from 'vitest';
import { bpEpsilon, fitTopHatK, gaussianAmplitude, gaussianSigma_D, topHatDeficit, topHatKFromTurbulence, kStarFromTurbulence } from '../src/wake/wakeModels.ts';
import { topHatModel } from '../src/wake/downstream.ts';
import { studentTQuantile } from '../src/wake/stats.ts';
import type { DownstreamPoint, Stat } from '../src/wake/types.ts';
import { jimenezDeflection, bastankhahDeflection } from '../src/wake/deflection.ts';
import { momentumDeficit, thrustMomentum } from '../src/wake/momentum.ts';
import { thrustCoefficientAt } from '../src/campaign/thrust.ts';
import { wrapDeg180 } from '../src/wake/yawOffset.ts';

describe('top-hat model (Jensen 1983; Katic, Hojstrup & Jensen 1986 [from memory]; values REFERENCES.md s.4 [numpy])', () => {
  it('Ct = 0.8, k = 0.075 at x/D = 3, 5, 7, 10', () => {
    const want = [0.262919, 0.180502, 0.131538, 0.088446];
    // Printed to 6 decimals: 1e-6 absolute.
    [3, 5, 7, 10].forEach((x, i) => expect(Math.abs(topHatDeficit(x, 0.8, 0.075) - want[i])).toBeLessThan(1e-6));
  });
});

describe('top-hat decay constant from the inflow and from the data', () => {
  it('defaults to k = u*/u_hub = I / 2.5 from the ambient turbulence (Pena, Rethore & van der Laan 2016 [from memory])', () => {
    // Derivation: k = u*/u_hub (Pena et al. 2016); neutral surface layer sigma_u = 2.5 u* (Panofsky & Dutton 1984,
    // from memory); I = sigma_u / u_hub, so k = I / 2.5. I = 0.08 -> 0.032, I = 0.1 -> 0.04.
    expect(topHatKFromTurbulence(0.08)).toBeCloseTo(0.08 / 2.5, 12);
    expect(topHatKFromTurbulence(0.1)).toBeCloseTo(0.04, 12);
  });

  it('fits k to centreline deficits as scipy.optimize.curve_fit does (test/reference/tophat_fit.py)', () => {
    // test/reference/tophat_fit.out: deficits 0.305835533 0.220712023 0.179505900 0.125525513 at x/D = 3, 5, 7, 10,
    // Ct = 0.76 -> k = 0.050105724, se = 0.000824331. Tolerances: 1e-8 on k (both converge to machine precision; the
    // printed 9 decimals limit it), 1e-7 on the standard error (same Gauss-Newton covariance, 9 printed decimals).
    const fit = fitTopHatK([3, 5, 7, 10], [0.305835533, 0.220712023, 0.1795059, 0.125525513], 0.76, studentTQuantile);
    expect(fit.ok).toBe(true);
    expect(Math.abs(fit.k - 0.050105724)).toBeLessThan(1e-8);
    expect(Math.abs(fit.se - 0.000824331)).toBeLessThan(1e-7);
    expect(fit.n).toBe(4);
    // 95 % interval: Student t with 3 degrees of freedom, t = 3.182446 (scipy.stats.t.ppf(0.975, 3), test/reference/wake_stats.out).
    expect(fit.ci95[1] - fit.k).toBeCloseTo(3.182446 * fit.se, 6);
    // One plane: exact, k = (sqrt(a / d) - 1) / (2 x) = 0.059703170 for x = 5, d = 0.2 (same script).
    const one = fitTopHatK([5], [0.2], 0.76, studentTQuantile);
    expect(Math.abs(one.k - 0.05970317)).toBeLessThan(1e-8);
    expect(one.se).toBeNaN();
    // Deficits the model cannot reach (at or above 1 - sqrt(1 - Ct) = 0.51 for Ct = 0.76) are left out.
    expect(fitTopHatK([3, 5], [0.6, 0.2], 0.76, studentTQuantile).n).toBe(1);
    expect(fitTopHatK([3], [0.6], 0.76, studentTQuantile).ok).toBe(false);
  });

  it('uses the fit when the planes allow, else the default from the turbulence intensity', () => {
    const st = (mean: number): Stat => ({ mean, sd: NaN, n: 1, ci95: NaN });
    const pt = (x: number, d: number) => ({ x_D: x, centreDeficit: st(d) }) as unknown as DownstreamPoint;
    const fitted = topHatModel([pt(5, 0.2), pt(7, 0.15)], 0.76, 0.08);
    expect(fitted.kSource).toBe('fit');
    expect(fitted.k).toBe(fitted.kFit);
    expect(fitted.kDefault).toBeCloseTo(0.032, 12);
    const none = topHatModel([pt(3, 0.7)], 0.76, 0.08);
    expect(none.kSource).toBe('inflow');
    expect(none.k).toBeCloseTo(0.032, 12);
    expect(none.kNote).toMatch(/k = 0\.4 I with I = 0\.08/);
    expect(topHatModel([pt(5, 0.2)], 0.76, 0.08, 0.075).k).toBe(0.075);
  });
});

describe('Gaussian model (Bastankhah & Porte-Agel 2014 [formula from memory]; values REFERENCES.md s.4 [numpy])', () => {
  it('Ct = 0.8, k* = 0.022: sigma/d0 and C at x/d0 = 3, 5, 7, 10', () => {
    const want = [[0.320404, 0.839071], [0.364404, 0.503077], [0.408404, 0.367183], [0.474404, 0.254566]];
    [3, 5, 7, 10].forEach((x, i) => {
      const s = gaussianSigma_D(x, 0.022, bpEpsilon(0.8));
      // 6 printed decimals: 1e-6 absolute.
      expect(Math.abs(s - want[i][0])).toBeLessThan(1e-6);
      expect(Math.abs(gaussianAmplitude(s, 0.8) - want[i][1])).toBeLessThan(1e-6);
    });
  });

  it('is not real in the near wake (x/d0 < 2.81 for k* = 0.022, REFERENCES.md s.4)', () => {
    // Analytic: Ct/(8 s^2) > 1 when s < sqrt(0.1) = 0.3162, i.e. x/d0 < (0.3162 - 0.2544)/0.022 = 2.81.
    expect(gaussianAmplitude(gaussianSigma_D(2.7, 0.022, bpEpsilon(0.8)), 0.8)).toBeNaN();
    expect(Number.isFinite(gaussianAmplitude(gaussianSigma_D(2.9, 0.022, bpEpsilon(0.8)), 0.8))).toBe(true);
  });

  it('momentum balance: integral u (U - u) dA = (pi/8) Ct d0^2 U^2 to 1e-6 relative (REFERENCES.md s.4)', () => {
    // Gaussian model field on a fine grid (U = 8 m/s, d0 = 120 m, Ct = 0.8, x/d0 = 6, k* = 0.022), midpoint rule over
    // +-8 sigma: the Gaussian tail beyond is < 1e-13 and the midpoint rule is spectrally accurate for it.
    const U = 8, d0 = 120, ct = 0.8;
    const s = gaussianSigma_D(6, 0.022, bpEpsilon(ct)) * d0, C = gaussianAmplitude(s / d0, ct);
    const h = s / 20, n = 321;
    const u = new Float64Array(n * n), uInf = new Float64Array(n * n).fill(U);
    for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) {
      const y = (i - 160) * h, z = (j - 160) * h;
      u[i + j * n] = U * (1 - C * Math.exp(-(y * y + z * z) / (2 * s * s)));
    }
    const m = momentumDeficit(u, uInf, h, h).m4s2, t = thrustMomentum(ct, d0, U);
    expect(Math.abs(m / t - 1)).toBeLessThan(1e-6);
  });
});

describe('yaw deflection models', () => {
  it('Jimenez, Crespo & Migoya (2010) [from memory]: gamma = 20, Ct = 0.8, beta = 0.1 (REFERENCES.md s.4 [numpy])', () => {
    // delta/D(5) = 0.403706, delta/D(8) = 0.538026; 6 decimals printed: 2e-6 absolute (Simpson rule error ~1e-10).
    expect(Math.abs(jimenezDeflection(500, 100, 20, 0.8, 0.1) / 100 - 0.403706)).toBeLessThan(2e-6);
    expect(Math.abs(jimenezDeflection(800, 100, 20, 0.8, 0.1) / 100 - 0.538026)).toBeLessThan(2e-6);
  });

  it('Bastankhah & Porte-Agel (2016) [from memory]: gamma = 20, Ct = 0.8, I = 0.1, k = 0.022 (REFERENCES.md s.4)', () => {
    // delta/D(5) = 0.256996, delta/D(8) = 0.349499; 6 printed decimals: 2e-6 absolute.
    expect(Math.abs(bastankhahDeflection(500, 100, 20, 0.8, 0.1, 0.022) / 100 - 0.256996)).toBeLessThan(2e-6);
    expect(Math.abs(bastankhahDeflection(800, 100, 20, 0.8, 0.1, 0.022) / 100 - 0.349499)).toBeLessThan(2e-6);
    // Before x0/D = 3.032266 the deflection is linear, theta_c0 x with theta_c0 = 0.055916 rad.
    expect(Math.abs(bastankhahDeflection(200, 100, 20, 0.8, 0.1, 0.022) / 200 - 0.055916)).toBeLessThan(1e-6);
  });

  it('both models are odd in gamma and positive (to +y, left looking downstream) for gamma > 0', () => {
    // Sign convention: REFERENCES.md s.4 ("common practice") and the derivation in src/wake/yawOffset.ts.
    for (const g of [5, 15, 25]) {
      expect(jimenezDeflection(600, 100, g, 0.8)).toBeGreaterThan(0);
      expect(jimenezDeflection(600, 100, -g, 0.8)).toBeCloseTo(-jimenezDeflection(600, 100, g, 0.8), 12);
      expect(bastankhahDeflection(600, 100, g, 0.8, 0.1, 0.03)).toBeGreaterThan(0);
      expect(bastankhahDeflection(600, 100, -g, 0.8, 0.1, 0.03)).toBeCloseTo(-bastankhahDeflection(600, 100, g, 0.8, 0.1, 0.03), 12);
    }
    expect(jimenezDeflection(600, 100, 0, 0.8)).toBe(0);
  });
});

describe('helpers', () => {
  it('Ct from a curve: linear interpolation, held at the ends (hand computed)', () => {
    const curve: [number, number][] = [[4, 0.85], [8, 0.78], [12, 0.5]];
    // 6 m/s: halfway between 0.85 and 0.78 = 0.815; 10 m/s: 0.64; beyond the ends the end values. Exact to 1e-12.
    expect(thrustCoefficientAt(curve, 6).ct).toBeCloseTo(0.815, 12);
    expect(thrustCoefficientAt(curve, 10).ct).toBeCloseTo(0.64, 12);
    expect(thrustCoefficientAt(curve, 2).ct).toBe(0.85);
    expect(thrustCoefficientAt(curve, 20).ct).toBe(0.5);
    expect(thrustCoefficientAt(0.7, 10)).toEqual({ ct: 0.7, source: 'value' });
  });

  it('wraps angles to [-180, 180)', () => {
    expect(wrapDeg180(350 - 10)).toBe(-20);
    expect(wrapDeg180(10 - 350)).toBe(20);
    expect(wrapDeg180(180)).toBe(-180);
    expect(wrapDeg180(-180)).toBe(-180);
    expect(wrapDeg180(725)).toBe(5);
  });

  it('k* from turbulence (Niayifar & Porte-Agel 2016 [from memory]): 0.38 I + 0.004', () => {
    expect(kStarFromTurbulence(0.1)).toBeCloseTo(0.042, 12);
  });
});
