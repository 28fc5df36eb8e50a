/**
 * Sampling a grid at a point and 1D cuts through the wake centre: the horizontal cut is the grid row nearest the
 * centre height (along y), the vertical cut the column nearest the centre's y (along z). Values per cell: u, its
 * uncertainty, the deficit and the fitted Gaussian (evaluated at the cell centre; NaN without a fit).
 */
import type { GridSpec } from '../grid/grid.ts';
import type { Gaussian2DFit, Profile1D } from './types.ts';
import { gaussian2d } from './gaussian2d.ts';

/**
 * Bilinear interpolation at (y, z); when some corners are NaN, the renormalised weighted mean of the finite ones if
 * one of them weighs at least 0.25, else NaN; NaN outside.
 */
export function sampleBilinear(g: GridSpec, v: Float64Array, y: number, z: number): number {
  const fy = (y - g.y0) / g.dy, fz = (z - g.z0) / g.dz;
  if (!(fy >= -0.5 && fy <= g.ny - 0.5 && fz >= -0.5 && fz <= g.nz - 0.5)) return NaN;
  const iy = Math.max(0, Math.min(g.ny - 2, Math.floor(fy))), iz = Math.max(0, Math.min(g.nz - 2, Math.floor(fz)));
  if (g.ny < 2 || g.nz < 2) {
    return v[Math.max(0, Math.min(g.ny - 1, Math.round(fy))) + Math.max(0, Math.min(g.nz - 1, Math.round(fz))) * g.ny];
  }
  const ty = Math.max(0, Math.min(1, fy - iy)), tz = Math.max(0, Math.min(1, fz - iz));
  const c = [v[iy + iz * g.ny], v[iy + 1 + iz * g.ny], v[iy + (iz + 1) * g.ny], v[iy + 1 + (iz + 1) * g.ny]];
  const w = [(1 - ty) * (1 - tz), ty * (1 - tz), (1 - ty) * tz, ty * tz];
  if (c.every(Number.isFinite)) return c[0] * w[0] + c[1] * w[1] + c[2] * w[2] + c[3] * w[3];
  // Some neighbours masked: the weighted mean of the finite ones, renormalised, when one of them weighs at least
  // 0.25 (before: the heaviest one alone, which on a cell boundary picked one side arbitrarily and, across a wake's
  // flank, gave that cell's value rather than one between the two).
  let sw = 0, sv = 0, best = 0;
  for (let k = 0; k < 4; k++) {
    if (!Number.isFinite(c[k])) continue;
    sw += w[k]; sv += w[k] * c[k];
    if (w[k] > best) best = w[k];
  }
  return best >= 0.25 && sw > 0 ? sv / sw : NaN;
}

export interface CutFields {
  u: Float64Array;
  su: Float64Array;
  deficit: Float64Array;
}

function fitValue(fit: Gaussian2DFit | null, y: number, z: number): number {
  if (!fit) return NaN;
  const p = fit.params;
  return gaussian2d([p.amplitude, p.yc_m, p.zc_m, p.sigmaY_m, p.sigmaZ_m, p.offset], y, z);
}

export function horizontalCut(g: GridSpec, f: CutFields, zc: number, fit: Gaussian2DFit | null): Profile1D {
  const out: Profile1D = { coord_m: [], u_ms: [], su_ms: [], deficit: [], model: [] };
  const iz = Math.round((zc - g.z0) / g.dz);
  if (!(iz >= 0 && iz < g.nz)) return out;
  const z = g.z0 + iz * g.dz;
  for (let iy = 0; iy < g.ny; iy++) {
    const k = iy + iz * g.ny, y = g.y0 + iy * g.dy;
    out.coord_m.push(y); out.u_ms.push(f.u[k]); out.su_ms.push(f.su[k]); out.deficit.push(f.deficit[k]); out.model.push(fitValue(fit, y, z));
  }
  return out;
}

export function verticalCut(g: GridSpec, f: CutFields, yc: number, fit: Gaussian2DFit | null): Profile1D {
  const out: Profile1D = { coord_m: [], u_ms: [], su_ms: [], deficit: [], model: [] };
  const iy = Math.round((yc - g.y0) / g.dy);
  if (!(iy >= 0 && iy < g.ny)) return out;
  const y = g.y0 + iy * g.dy;
  for (let iz = 0; iz < g.nz; iz++) {
    const k = iy + iz * g.ny, z = g.z0 + iz * g.dz;
    out.coord_m.push(z); out.u_ms.push(f.u[k]); out.su_ms.push(f.su[k]); out.deficit.push(f.deficit[k]); out.model.push(fitValue(fit, y, z));
  }
  return out;
}
