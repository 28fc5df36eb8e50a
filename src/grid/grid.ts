/**
 * The one grid type: a flat row-major Float64Array of ny * nz values plus its spacing. Index = iy + iz * ny, so the
 * first axis (rotor-frame y) runs fastest, as d3-contour expects (width = ny, height = nz). Cell centres are at
 * y0 + iy * dy and z0 + iz * dz. NaN marks empty or masked cells.
 *
 * For a cross plane the second axis is height z above ground; for a horizontal plane it is the downstream x.
 */
import type { PlaneSpec } from '../campaign/types.ts';

export interface GridSpec {
  ny: number;
  nz: number;
  /** Centre of the first cell along y, metres. */
  y0: number;
  /** Centre of the first cell along the second axis, metres. */
  z0: number;
  dy: number;
  dz: number;
}

export interface Grid extends GridSpec {
  values: Float64Array;
}

export function gridSpecOf(plane: PlaneSpec): GridSpec {
  const [dy, dz] = plane.cell_m;
  const ny = Math.max(1, Math.round((plane.y.max - plane.y.min) / dy));
  const nz = Math.max(1, Math.round((plane.second.max - plane.second.min) / dz));
  return { ny, nz, y0: plane.y.min + dy / 2, z0: plane.second.min + dz / 2, dy, dz };
}

/** Cell index of a point, or -1 outside the grid. */
export function cellIndex(g: GridSpec, y: number, z: number): number {
  const iy = Math.floor((y - (g.y0 - g.dy / 2)) / g.dy);
  const iz = Math.floor((z - (g.z0 - g.dz / 2)) / g.dz);
  if (iy < 0 || iy >= g.ny || iz < 0 || iz >= g.nz) return -1;
  return iy + iz * g.ny;
}

export function cellCentre(g: GridSpec, index: number): [number, number] {
  const iy = index % g.ny;
  const iz = (index - iy) / g.ny;
  return [g.y0 + iy * g.dy, g.z0 + iz * g.dz];
}

export function emptyGrid(g: GridSpec, fill = NaN): Grid {
  return { ...g, values: new Float64Array(g.ny * g.nz).fill(fill) };
}

export function withValues(g: GridSpec, values: Float64Array): Grid {
  if (values.length !== g.ny * g.nz) throw new RangeError(`grid needs ${g.ny * g.nz} values, got ${values.length}`);
  return { ny: g.ny, nz: g.nz, y0: g.y0, z0: g.z0, dy: g.dy, dz: g.dz, values };
}
