/**
 * Two-dimensional Gaussian fit of a deficit field:
 *   d(y, z) = A exp(-(y - yc)^2 / (2 sy^2) - (z - zc)^2 / (2 sz^2)) [+ c]
 * (A dimensionless amplitude, yc/zc centre in metres, sy/sz standard deviations in metres, c background), by
 * Levenberg-Marquardt with the analytic Jacobian; standard errors from (J^T J)^-1 SSR/(N - p) at the solution, as
 * scipy.optimize.curve_fit with absolute_sigma = False (Virtanen et al. 2020, Nature Methods 17, 261-272).
 * Initial values from the field's moments unless given. R^2 = 1 - SSR / sum (d - mean d)^2.
 */
import type { Gaussian2DFit, Gaussian2DParams } from './types.ts';
import { levenbergMarquardt } from './levenbergMarquardt.ts';

export interface GaussianPoints {
  y: ArrayLike<number>;
  z: ArrayLike<number>;
  d: ArrayLike<number>;
}

export interface Gaussian2DOptions {
  /** Fit a constant background c. @default false */
  fitOffset?: boolean;
  /**
   * Per-point standard uncertainties of d: weighted least squares with weights 1/sigma (as curve_fit's sigma with
   * absolute_sigma = False: the covariance is still scaled by the weighted SSR/(N - p)). Default: unweighted.
   */
  sigma?: ArrayLike<number>;
  /** Initial [A, yc, zc, sy, sz(, c)]; default from moments of the positive deficit. */
  p0?: number[];
  maxIterations?: number;
}

export function gaussian2d(p: ArrayLike<number>, y: number, z: number): number {
  const ey = (y - p[1]) / p[3], ez = (z - p[2]) / p[4];
  return p[0] * Math.exp(-0.5 * (ey * ey + ez * ez)) + (p.length > 5 ? p[5] : 0);
}

/** Moment-based starting values: peak amplitude, centroid and second moments of the positive part. */
export function gaussianStart(pts: GaussianPoints): number[] {
  let amax = -Infinity, sw = 0, sy = 0, sz = 0;
  for (let i = 0; i < pts.d.length; i++) if (pts.d[i] > amax) amax = pts.d[i];
  const thr = 0.3 * amax;
  for (let i = 0; i < pts.d.length; i++) {
    const w = pts.d[i] - thr;
    if (w > 0) { sw += w; sy += w * pts.y[i]; sz += w * pts.z[i]; }
  }
  const yc = sy / sw, zc = sz / sw;
  let vy = 0, vz = 0, w2 = 0;
  for (let i = 0; i < pts.d.length; i++) {
    const w = pts.d[i];
    if (w > thr) { w2 += w; vy += w * (pts.y[i] - yc) ** 2; vz += w * (pts.z[i] - zc) ** 2; }
  }
  // Above 30 % of the peak the truncated second moment is ~0.54 of sigma^2 for a Gaussian: rescale.
  return [amax, yc, zc, Math.sqrt(vy / w2 / 0.54) || 1, Math.sqrt(vz / w2 / 0.54) || 1];
}

export function fitGaussian2D(pts: GaussianPoints, options: Gaussian2DOptions = {}): Gaussian2DFit {
  const fitOffset = options.fitOffset ?? false;
  const n = pts.d.length;
  const p0 = options.p0 ? options.p0.slice() : gaussianStart(pts);
  if (fitOffset && p0.length < 6) p0.push(0);
  const m = p0.length;
  const res = levenbergMarquardt(
    {
      n,
      y: pts.d,
      weight: options.sigma ? Float64Array.from({ length: n }, (_, i) => 1 / options.sigma![i]) : undefined,
      model: (p, i, g) => {
        const dy = pts.y[i] - p[1], dz = pts.z[i] - p[2];
        const e = Math.exp(-0.5 * ((dy * dy) / (p[3] * p[3]) + (dz * dz) / (p[4] * p[4])));
        g[0] = e;
        g[1] = (p[0] * e * dy) / (p[3] * p[3]);
        g[2] = (p[0] * e * dz) / (p[4] * p[4]);
        g[3] = (p[0] * e * dy * dy) / (p[3] * p[3] * p[3]);
        g[4] = (p[0] * e * dz * dz) / (p[4] * p[4] * p[4]);
        if (m > 5) g[5] = 1;
        return p[0] * e + (m > 5 ? p[5] : 0);
      },
    },
    p0,
    { maxIterations: options.maxIterations ?? 200 },
  );
  const p = res.params;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += pts.d[i] / n;
  let sst = 0, ssrU = 0;
  for (let i = 0; i < n; i++) {
    sst += (pts.d[i] - mean) ** 2;
    ssrU += (pts.d[i] - gaussian2d(p, pts.y[i], pts.z[i])) ** 2;
  }
  const toParams = (v: number[], isErr: boolean): Gaussian2DParams => ({
    amplitude: v[0], yc_m: v[1], zc_m: v[2],
    sigmaY_m: isErr ? v[3] : Math.abs(v[3]), sigmaZ_m: isErr ? v[4] : Math.abs(v[4]),
    offset: m > 5 ? v[5] : isErr ? NaN : 0,
  });
  return {
    params: toParams(p, false),
    stderr: toParams(res.stderr, true),
    covariance: res.covariance ?? p.map(() => p.map(() => NaN)),
    fitOffset,
    n,
    dof: n - m,
    ssr: res.ssr,
    // RMSE and R^2 always on the unweighted residuals (deficit units), so weighted and unweighted fits compare.
    rmse: Math.sqrt(ssrU / n),
    r2: sst > 0 ? 1 - ssrU / sst : NaN,
    iterations: res.iterations,
    converged: res.converged,
  };
}
