/**
 * Probe volumes of the planner against REFERENCES.md section 3 and scipy (test/reference/plan_probe.py).
 */
import { describe, expect, it } from 'vitest';
import erf from '@stdlib/math-base-special-erf';
import { cwHalfWidth, cwRayleighRange, cwWeight, probeLength, pulsedFwhm, pulsedWeight, pulseWidthParameter } from '../src/geometry/probe.ts';

describe('erf (the stdlib dependency the pulsed weighting rests on)', () => {
  it('matches scipy.special.erf (plan_probe.py output)', () => {
    // python3 test/reference/plan_probe.py:
    const ref: [number, number][] = [
      [-2.5, -0.999593047982555], [-0.3, -0.328626759459127], [0, 0], [0.1, 0.112462916018285],
      [0.8, 0.742100964707661], [1.7, 0.983790458590775], [2.9, 0.999958902121901], [3.0, 0.999977909503001],
      [3.4, 0.999998478006637], [4.5, 0.999999999803384], [6.0, 1],
    ];
    // 1e-12 absolute: the documented accuracy of the series / continued fraction pair; scipy prints 15 digits.
    for (const [x, v] of ref) expect(Math.abs(erf(x) - v)).toBeLessThan(1e-12);
  });
});

describe('continuous-wave probe (Sonnenschein & Horrigan 1971, from memory; REFERENCES.md section 3 [numpy])', () => {
  const lam = 1.565e-6, a = 0.028;
  it('half-width at 50, 100, 200 m', () => {
    // REFERENCES.md gives 6 significant digits: 1.58850, 6.35402, 25.4161 m; tolerance = half a unit in the last digit.
    expect(Math.abs(cwHalfWidth(50, lam, a) - 1.5885)).toBeLessThan(5e-6);
    expect(Math.abs(cwHalfWidth(100, lam, a) - 6.35402)).toBeLessThan(5e-6);
    expect(Math.abs(cwHalfWidth(200, lam, a) - 25.4161)).toBeLessThan(5e-5);
  });
  it('grows with the square of the focus distance (common practice)', () => {
    // exact ratio 4 for doubling R: only rounding error, 1e-12 relative
    expect(cwHalfWidth(200, lam, a) / cwHalfWidth(100, lam, a)).toBeCloseTo(4, 12);
    expect(cwHalfWidth(150, lam, a) / cwHalfWidth(50, lam, a)).toBeCloseTo(9, 12);
  });
  it('Lorentzian falls to half its peak at +/- Gamma and holds half its weight within +/- Gamma', () => {
    const R = 120, g = cwHalfWidth(R, lam, a);
    // Lorentzian algebra: phi(R +/- Gamma) = phi(R)/2 exactly; 1e-12 relative for rounding
    expect(cwWeight(R + g, R, lam, a) / cwWeight(R, R, lam, a)).toBeCloseTo(0.5, 12);
    // midpoint-rule integral over +/- Gamma with 20000 steps: error ~1e-9; REFERENCES.md: 50 % within +/- Gamma
    let s = 0;
    const n = 20000, h = (2 * g) / n;
    for (let i = 0; i < n; i++) s += cwWeight(R - g + (i + 0.5) * h, R, lam, a) * h;
    expect(Math.abs(s - 0.5)).toBeLessThan(1e-7);
  });
  it('is flagged beyond the validity limit R << pi a^2 / lambda', () => {
    // scipy: pi a^2 / lambda = 1573.8074 m; 4 decimals printed
    expect(Math.abs(cwRayleighRange(lam, a) - 1573.8074)).toBeLessThan(1e-4);
    const ins = { kind: 'cw' as const, cw: { wavelength_m: lam, apertureRadius_m: a }, pulsed: { pulseFwhm_ns: 200, gateLength_m: 30 } };
    expect(probeLength(ins, 150, 0.1).valid).toBe(true); // 150 < 157.38
    expect(probeLength(ins, 160, 0.1).valid).toBe(false); // 160 > 157.38
    // FWHM = 2 Gamma; 6 digits in REFERENCES.md
    expect(Math.abs(probeLength(ins, 100).length_m - 2 * 6.35402)).toBeLessThan(1e-5);
  });
});

describe('pulsed probe (Banakh & Smalikho 1997, from memory; REFERENCES.md section 3 [numpy])', () => {
  const tau = 200e-9, dp = 30;
  it('r_p, phi(0), phi(15), phi(30) and FWHM for tau 200 ns, gate 30 m', () => {
    // REFERENCES.md: r_p = 18.0044 m (6 digits): tolerance half a unit in the last digit
    expect(Math.abs(pulseWidthParameter(tau) - 18.0044)).toBeLessThan(5e-5);
    // REFERENCES.md 6 digits, plan_probe.py 9 digits: 0.0253764377, 0.0163591577, 0.00397164319; 1e-10 absolute
    expect(Math.abs(pulsedWeight(0, tau, dp) - 0.0253764377)).toBeLessThan(1e-10);
    expect(Math.abs(pulsedWeight(15, tau, dp) - 0.0163591577)).toBeLessThan(1e-10);
    expect(Math.abs(pulsedWeight(30, tau, dp) - 0.00397164319)).toBeLessThan(1e-10);
    expect(pulsedWeight(-15, tau, dp)).toBe(pulsedWeight(15, tau, dp)); // symmetric by construction of the formula
    // FWHM = 37.4661 m (REFERENCES.md), 37.466107 (scipy brentq): bisection to 1e-9, tolerance 1e-6 m
    expect(Math.abs(pulsedFwhm(tau, dp) - 37.466107)).toBeLessThan(1e-6);
    // second case from plan_probe.py: tau 100 ns, dp 18 m -> 20.487281
    expect(Math.abs(pulsedFwhm(100e-9, 18) - 20.487281)).toBeLessThan(1e-6);
  });
  it('integrates to 1', () => {
    // Simpson over +/- 300 m (tails beyond are < 1e-30), 6000 intervals: error far below 1e-9
    const n = 6000, L = 300, h = (2 * L) / n;
    let s = pulsedWeight(-L, tau, dp) + pulsedWeight(L, tau, dp);
    for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * pulsedWeight(-L + i * h, tau, dp);
    expect(Math.abs((s * h) / 3 - 1)).toBeLessThan(1e-9);
  });
});
