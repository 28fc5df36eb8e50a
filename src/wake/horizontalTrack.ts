/**
 * Horizontal planes: per downstream row (the grid's second axis is x), a 1D Gaussian across y,
 *   d(y) = A exp(-(y - yc)^2 / (2 sy^2)) + c,
 * fitted by Levenberg-Marquardt (standard error of yc from (J^T J)^-1 SSR/(N - p)); rows with fewer than
 * MIN_TRACK_CELLS valid cells (the 4 parameters and 2 degrees of freedom for the residual variance), a peak deficit
 * below `minDeficit`, no convergence or a centre outside the span of the row's valid cells are NaN.
 * A turbine's region in a row is only about 2 D + 0.2 dx wide (wake/siteWakes.ts), so a fixed larger count would
 * leave planes with cells of 0.4 D, or a wake near the plane's edge, without any centre.
 */
import type { GridSpec } from '../grid/grid.ts';
import { fitGaussian1DOffset } from './gaussian1d.ts';

/** Valid cells a row needs for its fit: 4 parameters + 2 degrees of freedom. */
export const MIN_TRACK_CELLS = 6;

export function horizontalTrack(g: GridSpec, deficit: Float64Array, minDeficit: number): { x_m: number[]; yc_m: number[]; syc_m: number[]; sigmaY_m: number[]; amplitude: number[] } {
  const out = { x_m: [] as number[], yc_m: [] as number[], syc_m: [] as number[], sigmaY_m: [] as number[], amplitude: [] as number[] };
  const yMin = g.y0 - g.dy / 2, yMax = g.y0 + (g.ny - 0.5) * g.dy;
  for (let ix = 0; ix < g.nz; ix++) {
    const ys: number[] = [], ds: number[] = [];
    for (let iy = 0; iy < g.ny; iy++) {
      const d = deficit[iy + ix * g.ny];
      if (Number.isFinite(d)) { ys.push(g.y0 + iy * g.dy); ds.push(d); }
    }
    out.x_m.push(g.z0 + ix * g.dz);
    let peak = -Infinity, at = 0;
    ds.forEach((d, i) => { if (d > peak) { peak = d; at = ys[i]; } });
    if (ys.length < MIN_TRACK_CELLS || !(peak >= minDeficit)) {
      out.yc_m.push(NaN); out.syc_m.push(NaN); out.sigmaY_m.push(NaN); out.amplitude.push(NaN);
      continue;
    }
    const r = fitGaussian1DOffset(ys, ds, [peak, at, (yMax - yMin) / 8, 0]);
    const A = r.amplitude, yc = r.centre, sy = r.width;
    // Inside the valid cells' span (ys ascending): cells outside a turbine's region are NaN, not part of its row.
    const good = r.converged && yc > ys[0] - g.dy / 2 && yc < ys[ys.length - 1] + g.dy / 2 && A > 0;
    out.yc_m.push(good ? yc : NaN); out.syc_m.push(good ? r.stderr[1] : NaN);
    out.sigmaY_m.push(good ? Math.abs(sy) : NaN); out.amplitude.push(good ? A : NaN);
  }
  return out;
}
