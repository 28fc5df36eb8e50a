/**
 * Deficit-weighted centroid: yc = sum d_i y_i / sum d_i over valid cells with d_i > fraction * max d (the same for
 * z). Shape-independent and cheap; biased towards the plane's interior when the wake is cut by the edge.
 * No standard error is given (the scatter of the cells measures the wake's width, not the centre's uncertainty).
 */
import type { GridSpec } from '../grid/grid.ts';
import type { CentreEstimate } from './types.ts';

export function deficitCentroid(g: GridSpec, deficit: Float64Array, maxDeficit: number, fraction = 0.5): CentreEstimate {
  const thr = fraction * maxDeficit;
  let sw = 0, sy = 0, sz = 0;
  for (let k = 0; k < deficit.length; k++) {
    const d = deficit[k];
    if (!(d > thr)) continue;
    const iy = k % g.ny, iz = (k - iy) / g.ny;
    sw += d; sy += d * (g.y0 + iy * g.dy); sz += d * (g.z0 + iz * g.dz);
  }
  if (!(sw > 0) || !(maxDeficit > 0)) return { method: 'deficit-centroid', y_m: NaN, z_m: NaN, sy_m: NaN, sz_m: NaN, ok: false };
  return { method: 'deficit-centroid', y_m: sy / sw, z_m: sz / sw, sy_m: NaN, sz_m: NaN, ok: true };
}
