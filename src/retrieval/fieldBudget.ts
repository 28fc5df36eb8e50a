/**
 * The budget pass over one retrieved field (after every cell is solved, since the pointing, probe and position
 * terms need the field's gradients): per cell the terms of budget.ts, the combined standard uncertainty (GUM
 * root-sum-square, its Type A part times the t factor of budget.ts typeAFactor), the optional mask on it, and the
 * turbulence statistics.
 *
 * Turbulence statistics per cell. Radial-velocity variance with the noise removed: the instruments' s_t^2
 * (sampling.ts), averaged with their kept samples as weights. Variances of the components by the variance equations
 * of crossed beams: for instrument i with unit beam n_i, var(v_r,i) = sum_k n_ik^2 var(U_k) + 2 sum_{j<k} n_ij n_ik
 * cov(U_j, U_k); with the covariances neglected, the rows n_ik^2 form a linear system for var(u), var(v), var(w)
 * (least squares with more rows than unknowns; two instruments with the w-zero assumption solve var(u), var(v) with
 * var(w) neglected too). Their standard uncertainties propagate var(s_t,i^2) = 2 s_t,i^4 / N_eff,i (the variance of a
 * sample variance of Gaussian data, with the effective sample count) through the same solve. Limits: the probe
 * volume filters out turbulence at scales below its length, so variances are low (more so for long CW probes);
 * neglected covariances (u'w' in sheared flow, u'v' in a yawed wake) bias the variances by up to 2 |n_ij n_ik cov|
 * divided by the rows' determinant; noisy estimates can be negative and are reported as they are.
 * Turbulence intensity: sqrt(max(var u, 0)) / |u| in the cell.
 */
import { invertSym3, normalMatrix } from '../geometry/amplification.ts';
import { BUDGET_TERMS, cellBudget, typeAFactor, NT, COMPONENTS, derivatives, derivativeVariances, secondDerivativeVariances, emptyFieldBudget, sensitivity, type BudgetSettings, type CellRows } from './budget.ts';
import type { CellStats, InstrumentMeans } from './cellStats.ts';
import { MaskReason, type FieldResult } from './types.ts';

/** What the retrieval kept of each cell of a plane: instruments used and their keys, in row order. */
export interface PlaneCells {
  K: Uint8Array;
  keys: Int32Array;
  /** Stride of keys (the instrument count). */
  I: number;
}

export function fieldBudget(
  f: FieldResult, cells: PlaneCells, st: InstrumentMeans, stats: CellStats, set: BudgetSettings, floor2: number, level_m: number,
): void {
  const nc = f.grid.ny * f.grid.nz;
  const b = emptyFieldBudget(nc);
  f.budget = b;
  const I = cells.I;
  const comps = [f.u, f.v, f.w];
  const wFilled = Float64Array.from(f.w, (x, c) => (x === x ? x : Number.isFinite(f.u[c]) ? 0 : NaN));
  const fields = [f.u, f.v, wFilled];
  const insPos = set.instrumentsInPlane?.(f.planeIndex, f.direction_deg);
  const secondAxis: 0 | 2 = f.orientation === 'cross' ? 2 : 0;
  const cell: CellRows = {
    K: 0, keys: new Int32Array(I), rows: new Float64Array(I * 3), geom: new Float64Array(I * 3), wts: new Float64Array(I), dims: 3,
  };
  const H = new Float64Array(3 * I), noise2 = new Float64Array(I);
  const U = new Float64Array(3), D = new Float64Array(15), d5 = new Float64Array(5);
  const py = new Float64Array(I), pz = new Float64Array(I), ins = new Int32Array(I);
  const out = new Float64Array(3 * NT);
  const ws = new Float64Array(3);
  const DVar = new Float64Array(6), dv = new Float64Array(2), D2Var = new Float64Array(9), dv2 = new Float64Array(3);
  const dirDeg = set.directionUncertainty_deg?.(f.window) ?? 0;
  const inp = { c: 0, secondAxis, level_m, U, D, py, pz, ins, insPos, yc: NaN, zc: NaN, DVar, D2Var, dirUnc_rad: Number.isFinite(dirDeg) ? (dirDeg * Math.PI) / 180 : 0 };
  const masks = [f.maskU, f.maskV, f.maskW];
  const ses = [f.su, f.sv, f.sw];
  const turb = b.turbulence;
  for (let c = 0; c < nc; c++) {
    const K = cells.K[c];
    if (K < 2 || !(Number.isFinite(f.u[c]) || Number.isFinite(f.v[c]) || Number.isFinite(f.w[c]))) continue;
    cell.K = K;
    for (let i = 0; i < K; i++) {
      const k = cells.keys[c * I + i];
      cell.keys[i] = k;
      ins[i] = k % I;
      const len = st.len[k];
      cell.rows[i * 3] = st.nx[k]; cell.rows[i * 3 + 1] = st.ny[k]; cell.rows[i * 3 + 2] = st.nz[k];
      cell.geom[i * 3] = st.nx[k] / len; cell.geom[i * 3 + 1] = st.ny[k] / len; cell.geom[i * 3 + 2] = st.nz[k] / len;
      const v = st.variance[k];
      cell.wts[i] = st.n[k] / (v > floor2 ? v : floor2);
      noise2[i] = 1 / cell.wts[i];
      py[i] = st.py[k]; pz[i] = st.pz[k];
    }
    // Three components unless w was not solved for (assumed zero, or horizontal beams).
    cell.dims = K >= 3 && f.maskW[c] !== MaskReason.assumedZero && f.maskW[c] !== MaskReason.singular ? 3 : 2;
    if (!sensitivity(cell, H)) continue;
    for (let k = 0; k < 3; k++) {
      U[k] = Number.isFinite(fields[k][c]) ? fields[k][c] : 0;
      derivatives(fields[k], f.grid.ny, f.grid.nz, f.grid.dy, f.grid.dz, c, d5);
      D.set(d5, k * 5);
      derivativeVariances(fields[k], ses[k], f.grid.ny, f.grid.nz, f.grid.dy, f.grid.dz, c, dv);
      DVar[k * 2] = dv[0]; DVar[k * 2 + 1] = dv[1];
      secondDerivativeVariances(fields[k], ses[k], f.grid.ny, f.grid.nz, f.grid.dy, f.grid.dz, c, dv2);
      D2Var.set(dv2, k * 3);
    }
    const iy = c % f.grid.ny; // cellCentre, without its pair
    inp.c = c; inp.yc = f.grid.y0 + iy * f.grid.dy; inp.zc = f.grid.z0 + ((c - iy) / f.grid.ny) * f.grid.dz;
    cellBudget(cell, H, stats, inp, set, noise2, out, ws);
    for (let k = 0; k < 3; k++) {
      if (!Number.isFinite(comps[k][c])) continue;
      const name = COMPONENTS[k];
      let sum = 0;
      const terms = b.terms[name];
      for (let j = 0; j < BUDGET_TERMS.length; j++) {
        terms[BUDGET_TERMS[j]][c] = Math.sqrt(out[k * NT + j]);
        sum += out[k * NT + j];
      }
      // The Type A part (noise + sampling) with the factor of its few degrees of freedom (budget.ts typeAFactor).
      const a = out[k * NT] + out[k * NT + 1];
      b.combined[name][c] = Math.sqrt(sum + (typeAFactor(a, ws[k]) - 1) * a);
    }
    turbulenceOfCell(cell, stats, c, turb);
    if (Number.isFinite(turb.variance.u[c]) && Math.abs(f.u[c]) > 0) turb.tiU[c] = Math.sqrt(Math.max(0, turb.variance.u[c])) / Math.abs(f.u[c]);
  }
  // The mask on the combined uncertainty, after the gradients were taken from the unmasked field.
  if (set.maxCombined_ms < Infinity) {
    for (let c = 0; c < nc; c++)
      for (let k = 0; k < 3; k++) {
        if (b.combined[COMPONENTS[k]][c] > set.maxCombined_ms && masks[k][c] === MaskReason.ok) {
          masks[k][c] = MaskReason.uncertainty;
          comps[k][c] = NaN;
          ses[k][c] = NaN;
        }
      }
  }
}

/** Scratch of turbulenceOfCell, reused across cells (grown to the most instruments seen). */
let turbB = new Float64Array(12), turbY = new Float64Array(4), turbVy = new Float64Array(4);

/** Turbulence statistics of one cell (module docblock). */
export function turbulenceOfCell(cell: CellRows, stats: CellStats, c: number, t: ReturnType<typeof emptyFieldBudget>['turbulence']): void {
  const K = cell.K, dims = cell.dims;
  let vt = 0, vn = 0, nb = 0, ta = 0, ne = 0;
  if (turbB.length < K * 3) { turbB = new Float64Array(K * 3); turbY = new Float64Array(K); turbVy = new Float64Array(K); }
  const B = turbB, y = turbY, vy = turbVy; // rows [0, rowsWith) are written before they are read
  let rowsWith = 0;
  for (let i = 0; i < K; i++) {
    const k = cell.keys[i];
    ne += stats.ne[k];
    if (!(stats.nb[k] > 0)) continue;
    vt += stats.vt[k]; vn += stats.vn[k]; nb += stats.nb[k]; ta += stats.ta[k];
    const s2 = stats.vt[k] / stats.nb[k];
    for (let d = 0; d < 3; d++) B[rowsWith * 3 + d] = d < dims ? cell.geom[i * 3 + d] ** 2 : 0;
    y[rowsWith] = s2;
    vy[rowsWith] = (2 * s2 * s2) / Math.max(1, stats.ne[k]);
    rowsWith++;
  }
  t.neff[c] = ne;
  if (nb === 0) return;
  t.vrTurbVar[c] = vt / nb; t.vrNoiseVar[c] = vn / nb; t.tau_s[c] = ta / nb;
  if (rowsWith < dims) return;
  let M: Float64Array;
  if (dims === 3) {
    M = invertSym3(normalMatrix(B, rowsWith));
  } else {
    let a = 0, b = 0, d = 0;
    for (let i = 0; i < rowsWith; i++) { a += B[i * 3] ** 2; b += B[i * 3] * B[i * 3 + 1]; d += B[i * 3 + 1] ** 2; }
    const det = a * d - b * b;
    M = Float64Array.of(d / det, -b / det, 0, -b / det, a / det, 0, 0, 0, NaN);
  }
  if (!Number.isFinite(M[0]) || !Number.isFinite(M[4])) return;
  for (let k = 0; k < dims; k++) {
    let x = 0, v = 0;
    for (let i = 0; i < rowsWith; i++) {
      const g = M[k * 3] * B[i * 3] + M[k * 3 + 1] * B[i * 3 + 1] + M[k * 3 + 2] * B[i * 3 + 2];
      x += g * y[i];
      v += g * g * vy[i];
    }
    t.variance[COMPONENTS[k]][c] = x;
    t.varianceSe[COMPONENTS[k]][c] = Math.sqrt(v);
  }
}
