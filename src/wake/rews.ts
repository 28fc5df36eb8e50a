/**
 * Rotor-equivalent wind speed, segment method (IEC 61400-12-1:2017, annex on REWS [from memory]; the concept in
 * Wagner et al. 2011, Wind Energy 14, 993-1004):
 *   v_eq = (sum_i v_i^3 A_i / A)^(1/3),  A = pi R^2,
 * with N horizontal segments of equal height 2R/N and the segment area between heights z_a < z_b
 *   A_i = G(z_b - H) - G(z_a - H),  G(s) = s sqrt(R^2 - s^2) + R^2 arcsin(s / R),  s clipped to [-R, R].
 * Speeds in m/s, heights and R in metres, H the disk centre height.
 */
import type { GridSpec } from '../grid/grid.ts';

function G(s: number, r: number): number {
  const c = Math.max(-r, Math.min(r, s));
  return c * Math.sqrt(Math.max(0, r * r - c * c)) + r * r * Math.asin(c / r);
}

/** Area of the disk (centre height H, radius R) between heights za < zb, m^2. */
export function segmentArea(za: number, zb: number, H: number, R: number): number {
  return G(zb - H, R) - G(za - H, R);
}

/** REWS from a speed profile v(z) sampled at each segment's mid-height (the standard's procedure). */
export function rewsFromProfile(v: (z: number) => number, H: number, R: number, segments: number): number {
  let s = 0;
  for (let i = 0; i < segments; i++) {
    const za = H - R + (2 * R * i) / segments, zb = H - R + (2 * R * (i + 1)) / segments;
    s += v(0.5 * (za + zb)) ** 3 * segmentArea(za, zb, H, R);
  }
  return Math.cbrt(s / (Math.PI * R * R));
}

export interface GridRews {
  rews_ms: number;
  /** Fraction of the disk area covered by valid cells (0 to 1). */
  coverage: number;
  segments: number;
}

/**
 * REWS of a gridded cross-plane field on the disk centred (cy, cz): each segment's speed v_i is the area-weighted
 * mean of u over the valid cells' parts inside the disk and the segment (4 x 4 sub-samples per cell); the exact
 * A_i then weights v_i^3. NaN when a segment holds no valid cell.
 */
export function rewsOnGrid(g: GridSpec, u: Float64Array, cy: number, cz: number, R: number, segments: number): GridRews {
  const sum = new Float64Array(segments), area = new Float64Array(segments);
  const sub = 4, da = (g.dy * g.dz) / (sub * sub);
  const iy0 = Math.max(0, Math.floor((cy - R - g.y0) / g.dy)), iy1 = Math.min(g.ny - 1, Math.ceil((cy + R - g.y0) / g.dy));
  const iz0 = Math.max(0, Math.floor((cz - R - g.z0) / g.dz)), iz1 = Math.min(g.nz - 1, Math.ceil((cz + R - g.z0) / g.dz));
  let covered = 0;
  for (let iz = iz0; iz <= iz1; iz++) for (let iy = iy0; iy <= iy1; iy++) {
    const v = u[iy + iz * g.ny];
    if (!Number.isFinite(v)) continue;
    for (let a = 0; a < sub; a++) for (let b = 0; b < sub; b++) {
      const y = g.y0 + (iy + (a + 0.5) / sub - 0.5) * g.dy, z = g.z0 + (iz + (b + 0.5) / sub - 0.5) * g.dz;
      if ((y - cy) ** 2 + (z - cz) ** 2 > R * R) continue;
      const k = Math.min(segments - 1, Math.floor(((z - (cz - R)) / (2 * R)) * segments));
      sum[k] += v * da; area[k] += da; covered += da;
    }
  }
  // The share covered: against the disk's area on the same sub-sample lattice (extended past the grid), so a fully
  // covered disk gives exactly 1; against pi R^2 the lattice's own area error (a few % with coarse cells) gave
  // shares above 1.
  let lattice = 0;
  const jy0 = Math.floor((cy - R - g.y0) / g.dy), jy1 = Math.ceil((cy + R - g.y0) / g.dy);
  const jz0 = Math.floor((cz - R - g.z0) / g.dz), jz1 = Math.ceil((cz + R - g.z0) / g.dz);
  for (let iz = jz0; iz <= jz1; iz++) for (let iy = jy0; iy <= jy1; iy++) for (let a = 0; a < sub; a++) for (let b = 0; b < sub; b++) {
    const y = g.y0 + (iy + (a + 0.5) / sub - 0.5) * g.dy, z = g.z0 + (iz + (b + 0.5) / sub - 0.5) * g.dz;
    if ((y - cy) ** 2 + (z - cz) ** 2 <= R * R) lattice += da;
  }
  const coverage = lattice > 0 ? covered / lattice : 0;
  let s = 0;
  for (let i = 0; i < segments; i++) {
    if (!(area[i] > 0)) return { rews_ms: NaN, coverage, segments };
    const za = cz - R + (2 * R * i) / segments, zb = cz - R + (2 * R * (i + 1)) / segments;
    s += (sum[i] / area[i]) ** 3 * segmentArea(za, zb, cz, R);
  }
  return { rews_ms: Math.cbrt(s / (Math.PI * R * R)), coverage, segments };
}
