/**
 * One-dimensional Gaussian fit d(c) = A exp(-(c - c0)^2 / (2 s^2)) by Levenberg-Marquardt (wake/levenbergMarquardt.ts),
 * with standard errors from (J^T J)^-1 SSR / (N - p) as scipy.optimize.curve_fit gives with absolute_sigma = False;
 * and the same with a constant baseline, d(c) = A exp(-(c - c0)^2 / (2 s^2)) + b (fitGaussian1DOffset, p = 4).
 */
import { levenbergMarquardt } from './levenbergMarquardt.ts';

export interface Gaussian1DFit {
  amplitude: number;
  centre: number;
  width: number;
  /** Constant baseline b (0 for the three-parameter fit). */
  offset: number;
  /** Standard errors of amplitude, centre, width and (four-parameter fit) the baseline; NaN for the baseline otherwise. */
  stderr: [number, number, number, number];
  r2: number;
  converged: boolean;
}

export function fitGaussian1D(c: number[], d: number[], p0?: [number, number, number]): Gaussian1DFit {
  let peak = -Infinity, at = 0;
  d.forEach((v, i) => { if (v > peak) { peak = v; at = c[i]; } });
  const span = Math.max(...c) - Math.min(...c);
  return fitModel(c, d, p0 ?? [peak, at, span / 8]);
}

/** The Gaussian with a constant baseline b, started from p0 = [A, c0, s, b]. */
export function fitGaussian1DOffset(c: number[], d: number[], p0: [number, number, number, number]): Gaussian1DFit {
  return fitModel(c, d, p0);
}

/** The fit from `start`: three parameters [A, c0, s], or four with the baseline b. */
function fitModel(c: number[], d: number[], start: number[]): Gaussian1DFit {
  const withOffset = start.length === 4;
  const r = levenbergMarquardt({
    n: c.length, y: d,
    model: (p, i, gr) => {
      const dc = c[i] - p[1];
      const e = Math.exp((-0.5 * dc * dc) / (p[2] * p[2]));
      gr[0] = e; gr[1] = (p[0] * e * dc) / (p[2] * p[2]); gr[2] = (p[0] * e * dc * dc) / (p[2] * p[2] * p[2]);
      if (withOffset) gr[3] = 1;
      return p[0] * e + (withOffset ? p[3] : 0);
    },
  }, [...start]);
  const [A, c0, s] = r.params;
  let mean = 0;
  for (const v of d) mean += v / d.length;
  let sst = 0;
  for (const v of d) sst += (v - mean) ** 2;
  return {
    amplitude: A, centre: c0, width: Math.abs(s), offset: withOffset ? r.params[3] : 0,
    stderr: [r.stderr[0], r.stderr[1], r.stderr[2], withOffset ? r.stderr[3] : NaN],
    r2: sst > 0 ? 1 - r.ssr / sst : NaN, converged: r.converged,
  };
}
