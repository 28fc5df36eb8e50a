/**
 * Weighted least squares for one cell from per-instrument means.
 *
 * Model: each instrument i contributes its mean radial velocity m_i, the mean of its beam unit vectors a_i (row of
 * A, rotor frame; not renormalised, so m_i = a_i . U holds exactly for a wind uniform over the cell) and the
 * variance of that mean s_i^2 / n_i. Then m = A U + e, Cov(e) = diag(s_i^2 / n_i), and
 *   U_hat = (A^T W A)^-1 A^T W m,   W = diag(n_i / s_i^2),   Cov(U_hat) = (A^T W A)^-1
 * (weighted least squares / dilution of precision algebra: Milbert 2008, NAVIGATION; Stawiarski et al. 2013,
 * J. Atmos. Oceanic Technol. 30(9)). The standard uncertainty of component k is sqrt([(A^T W A)^-1]_kk); with three
 * instruments the system is square and the same formula is exact error propagation (A^-1 W^-1 A^-T).
 *
 * Why per-instrument means rather than every sample as a row: instruments sample at different rates, and a fast
 * instrument with many samples would otherwise dominate the solution and its geometry; averaging first gives each
 * instrument one row, weighted by how well its own mean is known (its scatter and count). Limits: samples within a
 * window are autocorrelated (turbulence is correlated over seconds to minutes), so s^2 / n underestimates the
 * variance of the mean and the uncertainties are lower bounds; with more than three instruments the residual
 * misfit is not used to rescale them. s is floored (RetrievalSettings.sigmaFloor_ms) so that no instrument gets
 * an unbounded weight.
 *
 * The error amplification reported is the unweighted geometry, sqrt(diag((A^T A)^-1)) of the renormalised mean
 * directions (`geom`; identical to A up to O(angular variance)); a component is masked when
 * it exceeds maxAmplification. When only w is masked (beams nearly coplanar near the ground), u and v keep the
 * three-component solution and its uncertainties: re-solving them with w = 0 would trade their honest, larger
 * uncertainty for an unstated bias of order w times the beams' vertical components.
 *
 * Three or more beams all (exactly) horizontal: the 3x3 system is singular only because w does not enter v_r; u, v
 * then come from the two-component solve without any assumption, and w is masked as singular.
 *
 * Two instruments with the w-zero assumption: u, v from the first two rotor-frame columns of A with w = 0, the same
 * weights; the bias from a non-zero w is not in the uncertainty.
 */
import { amplification2, amplification3, invertSym3, minCrossingAngle, minCrossingAngleUV, normalMatrix } from '../geometry/amplification.ts';
import { MaskReason } from './types.ts';

/** Result of one cell, written into a reusable object. */
export interface CellSolution {
  u: number; v: number; w: number;
  su: number; sv: number; sw: number;
  dopU: number; dopV: number; dopW: number;
  cond: number;
  minCrossing_deg: number;
  maskU: number; maskV: number; maskW: number;
}

/**
 * Vertical beam component below which a three-instrument cell whose 3x3 system is singular is solved for u, v
 * alone (w marked singular): the neglected term is at most this times |w| (1e-6 m/s per m/s of w).
 */
export const HORIZONTAL_BEAM_TOL = 1e-6;

export function emptyCellSolution(): CellSolution {
  return {
    u: NaN, v: NaN, w: NaN, su: NaN, sv: NaN, sw: NaN, dopU: NaN, dopV: NaN, dopW: NaN, cond: NaN,
    minCrossing_deg: NaN, maskU: MaskReason.noData, maskV: MaskReason.noData, maskW: MaskReason.noData,
  };
}

function reset(out: CellSolution, reason: number): void {
  out.u = out.v = out.w = out.su = out.sv = out.sw = NaN;
  out.dopU = out.dopV = out.dopW = out.cond = out.minCrossing_deg = NaN;
  out.maskU = out.maskV = out.maskW = reason;
}

/**
 * Three-component WLS from K >= 3 rows. rows: K*3 mean beam vectors; geom: the same renormalised to unit length;
 * m: K mean radial velocities; wts: K weights n_i / s_i^2. Masks: singular when (A^T A) or (A^T W A) cannot be
 * inverted; amplification per component.
 */
export function solve3(
  rows: Float64Array, geom: Float64Array, m: Float64Array, wts: Float64Array, K: number, maxAmplification: number, out: CellSolution,
): void {
  reset(out, MaskReason.ok);
  const amp = amplification3(geom, K);
  out.minCrossing_deg = amp.minCrossing_deg;
  if (!Number.isFinite(amp.inv[0])) {
    // Beams (nearly) exactly horizontal: w does not enter v_r, so u, v are determined without any assumption.
    let maxZ = 0;
    for (let i = 0; i < K; i++) maxZ = Math.max(maxZ, Math.abs(geom[i * 3 + 2]));
    if (maxZ < HORIZONTAL_BEAM_TOL) {
      solve2(rows, geom, m, wts, K, maxAmplification, out);
      out.maskW = MaskReason.singular;
      return;
    }
    reset(out, MaskReason.singular);
    out.minCrossing_deg = amp.minCrossing_deg;
    out.cond = Infinity;
    return;
  }
  out.dopU = amp.dop[0]; out.dopV = amp.dop[1]; out.dopW = amp.dop[2];
  out.cond = amp.cond;
  const C = invertSym3(normalMatrix(rows, K, wts));
  if (!Number.isFinite(C[0])) {
    out.maskU = out.maskV = out.maskW = MaskReason.singular;
    return;
  }
  let b0 = 0, b1 = 0, b2 = 0;
  for (let i = 0; i < K; i++) {
    const wm = wts[i] * m[i];
    b0 += rows[i * 3] * wm; b1 += rows[i * 3 + 1] * wm; b2 += rows[i * 3 + 2] * wm;
  }
  const U = [C[0] * b0 + C[1] * b1 + C[2] * b2, C[3] * b0 + C[4] * b1 + C[5] * b2, C[6] * b0 + C[7] * b1 + C[8] * b2];
  const S = [Math.sqrt(C[0]), Math.sqrt(C[4]), Math.sqrt(C[8])];
  const masks = [0, 0, 0];
  for (let c = 0; c < 3; c++) if (!(amp.dop[c] <= maxAmplification)) masks[c] = MaskReason.amplification;
  out.maskU = masks[0]; out.maskV = masks[1]; out.maskW = masks[2];
  out.u = masks[0] ? NaN : U[0]; out.su = masks[0] ? NaN : S[0];
  out.v = masks[1] ? NaN : U[1]; out.sv = masks[1] ? NaN : S[1];
  out.w = masks[2] ? NaN : U[2]; out.sw = masks[2] ? NaN : S[2];
}

/** Two-component (u, v) WLS with w = 0 from K >= 2 rows; w is marked assumedZero, its DOP NaN. */
export function solve2(
  rows: Float64Array, geom: Float64Array, m: Float64Array, wts: Float64Array, K: number, maxAmplification: number, out: CellSolution,
): void {
  reset(out, MaskReason.ok);
  out.maskW = MaskReason.assumedZero;
  out.minCrossing_deg = minCrossingAngleUV(geom, K);
  const amp = amplification2(geom, K);
  if (!Number.isFinite(amp.inv[0])) {
    out.maskU = out.maskV = out.maskW = MaskReason.singular;
    out.cond = Infinity;
    return;
  }
  out.dopU = amp.dop[0]; out.dopV = amp.dop[1]; out.cond = amp.cond;
  let a = 0, c = 0, d = 0, b0 = 0, b1 = 0;
  for (let i = 0; i < K; i++) {
    const x = rows[i * 3], y = rows[i * 3 + 1], w = wts[i];
    a += w * x * x; c += w * x * y; d += w * y * y;
    b0 += w * x * m[i]; b1 += w * y * m[i];
  }
  const det = a * d - c * c;
  if (!(det > 1e-14 * Math.max(a, d) ** 2)) {
    out.maskU = out.maskV = out.maskW = MaskReason.singular;
    return;
  }
  const mu = amp.dop[0] <= maxAmplification ? 0 : MaskReason.amplification;
  const mv = amp.dop[1] <= maxAmplification ? 0 : MaskReason.amplification;
  out.maskU = mu; out.maskV = mv;
  if (!mu) { out.u = (d * b0 - c * b1) / det; out.su = Math.sqrt(d / det); }
  if (!mv) { out.v = (a * b1 - c * b0) / det; out.sv = Math.sqrt(a / det); }
}
