/**
 * Filled contours of a grid with d3-contour (marching squares with linear interpolation), returned in metres.
 *
 * d3-contour places value i of a row at coordinate i + 0.5 and treats anything outside the array as below every
 * threshold. To draw bands that reach the plot edge and do not bend towards empty cells, the grid is first padded by
 * one ring of cells copied from the edge, and empty (NaN) cells are filled from their neighbours; the caller draws
 * masked cells on top, so the filled values never show as data.
 */
import { contours } from 'd3-contour';
import type { Grid } from '../grid/grid.ts';

/** A polygon: outer ring then holes; each ring a list of [y, z] points in metres. */
export type Polygon = [number, number][][];

/** Copy of the values with each NaN replaced by the mean of its finite 4-neighbours, repeated until none is left. */
export function fillGaps(values: Float64Array, ny: number, nz: number): Float64Array {
  const out = Float64Array.from(values);
  let pending: number[] = [];
  for (let i = 0; i < out.length; i++) if (Number.isNaN(out[i])) pending.push(i);
  if (pending.length === out.length) return out;
  while (pending.length) {
    const next: number[] = [];
    const updates: [number, number][] = [];
    for (const i of pending) {
      const iy = i % ny, iz = (i - iy) / ny;
      let s = 0, n = 0;
      if (iy > 0 && !Number.isNaN(out[i - 1])) (s += out[i - 1]), n++;
      if (iy < ny - 1 && !Number.isNaN(out[i + 1])) (s += out[i + 1]), n++;
      if (iz > 0 && !Number.isNaN(out[i - ny])) (s += out[i - ny]), n++;
      if (iz < nz - 1 && !Number.isNaN(out[i + ny])) (s += out[i + ny]), n++;
      if (n) updates.push([i, s / n]);
      else next.push(i);
    }
    for (const [i, v] of updates) out[i] = v;
    pending = next;
  }
  return out;
}

/**
 * Regions where the value is at or above each threshold, in metres.
 * @param grid values NaN where empty; they are filled from neighbours first (see fillGaps)
 * @param thresholds levels in the grid's unit
 * @param clamp optional [lo, hi]: values are clamped into it first (so out-of-range values join the end bands)
 */
export function contourRegions(grid: Grid, thresholds: number[], clamp?: [number, number]): Polygon[][] {
  const { ny, nz, y0, z0, dy, dz } = grid;
  const filled = fillGaps(grid.values, ny, nz);
  const pw = ny + 2, ph = nz + 2;
  const padded = new Float64Array(pw * ph);
  for (let j = 0; j < ph; j++) {
    const iz = Math.min(nz - 1, Math.max(0, j - 1));
    for (let i = 0; i < pw; i++) {
      const iy = Math.min(ny - 1, Math.max(0, i - 1));
      let v = filled[iy + iz * ny];
      if (clamp) v = Math.min(clamp[1], Math.max(clamp[0], v));
      padded[i + j * pw] = v;
    }
  }
  const gen = contours().size([pw, ph]).smooth(true);
  // Padded value i sits at d3 coordinate i + 0.5 and at y0 + (i - 1) dy in metres.
  const toY = (c: number) => y0 + (c - 1.5) * dy;
  const toZ = (c: number) => z0 + (c - 1.5) * dz;
  const arr = Array.from(padded);
  // The padded ring reaches one cell beyond the grid; clip back to the grid's outer cell edges.
  const box: [number, number, number, number] = [y0 - dy / 2, z0 - dz / 2, y0 + (ny - 0.5) * dy, z0 + (nz - 0.5) * dz];
  return thresholds.map((t) =>
    gen
      .contour(arr, t)
      .coordinates.map((poly) => poly.map((ring) => clipRing(ring.map(([cx, cz]) => [toY(cx), toZ(cz)] as [number, number]), box)).filter((r) => r.length >= 3))
      .filter((poly) => poly.length > 0 && poly[0].length >= 3),
  );
}

/** Sutherland-Hodgman clip of a ring to the box [yMin, zMin, yMax, zMax] (exact for a convex clip region). */
export function clipRing(ring: [number, number][], box: [number, number, number, number]): [number, number][] {
  const [yMin, zMin, yMax, zMax] = box;
  const edges: [(p: [number, number]) => boolean, (a: [number, number], b: [number, number]) => [number, number]][] = [
    [(p) => p[0] >= yMin, (a, b) => at(a, b, 0, yMin)],
    [(p) => p[0] <= yMax, (a, b) => at(a, b, 0, yMax)],
    [(p) => p[1] >= zMin, (a, b) => at(a, b, 1, zMin)],
    [(p) => p[1] <= zMax, (a, b) => at(a, b, 1, zMax)],
  ];
  let out = ring;
  for (const [inside, cross] of edges) {
    const input = out;
    out = [];
    for (let i = 0; i < input.length; i++) {
      const cur = input[i], prev = input[(i + input.length - 1) % input.length];
      if (inside(cur)) {
        if (!inside(prev)) out.push(cross(prev, cur));
        out.push(cur);
      } else if (inside(prev)) out.push(cross(prev, cur));
    }
    if (!out.length) break;
  }
  return out;
}

function at(a: [number, number], b: [number, number], axis: 0 | 1, v: number): [number, number] {
  const t = (v - a[axis]) / (b[axis] - a[axis]);
  return [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
}

/** Signed area of a ring (shoelace), m^2: positive when counter-clockwise in (y, z). */
export function ringArea(ring: [number, number][]): number {
  let a = 0;
  for (let i = 0, n = ring.length, j = n - 1; i < n; j = i++) a += ring[j][0] * ring[i][1] - ring[i][0] * ring[j][1];
  return a / 2;
}

/** Area enclosed by a set of polygons (outer rings minus holes), m^2. */
export function regionArea(polys: Polygon[]): number {
  let a = 0;
  for (const p of polys) {
    a += Math.abs(ringArea(p[0]));
    for (let h = 1; h < p.length; h++) a -= Math.abs(ringArea(p[h]));
  }
  return a;
}
