/**
 * Velocity-deficit field d = 1 - u / u_inf(z) per cell (dimensionless, positive in the wake), shear-aware: each
 * cell is compared with the inflow at its own height (cross plane: the mean height of the cell's samples, or its
 * centre when unknown; horizontal plane: the plane's height). NaN where u is masked or the inflow is not defined. Also the deficit's standard uncertainty su / u_inf
 * and, when the inflow source gives one (a profiling instrument), the inflow's own: s_d^2 = (s_u / u_inf)^2 +
 * (u s_uinf / u_inf^2)^2 (first-order propagation, GUM JCGM 100:2008, independent errors).
 */
import type { FieldResult } from '../retrieval/types.ts';
import type { InflowProfile } from './types.ts';
import { inflowAt, inflowSdAt } from './inflow.ts';

export interface DeficitField {
  deficit: Float64Array;
  sdeficit: Float64Array;
  /** u_inf per cell, m/s. */
  uInf: Float64Array;
}

/** Height of a cell's centre: rotor-frame z for cross planes, the plane height for horizontal planes. */
export function cellHeight(f: FieldResult, iz: number): number {
  return f.orientation === 'cross' ? f.grid.z0 + iz * f.grid.dz : f.z_m;
}

/**
 * With `uIn` (one inflow speed per cell, m/s: the flow measured upstream of the turbine, wake/siteWakes.ts) the
 * deficit is 1 - u / uIn cell by cell instead of against the profile law.
 */
export function deficitField(f: FieldResult, inflow: InflowProfile, uIn?: Float64Array): DeficitField {
  const { ny, nz } = f.grid;
  const n = ny * nz;
  const deficit = new Float64Array(n).fill(NaN), sdeficit = new Float64Array(n).fill(NaN), uInf = new Float64Array(n).fill(NaN);
  for (let iz = 0; iz < nz; iz++) {
    const uc = inflowAt(inflow, cellHeight(f, iz));
    for (let iy = 0; iy < ny; iy++) {
      const k = iy + iz * ny;
      const zm = f.orientation === 'cross' ? f.zEff?.[k] : NaN;
      const ui = uIn ? uIn[k] : Number.isFinite(zm) ? inflowAt(inflow, zm!) : uc;
      uInf[k] = ui;
      const u = f.u[k];
      if (!Number.isFinite(u) || !(ui > 0)) continue;
      deficit[k] = 1 - u / ui;
      const si = inflow.speedsSd_ms ? inflowSdAt(inflow, Number.isFinite(zm) ? zm! : cellHeight(f, iz)) : 0;
      sdeficit[k] = si > 0 ? Math.hypot(f.su[k] / ui, (u * si) / (ui * ui)) : f.su[k] / ui;
    }
  }
  return { deficit, sdeficit, uInf };
}
