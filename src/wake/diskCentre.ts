/**
 * Shape-independent wake centre: the centre of the rotor-sized disk (radius R = D/2) whose available power is
 * smallest, i.e. minimising the area-weighted mean of the cubed speed over the disk's valid cells,
 *   P(yc, zc) = sum_i a_i s_i^3 / sum_i a_i,  a_i = area of cell i inside the disk (4 x 4 sub-samples per cell),
 * searched over all cell centres whose disk is covered by valid cells to at least `minCoverage`, then refined to
 * sub-cell precision by a parabola through the minimum and its two neighbours along each axis (common practice).
 * The analysis passes the speed relative to the inflow, s = u / u_inf(z) = 1 - deficit: in uniform inflow this is
 * u^3 up to a constant factor; in a sheared inflow raw u^3 would pull the minimum towards the ground (the disk
 * with the least power is then simply the lowest one), which the normalisation removes.
 * Positions in metres of the grid's axes (cross plane: y, z).
 */
import type { GridSpec } from '../grid/grid.ts';
import type { CentreEstimate } from './types.ts';

/** Fraction of cell (iy, iz) inside the circle (cy, cz, R), from 4 x 4 sub-samples. */
export function cellFractionInDisk(g: GridSpec, iy: number, iz: number, cy: number, cz: number, r: number): number {
  const y = g.y0 + iy * g.dy, z = g.z0 + iz * g.dz;
  const half = Math.hypot(g.dy, g.dz) / 2;
  const d = Math.hypot(y - cy, z - cz);
  if (d + half <= r) return 1;
  if (d - half >= r) return 0;
  let k = 0;
  for (let a = 0; a < 4; a++) for (let b = 0; b < 4; b++) {
    const sy = y + ((a + 0.5) / 4 - 0.5) * g.dy, sz = z + ((b + 0.5) / 4 - 0.5) * g.dz;
    if ((sy - cy) ** 2 + (sz - cz) ** 2 <= r * r) k++;
  }
  return k / 16;
}

/** Mean of u^3 over the disk's valid cells (area-weighted) and the covered fraction of the disk area. */
export function diskMeanCube(g: GridSpec, u: Float64Array, cy: number, cz: number, r: number): { meanCube: number; coverage: number } {
  const iy0 = Math.max(0, Math.floor((cy - r - g.y0) / g.dy)), iy1 = Math.min(g.ny - 1, Math.ceil((cy + r - g.y0) / g.dy));
  const iz0 = Math.max(0, Math.floor((cz - r - g.z0) / g.dz)), iz1 = Math.min(g.nz - 1, Math.ceil((cz + r - g.z0) / g.dz));
  let sa = 0, s = 0;
  for (let iz = iz0; iz <= iz1; iz++) for (let iy = iy0; iy <= iy1; iy++) {
    const v = u[iy + iz * g.ny];
    if (!Number.isFinite(v)) continue;
    const a = cellFractionInDisk(g, iy, iz, cy, cz, r) * g.dy * g.dz;
    if (a === 0) continue;
    sa += a; s += a * v * v * v;
  }
  return { meanCube: sa > 0 ? s / sa : NaN, coverage: sa / (Math.PI * r * r) };
}

function parabolaVertex(fm: number, f0: number, fp: number): number {
  const den = fm - 2 * f0 + fp;
  if (!(den > 0)) return 0;
  const t = (0.5 * (fm - fp)) / den;
  return Math.max(-0.5, Math.min(0.5, t));
}

export function minPowerDiskCentre(g: GridSpec, u: Float64Array, radius_m: number, minCoverage = 0.6): CentreEstimate & { meanCube: number; atEdge: boolean } {
  const P = new Float64Array(g.ny * g.nz).fill(NaN);
  let best = -1;
  for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
    const { meanCube, coverage } = diskMeanCube(g, u, g.y0 + iy * g.dy, g.z0 + iz * g.dz, radius_m);
    if (coverage < minCoverage || !Number.isFinite(meanCube)) continue;
    const k = iy + iz * g.ny;
    P[k] = meanCube;
    if (best < 0 || meanCube < P[best]) best = k;
  }
  if (best < 0) return { method: 'min-power-disk', y_m: NaN, z_m: NaN, sy_m: NaN, sz_m: NaN, ok: false, meanCube: NaN, atEdge: false };
  const iy = best % g.ny, iz = (best - iy) / g.ny;
  const at = (jy: number, jz: number) => (jy >= 0 && jy < g.ny && jz >= 0 && jz < g.nz ? P[jy + jz * g.ny] : NaN);
  const l = at(iy - 1, iz), r = at(iy + 1, iz), d = at(iy, iz - 1), up = at(iy, iz + 1);
  const atEdge = !Number.isFinite(l) || !Number.isFinite(r) || !Number.isFinite(d) || !Number.isFinite(up);
  const ty = Number.isFinite(l) && Number.isFinite(r) ? parabolaVertex(l, P[best], r) : 0;
  const tz = Number.isFinite(d) && Number.isFinite(up) ? parabolaVertex(d, P[best], up) : 0;
  return {
    method: 'min-power-disk', y_m: g.y0 + (iy + ty) * g.dy, z_m: g.z0 + (iz + tz) * g.dz, sy_m: NaN, sz_m: NaN,
    ok: !atEdge, meanCube: P[best], atEdge,
  };
}
