import { describe, expect, it } from 'vitest';
import { fitGaussian2D, gaussian2d } from '../src/wake/gaussian2d.ts';

// The deterministic field of REFERENCES.md section 7: y_i = -150 + 7.5 i (i = 0..40), z_j = 10 + 5 j (j = 0..30),
// (A, y0, z0, sy, sz) = (0.4, 12, 95, 35, 28), noise 0.02 sin(12.9898 i + 78.233 j).
function field(noise: boolean, background = 0) {
  const y: number[] = [], z: number[] = [], d: number[] = [];
  for (let i = 0; i <= 40; i++) for (let j = 0; j <= 30; j++) {
    const yy = -150 + 7.5 * i, zz = 10 + 5 * j;
    y.push(yy); z.push(zz);
    d.push(gaussian2d([0.4, 12, 95, 35, 28], yy, zz) + (noise ? 0.02 * Math.sin(12.9898 * i + 78.233 * j) : 0) + background);
  }
  return { y, z, d };
}

describe('2D Gaussian fit against scipy.optimize.curve_fit (REFERENCES.md section 7; Virtanen et al. 2020)', () => {
  it('5 parameters: values and standard errors match curve_fit', () => {
    const fit = fitGaussian2D(field(true), { p0: [0.3, 0, 80, 30, 30] });
    // scipy 1.17, test/reference/wake_gaussian_fit.py (output in wake_gaussian_fit.out):
    // params  0.40000159 12.00316532 94.99903429 35.00150789 27.99820670
    // stderr  0.00221712 0.19355294 0.15514978 0.19355318 0.15691233
    // ssr 0.25418310
    const p = fit.params, e = fit.stderr;
    expect(fit.converged).toBe(true);
    // Same least-squares minimum: parameters agree to ~1e-6 relative (both solvers converge far below the
    // parameters' standard errors); 1e-5 absolute on positions in metres, 1e-7 on the amplitude.
    expect(p.amplitude).toBeCloseTo(0.40000159, 7);
    expect(p.yc_m).toBeCloseTo(12.00316532, 5);
    expect(p.zc_m).toBeCloseTo(94.99903429, 5);
    expect(p.sigmaY_m).toBeCloseTo(35.00150789, 5);
    expect(p.sigmaZ_m).toBeCloseTo(27.9982067, 5);
    // Standard errors, same formula (J^T J)^-1 SSR/(N-p). curve_fit builds J by forward differences (MINPACK
    // lmdif), good to ~1e-5 relative: compare with that tolerance ...
    const scipySe = [0.00221712, 0.19355294, 0.15514978, 0.19355318, 0.15691233];
    const ours = [e.amplitude, e.yc_m, e.zc_m, e.sigmaY_m, e.sigmaZ_m];
    ours.forEach((v, k) => expect(Math.abs(v / scipySe[k] - 1)).toBeLessThan(1e-5));
    // ... and with the analytic-Jacobian covariance at curve_fit's solution (same script), 1e-7 relative (values printed to 10 decimals): the two
    // solutions differ by < 1e-7 relative and the covariance is smooth in the parameters.
    // numpy: 0.0022171211 0.1935522129 0.1551497306 0.1935524541 0.1569123462
    const analytic = [0.0022171211, 0.1935522129, 0.1551497306, 0.1935524541, 0.1569123462];
    ours.forEach((v, k) => expect(Math.abs(v / analytic[k] - 1)).toBeLessThan(1e-7));
    expect(fit.ssr).toBeCloseTo(0.2541831, 7);
    expect(fit.n).toBe(41 * 31);
    expect(fit.dof).toBe(41 * 31 - 5);
  });

  it('6 parameters (background 0.03 added): values and standard errors match curve_fit', () => {
    const fit = fitGaussian2D(field(true, 0.03), { fitOffset: true, p0: [0.3, 0, 80, 30, 30, 0] });
    // scipy: params 0.40000175 12.00316530 94.99902821 35.00178818 27.99840933 0.02999838
    //        stderr 0.00221868 0.19362939 0.15522484 0.21600693 0.17155750 0.00055225
    const p = fit.params, e = fit.stderr;
    expect(fit.converged).toBe(true);
    expect(p.amplitude).toBeCloseTo(0.40000175, 7);
    expect(p.yc_m).toBeCloseTo(12.0031653, 5);
    expect(p.zc_m).toBeCloseTo(94.99902821, 5);
    expect(p.sigmaY_m).toBeCloseTo(35.00178818, 5);
    expect(p.sigmaZ_m).toBeCloseTo(27.99840933, 5);
    expect(p.offset).toBeCloseTo(0.02999838, 7);
    // curve_fit (finite-difference Jacobian) to 1e-5 relative; analytic-Jacobian covariance to 1e-7 relative:
    // numpy: 0.0022186780 0.1936286998 0.1552248060 0.2160062597 0.1715575303 0.0005522496
    const ours = [e.amplitude, e.yc_m, e.zc_m, e.sigmaY_m, e.sigmaZ_m, e.offset];
    const scipySe = [0.00221868, 0.19362939, 0.15522484, 0.21600693, 0.1715575, 0.00055225];
    const analytic = [0.002218678, 0.1936286998, 0.155224806, 0.2160062597, 0.1715575303, 0.0005522496];
    ours.forEach((v, k) => expect(Math.abs(v / scipySe[k] - 1)).toBeLessThan(1e-5));
    ours.forEach((v, k) => expect(Math.abs(v / analytic[k] - 1)).toBeLessThan(1e-7));
  });

  it('weighted (sigma_ij = 0.01 (1 + 3 ((i + 2j) mod 3))): values and standard errors match curve_fit(sigma=...)', () => {
    const pts = field(true);
    const sigma = pts.y.map((_, k) => { const i = Math.floor(k / 31), j = k % 31; return 0.01 * (1 + 3 * ((i + 2 * j) % 3)); });
    const fit = fitGaussian2D(pts, { p0: [0.3, 0, 80, 30, 30], sigma });
    // scipy: params 0.40000151 12.00316787 94.99903537 35.00151851 27.99821011
    //        stderr (analytic Jacobian) 0.0022170039 0.1935420843 0.1551415838 0.1935423255 0.1569041090
    //        chi2 917.42662739
    // The weighted and unweighted optima differ by ~2.5e-6 m in y0, so positions are compared to 5e-7 m (both
    // solvers converge far tighter) and the standard errors (which differ by 5e-5 relative) to 1e-7 relative.
    const p = fit.params, e = fit.stderr;
    expect(Math.abs(p.amplitude - 0.40000151)).toBeLessThan(1e-8);
    expect(Math.abs(p.yc_m - 12.00316787)).toBeLessThan(5e-7);
    expect(Math.abs(p.zc_m - 94.99903537)).toBeLessThan(5e-7);
    expect(Math.abs(p.sigmaY_m - 35.00151851)).toBeLessThan(5e-7);
    expect(Math.abs(p.sigmaZ_m - 27.99821011)).toBeLessThan(5e-7);
    const analytic = [0.0022170039, 0.1935420843, 0.1551415838, 0.1935423255, 0.156904109];
    [e.amplitude, e.yc_m, e.zc_m, e.sigmaY_m, e.sigmaZ_m].forEach((v, k) => expect(Math.abs(v / analytic[k] - 1)).toBeLessThan(1e-7));
    expect(Math.abs(fit.ssr / 917.42662739 - 1)).toBeLessThan(1e-8);
  });

  it('noise-free field returns the true values (REFERENCES.md section 7)', () => {
    const fit = fitGaussian2D(field(false));
    // Default (moment-based) start; an exact model has SSR -> 0, so the parameters are exact to rounding: 1e-8.
    expect(fit.params.amplitude).toBeCloseTo(0.4, 8);
    expect(fit.params.yc_m).toBeCloseTo(12, 8);
    expect(fit.params.zc_m).toBeCloseTo(95, 8);
    expect(fit.params.sigmaY_m).toBeCloseTo(35, 8);
    expect(fit.params.sigmaZ_m).toBeCloseTo(28, 8);
    expect(fit.r2).toBeCloseTo(1, 10);
  });
});
