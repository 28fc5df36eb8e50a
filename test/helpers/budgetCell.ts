/** Small hand-made inputs for the budget kernels (src/retrieval/budget.ts): beam unit vectors and one cell's rows. */
import type { CellRows } from '../../src/retrieval/budget.ts';

const DEG = Math.PI / 180;

/** Site-frame unit vector of a beam at azimuth az (clockwise from north) and elevation el, degrees. */
export const unit = (az: number, el: number): number[] => [Math.cos(el * DEG) * Math.sin(az * DEG), Math.cos(el * DEG) * Math.cos(az * DEG), Math.sin(el * DEG)];

/** A cell with one row per beam (keys 0..K-1), the beams as both rows and geometry, the given weights, three unknowns. */
export function cellOf(beams: number[][], wts: number[]): CellRows {
  const K = beams.length;
  return {
    K, keys: Int32Array.from({ length: K }, (_, i) => i), rows: Float64Array.from(beams.flat()), geom: Float64Array.from(beams.flat()),
    wts: Float64Array.from(wts), dims: 3,
  };
}
