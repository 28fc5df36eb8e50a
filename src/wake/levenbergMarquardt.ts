/**
 * Levenberg-Marquardt least squares with an analytic Jacobian and Marquardt's diagonal scaling
 * (Marquardt 1963, SIAM J. Appl. Math. 11(2), 431-441; Press et al., Numerical Recipes, 3rd ed., section 15.5 [from memory]).
 * Minimises SSR = sum (w_i (y_i - f(x_i; p)))^2 (w_i = 1 by default) and returns the parameter covariance
 * (J_w^T J_w)^-1 SSR / (N - p) at the solution (J_w the weighted Jacobian), the same scaling
 * scipy.optimize.curve_fit uses with sigma = 1/w and absolute_sigma = False.
 *
 * Written here rather than taken from ml-levenberg-marquardt because that library stops only on an absolute SSR
 * threshold or the iteration cap (no convergence test to report) and damps without per-parameter scaling, which
 * matters when amplitudes (~0.1) and positions (~100 m) are fitted together.
 */
import { cholesky, cholSolve, invertSpd } from './linalg.ts';

export interface LmProblem {
  /** Number of data points N. */
  n: number;
  /** Observations, length N. */
  y: ArrayLike<number>;
  /**
   * Model value at point i for parameters p; writes the partial derivatives df/dp_k into grad (length p).
   */
  model: (p: number[], i: number, grad: number[]) => number;
  /** Optional weights w_i = 1 / sigma_i: minimises sum (w_i (y_i - f_i))^2. */
  weight?: ArrayLike<number>;
}

export interface LmOptions {
  /** Maximum iterations. @default 200 */
  maxIterations?: number;
  /** Converged when the relative SSR decrease and the relative step are both below this. @default 1e-10 */
  tolerance?: number;
  /** Initial damping lambda (relative to the diagonal of J^T J). @default 1e-3 */
  damping?: number;
}

export interface LmResult {
  params: number[];
  /** Covariance (J^T J)^-1 SSR/(N - p); null when singular or N <= p. */
  covariance: number[][] | null;
  stderr: number[];
  ssr: number;
  iterations: number;
  converged: boolean;
}

function ssrAndNormal(prob: LmProblem, p: number[], jtj: number[][] | null, jtr: number[] | null): number {
  const m = p.length;
  const g = new Array<number>(m).fill(0);
  if (jtj) for (const row of jtj) row.fill(0);
  if (jtr) jtr.fill(0);
  let ssr = 0;
  const wt = prob.weight;
  for (let i = 0; i < prob.n; i++) {
    let r = prob.y[i] - prob.model(p, i, g);
    if (wt) {
      r *= wt[i];
      for (let a = 0; a < m; a++) g[a] *= wt[i];
    }
    ssr += r * r;
    if (jtj && jtr) {
      for (let a = 0; a < m; a++) {
        jtr[a] += g[a] * r;
        for (let b = 0; b <= a; b++) jtj[a][b] += g[a] * g[b];
      }
    }
  }
  if (jtj) for (let a = 0; a < m; a++) for (let b = 0; b < a; b++) jtj[b][a] = jtj[a][b];
  return ssr;
}

export function levenbergMarquardt(prob: LmProblem, p0: number[], options: LmOptions = {}): LmResult {
  const maxIt = options.maxIterations ?? 200;
  const tol = options.tolerance ?? 1e-10;
  let lambda = options.damping ?? 1e-3;
  const m = p0.length;
  let p = p0.slice();
  let jtj = p.map(() => new Array<number>(m).fill(0));
  let jtr = new Array<number>(m).fill(0);
  // A trial's normal equations, filled with its SSR in one pass: an accepted trial's become the current ones (the
  // SSR of that pass is the same number as a pass without them), instead of a second pass over the data.
  let jtjT = p.map(() => new Array<number>(m).fill(0));
  let jtrT = new Array<number>(m).fill(0);
  let ssr = ssrAndNormal(prob, p, jtj, jtr);
  let converged = false;
  let it = 0;
  if (!Number.isFinite(ssr)) return { params: p, covariance: null, stderr: p.map(() => NaN), ssr, iterations: 0, converged: false };
  for (; it < maxIt && !converged; it++) {
    let accepted = false;
    for (let tries = 0; tries < 30 && !accepted; tries++) {
      const a = jtj.map((row, i) => row.map((v, j) => (i === j ? v * (1 + lambda) + 1e-300 : v)));
      const l = cholesky(a);
      if (!l) {
        lambda *= 10;
        continue;
      }
      const step = cholSolve(l, jtr);
      const trial = p.map((v, k) => v + step[k]);
      const s2 = ssrAndNormal(prob, trial, jtjT, jtrT);
      if (Number.isFinite(s2) && s2 <= ssr) {
        const relDrop = (ssr - s2) / Math.max(ssr, 1e-300);
        const relStep = Math.max(...step.map((d, k) => Math.abs(d) / (Math.abs(trial[k]) + 1e-12)));
        p = trial;
        ssr = s2;
        const tj = jtj; jtj = jtjT; jtjT = tj;
        const tr = jtr; jtr = jtrT; jtrT = tr;
        lambda = Math.max(lambda / 10, 1e-12);
        accepted = true;
        if ((relDrop < tol && relStep < Math.sqrt(tol)) || ssr === 0) converged = true;
      } else lambda *= 10;
      if (lambda > 1e16) break;
    }
    if (!accepted) {
      // No downhill step at any damping: a (local) minimum within floating-point resolution.
      converged = gradientSmall(jtj, jtr);
      break;
    }
  }
  const n = prob.n;
  let covariance: number[][] | null = null;
  if (n > m) {
    const inv = invertSpd(jtj);
    if (inv) covariance = inv.map((row) => row.map((v) => (v * ssr) / (n - m)));
  }
  const stderr = p.map((_, k) => (covariance ? Math.sqrt(covariance[k][k]) : NaN));
  return { params: p, covariance, stderr, ssr, iterations: it, converged };
}

function gradientSmall(jtj: number[][], jtr: number[]): boolean {
  // Scaled gradient: |J^T r|_k / sqrt(J^T J)_kk relative to nothing larger than rounding.
  let worst = 0;
  for (let k = 0; k < jtr.length; k++) worst = Math.max(worst, Math.abs(jtr[k]) / Math.sqrt(jtj[k][k] || 1));
  return worst < 1e-6;
}
