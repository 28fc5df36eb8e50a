/**
 * Shape-independent wake centre: the centre of the rotor-sized disk (radius R = D/2) whose available power is
 * smallest, i.e. minimising the area-weighted mean of the cubed speed over the disk's valid cells,
 *   P(yc, zc) = sum_i a_i s_i^3 / sum_i a_i,  a_i = area of cell i inside the disk (4 x 4 sub-samples per cell),
 * searched over cell centres whose disk is covered by valid cells to at least `minCoverage` (a coarse pass with a
 * stride of about R/10, then every cell within one stride of its minimum), then refined to sub-cell precision by a parabola through the minimum and its two neighbours along each axis (common practice).
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
  // Cells far inside or outside the circle without a hypot: the 16 sub-samples lie within 0.75 * half of the centre
  // (half = the cell's half diagonal), so with the centre more than 0.8 * half inside (outside) the circle every
  // sub-sample is inside (outside) by 0.05 * half, and the steps below give 1 (0) either way.
  const ey = y - cy, ez = z - cz, d2 = ey * ey + ez * ez;
  const h8 = 0.4 * Math.sqrt(g.dy * g.dy + g.dz * g.dz);
  const inner = r - h8, outer = r + h8;
  if (inner > 0 && d2 < inner * inner) return 1;
  if (d2 > outer * outer) return 0;
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

/**
 * The same quantity as diskMeanCube, fast: per-row prefix sums of s^3 and of the valid-cell count give the cells
 * wholly inside the disk in O(1) per row; only the few cells the circle cuts are sub-sampled. Build once per field.
 */
export function diskSummer(g: GridSpec, u: Float64Array): (cy: number, cz: number, r: number) => { meanCube: number; coverage: number } {
  const w = g.ny + 1;
  const S = new Float64Array(w * g.nz), C = new Float64Array(w * g.nz);
  for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
    const v = u[iy + iz * g.ny], ok = Number.isFinite(v);
    S[iz * w + iy + 1] = S[iz * w + iy] + (ok ? v * v * v : 0);
    C[iz * w + iy + 1] = C[iz * w + iy] + (ok ? 1 : 0);
  }
  const cellA = g.dy * g.dz;
  return (cy, cz, r) => {
    const iz0 = Math.max(0, Math.floor((cz - r - g.z0) / g.dz)), iz1 = Math.min(g.nz - 1, Math.ceil((cz + r - g.z0) / g.dz));
    let sa = 0, s = 0;
    for (let iz = iz0; iz <= iz1; iz++) {
      const zl = g.z0 + (iz - 0.5) * g.dz, zh = zl + g.dz;
      const far = Math.max(Math.abs(zl - cz), Math.abs(zh - cz));
      const near = cz >= zl && cz <= zh ? 0 : Math.min(Math.abs(zl - cz), Math.abs(zh - cz));
      if (near >= r) continue;
      const wOut = Math.sqrt(r * r - near * near);
      // Candidate cells: those overlapping [cy - wOut, cy + wOut].
      const a0 = Math.max(0, Math.floor((cy - wOut - g.y0) / g.dy + 0.5)), a1 = Math.min(g.ny - 1, Math.ceil((cy + wOut - g.y0) / g.dy - 0.5));
      if (a1 < a0) continue;
      let b0 = a1 + 1, b1 = a1; // cells wholly inside: y-range within the chord at the far edge of the band
      if (far < r) {
        const wIn = Math.sqrt(r * r - far * far);
        b0 = Math.max(a0, Math.ceil((cy - wIn - g.y0) / g.dy + 0.5));
        b1 = Math.min(a1, Math.floor((cy + wIn - g.y0) / g.dy - 0.5));
      }
      if (b1 >= b0) {
        s += (S[iz * w + b1 + 1] - S[iz * w + b0]) * cellA;
        sa += (C[iz * w + b1 + 1] - C[iz * w + b0]) * cellA;
      } else { b0 = a1 + 1; b1 = a1; }
      for (let iy = a0; iy <= a1; iy++) {
        if (iy >= b0 && iy <= b1) continue;
        const v = u[iy + iz * g.ny];
        if (!Number.isFinite(v)) continue;
        const a = cellFractionInDisk(g, iy, iz, cy, cz, r) * cellA;
        sa += a; s += a * v * v * v;
      }
    }
    return { meanCube: sa > 0 ? s / sa : NaN, coverage: sa / (Math.PI * r * r) };
  };
}

function parabolaVertex(fm: number, f0: number, fp: number): number {
  const den = fm - 2 * f0 + fp;
  if (!(den > 0)) return 0;
  const t = (0.5 * (fm - fp)) / den;
  return Math.max(-0.5, Math.min(0.5, t));
}

export function minPowerDiskCentre(g: GridSpec, u: Float64Array, radius_m: number, minCoverage = 0.6): CentreEstimate & { meanCube: number; atEdge: boolean } {
  const P = new Float64Array(g.ny * g.nz).fill(NaN);
  const disk = diskSummer(g, u);
  const evalAt = (iy: number, iz: number) => {
    const k = iy + iz * g.ny;
    if (!Number.isNaN(P[k])) return P[k]; // NaN = not evaluated yet; Infinity = not enough coverage
    const { meanCube, coverage } = disk(g.y0 + iy * g.dy, g.z0 + iz * g.dz, radius_m);
    P[k] = coverage >= minCoverage && Number.isFinite(meanCube) ? meanCube : Infinity;
    return P[k];
  };
  // Coarse pass on a stride of about R/10 (the disk average varies on the scale of R), then every cell within one
  // stride of the coarse minimum.
  const sy = Math.max(1, Math.floor(radius_m / 10 / g.dy)), sz = Math.max(1, Math.floor(radius_m / 10 / g.dz));
  let best = -1, bestV = Infinity;
  const consider = (iy: number, iz: number) => {
    const v = evalAt(iy, iz);
    if (v < bestV) { bestV = v; best = iy + iz * g.ny; }
  };
  for (let iz = 0; iz < g.nz; iz += sz) for (let iy = 0; iy < g.ny; iy += sy) consider(iy, iz);
  if (best >= 0 && (sy > 1 || sz > 1)) {
    const by = best % g.ny, bz = (best - by) / g.ny;
    for (let iz = Math.max(0, bz - sz); iz <= Math.min(g.nz - 1, bz + sz); iz++)
      for (let iy = Math.max(0, by - sy); iy <= Math.min(g.ny - 1, by + sy); iy++) consider(iy, iz);
  }
  if (best < 0) return { method: 'min-power-disk', y_m: NaN, z_m: NaN, sy_m: NaN, sz_m: NaN, ok: false, meanCube: NaN, atEdge: false };
  const iy = best % g.ny, iz = (best - iy) / g.ny;
  const at = (jy: number, jz: number) => (jy >= 0 && jy < g.ny && jz >= 0 && jz < g.nz ? evalAt(jy, jz) : Infinity);
  const l = at(iy - 1, iz), r = at(iy + 1, iz), d = at(iy, iz - 1), up = at(iy, iz + 1);
  const atEdge = ![l, r, d, up].every(Number.isFinite);
  const ty = Number.isFinite(l) && Number.isFinite(r) ? parabolaVertex(l, bestV, r) : 0;
  const tz = Number.isFinite(d) && Number.isFinite(up) ? parabolaVertex(d, bestV, up) : 0;
  return {
    method: 'min-power-disk', y_m: g.y0 + (iy + ty) * g.dy, z_m: g.z0 + (iz + tz) * g.dz, sy_m: NaN, sz_m: NaN,
    ok: !atEdge, meanCube: bestV, atEdge,
  };
}
