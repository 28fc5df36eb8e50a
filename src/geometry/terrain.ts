/**
 * Ground height under a point of the site frame: flat ground at one level (the default), or a regular grid of
 * heights in the site frame (east, north; from a GeoTIFF or XYZ raster, io/terrainFile.ts) interpolated bilinearly.
 *
 * Bilinear interpolation in cell (i, j) with fractions (s, t) in [0, 1):
 *   h = (1-s)(1-t) h00 + s(1-t) h10 + (1-s)t h01 + s t h11,
 * exact for planes and for h = a + b e + c n + d e n (the usual raster interpolation; common practice). Outside the
 * grid, or where a corner is missing (NaN, a raster's no-data), the height is NaN: "not covered".
 *
 * Used by the ingest (ground-hit QC, terrain-following heights, blocked beams), the planner and the simulator, so
 * all three see the same ground.
 */
import { beamHeight, groundDistance } from './curvature.ts';

export interface Terrain {
  /** True for flat ground: heightAt is the constant `level`. */
  readonly flat: boolean;
  /** Flat ground: its height in the site frame, metres (NaN for a grid). */
  readonly level: number;
  /** Ground height (site-frame up, metres) under (east, north); NaN where the model has none. */
  heightAt(e: number, n: number): number;
  /** Finest horizontal spacing of the model, metres (Infinity when flat): the step of beam marches. */
  readonly spacing_m: number;
  /** Site-frame extent [eMin, eMax, nMin, nMax] covered, metres (infinite when flat). */
  readonly extent: [number, number, number, number];
}

export function flatTerrain(level: number): Terrain {
  return { flat: true, level, heightAt: () => level, spacing_m: Infinity, extent: [-Infinity, Infinity, -Infinity, Infinity] };
}

/** A regular grid of heights: node (i, j) at (e0 + i de, n0 + j dn), heights row-major with i fastest. */
export interface TerrainGridSpec {
  e0: number;
  n0: number;
  de: number;
  dn: number;
  ne: number;
  nn: number;
  /** ne * nn heights, site-frame up, metres; NaN for no data. */
  heights: Float32Array | Float64Array;
}

export class GridTerrain implements Terrain {
  readonly flat = false;
  readonly level = NaN;
  readonly spacing_m: number;
  readonly extent: [number, number, number, number];
  private readonly h: Float64Array;

  constructor(readonly grid: TerrainGridSpec) {
    const { ne, nn, de, dn } = grid;
    if (!(ne >= 2 && nn >= 2 && de > 0 && dn > 0) || grid.heights.length !== ne * nn) {
      throw new RangeError(`terrain grid needs at least 2 x 2 nodes, positive spacing and ne * nn heights (got ${ne} x ${nn}, ${grid.heights.length})`);
    }
    this.h = Float64Array.from(grid.heights);
    this.spacing_m = Math.min(de, dn);
    this.extent = [grid.e0, grid.e0 + (ne - 1) * de, grid.n0, grid.n0 + (nn - 1) * dn];
  }

  heightAt(e: number, n: number): number {
    const g = this.grid;
    const x = (e - g.e0) / g.de, y = (n - g.n0) / g.dn;
    if (!(x >= 0 && y >= 0 && x <= g.ne - 1 && y <= g.nn - 1)) return NaN;
    let i = Math.floor(x), j = Math.floor(y);
    if (i === g.ne - 1) i--;
    if (j === g.nn - 1) j--;
    const s = x - i, t = y - j, k = i + j * g.ne, h = this.h;
    return (1 - t) * ((1 - s) * h[k] + s * h[k + 1]) + t * ((1 - s) * h[k + g.ne] + s * h[k + g.ne + 1]);
  }
}

/**
 * Where a beam first passes below the ground between ranges `from` and `to` (metres along the beam from its
 * origin), marching in steps of at most `step_m`: the first sampled range whose point lies below the ground, or
 * Infinity when none does. Points where the terrain has no height are not counted as blocked. With `curvature`
 * the beam height and ground distance follow the 4/3-Earth model (geometry/curvature.ts), as in the ingest.
 * The march may miss a ridge narrower than one step; the step is half the raster spacing by default.
 */
export function firstBlockedRange(
  terrain: Terrain, origin: ArrayLike<number>, ne: number, nn: number, nu: number, from: number, to: number,
  step_m = terrain.spacing_m / 2, curvature = false,
): number {
  if (terrain.flat) {
    // A straight beam over flat ground goes below it only past the range where it crosses the level.
    if (curvature) return marchCurved(terrain, origin, ne, nn, nu, from, to, 25);
    if (nu >= 0) return origin[2] >= terrain.level ? Infinity : Math.max(from, 0);
    const r = (terrain.level - origin[2]) / nu;
    return r <= to ? Math.max(r, from) : Infinity;
  }
  if (curvature) return marchCurved(terrain, origin, ne, nn, nu, from, to, step_m);
  const n = Math.max(1, Math.ceil((to - from) / step_m));
  const h = (to - from) / n;
  for (let k = 0; k <= n; k++) {
    const r = from + k * h;
    const g = terrain.heightAt(origin[0] + r * ne, origin[1] + r * nn);
    if (origin[2] + r * nu < g) return r;
  }
  return Infinity;
}

function marchCurved(terrain: Terrain, origin: ArrayLike<number>, ne: number, nn: number, nu: number, from: number, to: number, step_m: number): number {
  const elev = Math.asin(Math.max(-1, Math.min(1, nu)));
  const hn = Math.hypot(ne, nn) || 1;
  const n = Math.max(1, Math.ceil((to - from) / step_m));
  const d = (to - from) / n;
  for (let k = 0; k <= n; k++) {
    const r = from + k * d;
    const z = beamHeight(r, elev), s = groundDistance(r, elev, undefined, undefined, z);
    const g = terrain.heightAt(origin[0] + (s * ne) / hn, origin[1] + (s * nn) / hn);
    if (origin[2] + z < g) return r;
  }
  return Infinity;
}

/** True when the straight segment a -> b stays above the ground (points without terrain count as clear). */
export function segmentClear(terrain: Terrain, a: ArrayLike<number>, b: ArrayLike<number>, step_m?: number): boolean {
  const de = b[0] - a[0], dn = b[1] - a[1], du = b[2] - a[2];
  const L = Math.hypot(de, dn, du);
  if (!(L > 0)) return !(a[2] < terrain.heightAt(a[0], a[1]));
  return firstBlockedRange(terrain, a, de / L, dn / L, du / L, 0, L, step_m ?? (terrain.flat ? L : terrain.spacing_m / 2)) === Infinity;
}
