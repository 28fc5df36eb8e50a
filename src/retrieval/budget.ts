/**
 * The uncertainty budget of a retrieved field: per cell and component, each term as a standard uncertainty (m/s),
 * combined following the GUM (JCGM 100:2008, eq. 10: root-sum-square of independent standard uncertainties, each
 * times its sensitivity coefficient). The retrieval is linear in the instruments' mean radial velocities,
 * U = H m with H = (A^T W A)^-1 A^T W (solveCell.ts), so the sensitivity of component k to instrument i's mean is
 * H_ki, and an error source acting on each instrument's mean independently contributes sqrt(sum_i H_ki^2 u_i^2).
 *
 * Terms (per instrument i, then through H):
 * - noise: the scatter term the retrieval always reported, s_i^2 / n_i with floored s (equal to the WLS covariance
 *   sqrt([(A^T W A)^-1]_kk); it is the variance of the mean if the samples were independent).
 * - sampling: the turbulence sampling error of autocorrelated samples beyond the scatter term,
 *   s_t^2 (1 / N_eff - 1 / n) (sampling.ts: Lenschow, Mann & Kristensen 1994; noise removed by the lag-0
 *   extrapolation of Lenschow, Wulfmeyer & Senff 2000).
 * - pointing: azimuth and elevation errors (standard uncertainties per instrument, degrees) and the instrument's
 *   position error (metres, each axis), propagated linearly: a beam off by d(az) measures
 *   v_r + d(az) [dn/d(az) . U + r n . (grad U) dn/d(az)] (the changed direction and the displaced point at range r),
 *   dn/d(az) = (n_y, -n_x, 0) and dn/d(el) = (-n_z n_x / h, -n_z n_y / h, h) in the rotor frame (h = horizontal
 *   length of n; azimuth clockwise seen from above); a position error dp displaces the point: n . (grad U) dp.
 *   Gradients are the in-plane ones of the retrieved field (central differences); the gradient across the plane is
 *   not known from one plane and is neglected. Pointing and position errors are taken as constant over a window for
 *   one instrument and independent between instruments.
 * - probe: probe-volume averaging. The measured v_r is the weighted mean along the beam; for a field with
 *   curvature, mean = v_r(p) + (1/2) m2 d^2 v_r / ds^2 (Taylor expansion of the weighted mean, s along the beam),
 *   m2 the second moment of the weighting (pulsed: r_p^2 / 2 + dp^2 / 12, constant; continuous-wave: that of the
 *   Gaussian with the same width, (2 Gamma)^2 / (8 ln 2), growing with the fourth power of the focus distance, the
 *   Lorentzian's own being infinite; geometry/probe.ts). d^2 v_r / ds^2 comes from the in-plane second differences of
 *   the retrieved field over the cell size, so curvature on scales below two cells is not seen. The bias is
 *   treated as a standard uncertainty of its own size (it is not corrected).
 * - timing: non-simultaneity. Each instrument's mean refers to its mean sample time; the offset from the window's
 *   middle times the trend of its radial velocity (sampling.ts) is the error of that mean against the window mean;
 *   instruments sampling a cell at different times have different offsets.
 * - position: the value is reported at the cell centre p_c while instrument i's samples sit, on average, at p_i (its
 *   mean in-plane sample position in the cell; instruments see different parts of a cell). Expanding the field to
 *   first order about p_c (Taylor), instrument i's mean is n_i . U(p_c) + n_i . G (p_i - p_c), G the in-plane
 *   gradient of the retrieved field (central differences), so the solve U = H m is off by
 *   b_k = sum_i H_ki n_i . G (p_i - p_c) = sum_j A_kj dU_j/dy + B_kj dU_j/ds,  A_kj = sum_i H_ki n_ij dy_i (B with ds_i).
 *   A gradient of u thus reaches v and w when the instruments carrying v sample other parts of the cell than those
 *   carrying u. It reduces to G_k . (p - p_c) when every instrument samples the same point (sum_i H_ki n_ij = delta_kj).
 *   The square has the variance of the gradient estimate (from the neighbours' scatter terms, through A and B)
 *   removed, floored at zero. The bias is treated as a standard uncertainty of its own size (it is not corrected).
 * - direction: the window's wind direction defines the rotor frame and is itself a mean of a direction series with
 *   standard uncertainty u_D (windows/direction.ts: type A, s / sqrt(n) of the rows in the window, GUM 4.2.3). A
 *   direction error delta (clockwise) turns the frame by eps = -delta about its origin (anticlockwise seen from
 *   above): the cell (x_c, y_c) of the estimated frame is the point (x_c - eps y_c, y_c + eps x_c) of the true one and
 *   its reported components are the true ones turned, (u + eps v, v - eps u, w). To first order
 *   dU_k/d(eps) = (v, -u, 0)_k + x_c dU_k/dy - y_c dU_k/dx, and the term is |dU_k/d(eps)| u_D (GUM eq. 10). On a cross
 *   plane x_c is the plane's downstream distance (600 m at 5 D: a 0.1 degree error moves the cell 1 m sideways) and
 *   dU/dx, across the plane, is not known and left out; on a horizontal plane both gradients are in the plane.
 *   On the simulator with noise and turbulence off this was the v error the budget missed: per window the mean v
 *   error equalled u times the direction error to 1e-3 m/s.
 *
 * Not in the budget: calibration errors of the velocity scale, the gradient across the plane, systematic errors of
 * the wind direction unless the campaign declares them (windDirection.uncertainty_deg), covariances
 * between terms, flow that is not stationary within a window beyond a linear trend, and the robust filter's
 * rejections of real data.
 *
 * Cost: O(cells x instruments) per field after the solve; no allocation per cell.
 */
import { invertSym3, normalMatrix } from '../geometry/amplification.ts';
import type { CellStats } from './cellStats.ts';

export const BUDGET_TERMS = ['noise', 'sampling', 'pointing', 'probe', 'timing', 'position', 'direction'] as const;
/** Number of budget terms: the stride of cellBudget's output per component. */
export const NT = BUDGET_TERMS.length;
export type BudgetTerm = (typeof BUDGET_TERMS)[number];
export const COMPONENTS = ['u', 'v', 'w'] as const;
export type Component = (typeof COMPONENTS)[number];

/** Inputs of the budget beyond the kept-sample statistics. */
export interface BudgetSettings {
  /** Compute the budget; off: the fields carry none (and the accumulators skip its sums). @default true */
  enabled: boolean;
  /** Per instrument: standard uncertainty of the azimuth and elevation, degrees. @default 0 */
  pointingAz_deg: Float64Array;
  pointingEl_deg: Float64Array;
  /** Per instrument: standard uncertainty of the position along each axis, metres. @default 0 */
  position_m: Float64Array;
  /** Per instrument: second moment of the probe weighting along the beam (m^2) at range r (m). */
  probeMoment2(instrument: number, range_m: number): number;
  /**
   * Instrument positions in each plane's frame for a wind direction (from, degrees): array of instruments x 3
   * (x downstream, y left, z up from the plane's height base), metres; undefined: ranges unknown (the displaced-point
   * part of the pointing term and the probe term are left out).
   */
  instrumentsInPlane?(planeIndex: number, direction_deg: number): Float64Array;
  /** Mask a component whose combined standard uncertainty exceeds this, m/s. @default Infinity (no mask) */
  maxCombined_ms: number;
  /**
   * Standard uncertainty of the wind direction that defined the window's rotor frame, degrees (the direction term);
   * undefined or NaN: 0 (the direction taken as exact).
   */
  directionUncertainty_deg?(window: { start_s: number; end_s: number; members?: [number, number][] }): number;
}

/** Turbulence statistics of a field (per cell). */
export interface FieldTurbulence {
  /** Radial-velocity variance with the noise removed, and the noise variance (mean over the instruments used), m^2/s^2. */
  vrTurbVar: Float64Array;
  vrNoiseVar: Float64Array;
  /** Integral time scale, s (mean over instruments, weighted by samples). */
  tau_s: Float64Array;
  /** Effective sample count, summed over the instruments used. */
  neff: Float64Array;
  /** Variances of u, v, w from the crossed-beam variance equations (covariances neglected), m^2/s^2, and their standard uncertainties. */
  variance: Record<Component, Float64Array>;
  varianceSe: Record<Component, Float64Array>;
  /** Turbulence intensity of u: sqrt(var u) / |u|. */
  tiU: Float64Array;
}

export interface FieldBudget {
  terms: Record<Component, Record<BudgetTerm, Float64Array>>;
  combined: Record<Component, Float64Array>;
  turbulence: FieldTurbulence;
}

export function emptyFieldBudget(nc: number): FieldBudget {
  const nan = () => new Float64Array(nc).fill(NaN);
  const perTerm = () => Object.fromEntries(BUDGET_TERMS.map((t) => [t, nan()])) as Record<BudgetTerm, Float64Array>;
  const perComp = <T>(f: () => T) => ({ u: f(), v: f(), w: f() });
  return {
    terms: perComp(perTerm),
    combined: perComp(nan),
    turbulence: {
      vrTurbVar: nan(), vrNoiseVar: nan(), tau_s: nan(), neff: nan(), variance: perComp(nan), varianceSe: perComp(nan), tiU: nan(),
    },
  };
}

/** What the retrieval keeps of a solved cell for its budget. */
export interface CellRows {
  /** Instruments used (rows), their keys, mean beam vectors (K x 3), renormalised (K x 3), weights. */
  K: number;
  keys: Int32Array;
  rows: Float64Array;
  geom: Float64Array;
  wts: Float64Array;
  dims: 2 | 3;
}

/**
 * The sensitivity matrix H (dims x K, row-major with stride K) of a cell: U = H m. Returns false when singular.
 */
export function sensitivity(c: CellRows, H: Float64Array): boolean {
  const K = c.K, r = c.rows, w = c.wts;
  if (c.dims === 3) {
    const C = invertSym3(normalMatrix(r, K, w));
    if (!Number.isFinite(C[0])) return false;
    for (let k = 0; k < 3; k++)
      for (let i = 0; i < K; i++) H[k * K + i] = w[i] * (C[k * 3] * r[i * 3] + C[k * 3 + 1] * r[i * 3 + 1] + C[k * 3 + 2] * r[i * 3 + 2]);
    return true;
  }
  let a = 0, b = 0, d = 0;
  for (let i = 0; i < K; i++) {
    const x = r[i * 3], y = r[i * 3 + 1];
    a += w[i] * x * x; b += w[i] * x * y; d += w[i] * y * y;
  }
  const det = a * d - b * b;
  if (!(det > 0)) return false;
  for (let i = 0; i < K; i++) {
    const x = r[i * 3], y = r[i * 3 + 1];
    H[i] = (w[i] * (d * x - b * y)) / det;
    H[K + i] = (w[i] * (a * y - b * x)) / det;
    H[2 * K + i] = 0;
  }
  return true;
}

/** Second moment (m^2) of the probe weighting: pulsed from pulse and gate, CW from its FWHM (module docblock). */
export function probeSecondMoment(kind: 'pulsed' | 'cw', length_m: number, pulse?: { rp_m: number; gate_m: number }): number {
  if (kind === 'pulsed' && pulse) return (pulse.rp_m * pulse.rp_m) / 2 + (pulse.gate_m * pulse.gate_m) / 12;
  return (length_m * length_m) / (8 * Math.LN2);
}

/**
 * Derivatives of a grid-shaped field at cell c: first along y (axis 0) and the second in-plane axis (axis 1),
 * central where both neighbours are finite, one-sided where one is, else 0; second derivatives (yy, 11, y1) where
 * the stencil is complete, else 0. Writes [d0, d1, d00, d11, d01] into out.
 */
export function derivatives(f: Float64Array, ny: number, nz: number, dy: number, dz: number, c: number, out: Float64Array): void {
  const iy = c % ny, iz = (c - iy) / ny;
  const at = (jy: number, jz: number) => (jy < 0 || jy >= ny || jz < 0 || jz >= nz ? NaN : f[jz * ny + jy]);
  const f0 = f[c];
  const l = at(iy - 1, iz), r = at(iy + 1, iz), d = at(iy, iz - 1), u = at(iy, iz + 1);
  out[0] = r === r && l === l ? (r - l) / (2 * dy) : r === r && f0 === f0 ? (r - f0) / dy : l === l && f0 === f0 ? (f0 - l) / dy : 0;
  out[1] = u === u && d === d ? (u - d) / (2 * dz) : u === u && f0 === f0 ? (u - f0) / dz : d === d && f0 === f0 ? (f0 - d) / dz : 0;
  out[2] = r === r && l === l && f0 === f0 ? (r - 2 * f0 + l) / (dy * dy) : 0;
  out[3] = u === u && d === d && f0 === f0 ? (u - 2 * f0 + d) / (dz * dz) : 0;
  const pp = at(iy + 1, iz + 1), pm = at(iy + 1, iz - 1), mp = at(iy - 1, iz + 1), mm = at(iy - 1, iz - 1);
  out[4] = pp === pp && pm === pm && mp === mp && mm === mm ? (pp - pm - mp + mm) / (4 * dy * dz) : 0;
}

/**
 * Variances of the first derivatives of `derivatives` (same stencils) from the standard uncertainties `s` of the
 * values: central (s_+^2 + s_-^2) / (2 d)^2, one-sided (s_1^2 + s_0^2) / d^2, none 0. Writes [var d0, var d1].
 */
export function derivativeVariances(f: Float64Array, s: Float64Array, ny: number, nz: number, dy: number, dz: number, c: number, out: Float64Array): void {
  const iy = c % ny, iz = (c - iy) / ny;
  const ok = (jy: number, jz: number) => jy >= 0 && jy < ny && jz >= 0 && jz < nz && f[jz * ny + jy] === f[jz * ny + jy];
  const v = (jy: number, jz: number) => { const x = s[jz * ny + jy]; return x === x ? x * x : 0; };
  const one = (pOk: boolean, mOk: boolean, p: number, m: number, d: number) =>
    pOk && mOk ? (p + m) / (4 * d * d) : pOk ? (p + v(iy, iz)) / (d * d) : mOk ? (m + v(iy, iz)) / (d * d) : 0;
  out[0] = one(ok(iy + 1, iz), ok(iy - 1, iz), ok(iy + 1, iz) ? v(iy + 1, iz) : 0, ok(iy - 1, iz) ? v(iy - 1, iz) : 0, dy);
  out[1] = one(ok(iy, iz + 1), ok(iy, iz - 1), ok(iy, iz + 1) ? v(iy, iz + 1) : 0, ok(iy, iz - 1) ? v(iy, iz - 1) : 0, dz);
}

const posA = new Float64Array(9), posB = new Float64Array(9);
/** cellBudget's per-row vectors (beam, azimuth and elevation derivatives of the beam), reused: no arrays per row. */
const nv = new Float64Array(3), daz = new Float64Array(3), del = new Float64Array(3);

/**
 * Variances of the second derivatives of `derivatives` (same stencils: zero where it gives 0) from the standard
 * uncertainties `s` of the values, taken as independent: d00 (s_-^2 + 4 s_0^2 + s_+^2) / dy^4, d11 the same along
 * the second axis, d01 the sum of the four corners' variances / (4 dy dz)^2. Writes [var d00, var d11, var d01].
 */
export function secondDerivativeVariances(f: Float64Array, s: Float64Array, ny: number, nz: number, dy: number, dz: number, c: number, out: Float64Array): void {
  const iy = c % ny, iz = (c - iy) / ny;
  const ok = (jy: number, jz: number) => jy >= 0 && jy < ny && jz >= 0 && jz < nz && f[jz * ny + jy] === f[jz * ny + jy];
  const v = (jy: number, jz: number) => { const x = s[jz * ny + jy]; return x === x ? x * x : 0; };
  const c0 = ok(iy, iz);
  out[0] = c0 && ok(iy - 1, iz) && ok(iy + 1, iz) ? (v(iy - 1, iz) + 4 * v(iy, iz) + v(iy + 1, iz)) / dy ** 4 : 0;
  out[1] = c0 && ok(iy, iz - 1) && ok(iy, iz + 1) ? (v(iy, iz - 1) + 4 * v(iy, iz) + v(iy, iz + 1)) / dz ** 4 : 0;
  out[2] = ok(iy + 1, iz + 1) && ok(iy + 1, iz - 1) && ok(iy - 1, iz + 1) && ok(iy - 1, iz - 1)
    ? (v(iy + 1, iz + 1) + v(iy + 1, iz - 1) + v(iy - 1, iz + 1) + v(iy - 1, iz - 1)) / (16 * dy * dy * dz * dz) : 0;
}

/** Per-cell inputs of the budget pass. */
export interface BudgetCellInput {
  /** Cell index, plane geometry. */
  c: number;
  /** Rotor-frame axis of the second in-plane coordinate: 2 (z) for a cross plane, 0 (x) for a horizontal one. */
  secondAxis: 0 | 2;
  /** Plane level: x of a cross plane, z of a horizontal one (metres). */
  level_m: number;
  /** Components (NaN where masked; w = 0 used where assumed or masked) and their derivatives: 3 x 5 values. */
  U: Float64Array;
  D: Float64Array;
  /** Mean sample position of each row in the plane (py, pz), metres. */
  py: Float64Array;
  pz: Float64Array;
  /** Instrument index of each row. */
  ins: Int32Array;
  /** Instrument positions in the plane's frame (instruments x 3), or undefined. */
  insPos?: Float64Array;
  /** Cell centre (y, second), metres, in the plane's frame (origin: the plane's rotor-frame origin). */
  yc: number;
  zc: number;
  /** Variances of the first derivatives D[k * 5], D[k * 5 + 1] from the noise of the values they were taken from (3 x 2), or undefined. */
  DVar?: Float64Array;
  /** Variances of the second derivatives D[k * 5 + 2..4] likewise (3 x 3: d00, d11, d01), or undefined. */
  D2Var?: Float64Array;
  /** Standard uncertainty of the rotor frame's direction, radians (0: exact). */
  dirUnc_rad: number;
}

/**
 * The budget terms of one cell (squared, per component k and term t at out[k * NT + t]) from its rows, sensitivity H
 * (dims x K) and kept statistics. `ws` (optional, 3 values): per component the Welch-Satterthwaite denominator of the
 * Type A part (noise + sampling), sum_i (H_ki^2 u_i^2)^2 / nu_i, nu_i = N_eff,i - 1 (GUM, JCGM 100:2008, G.4.1,
 * eq. G.2b); typeAFactor turns it into the factor of the combined uncertainty.
 */
export function cellBudget(cell: CellRows, H: Float64Array, st: CellStats, inp: BudgetCellInput, set: BudgetSettings, noise2: Float64Array, out: Float64Array, ws?: Float64Array): void {
  out.fill(0);
  if (ws) ws.fill(0);
  posA.fill(0); posB.fill(0);
  const K = cell.K, U = inp.U, D = inp.D, sa = inp.secondAxis;
  const DEG = Math.PI / 180;
  for (let i = 0; i < K; i++) {
    const key = cell.keys[i], ins = inp.ins[i];
    const n = st.n[key];
    const nx = cell.geom[i * 3], ny = cell.geom[i * 3 + 1], nz = cell.geom[i * 3 + 2];
    nv[0] = nx; nv[1] = ny; nv[2] = nz;
    // n . dU/da for the in-plane axes a = 0 (y), 1 (second); second derivative along the beam.
    let g0 = 0, g1 = 0, c00 = 0, c11 = 0, c01 = 0;
    for (let k = 0; k < 3; k++) {
      g0 += nv[k] * D[k * 5]; g1 += nv[k] * D[k * 5 + 1];
      c00 += nv[k] * D[k * 5 + 2]; c11 += nv[k] * D[k * 5 + 3]; c01 += nv[k] * D[k * 5 + 4];
    }
    const ns = nv[sa];
    const vrss = ny * ny * c00 + ns * ns * c11 + 2 * ny * ns * c01;
    // Noise of that curvature from the noise of the values (components taken as independent): removed from its square.
    let vv = 0;
    if (inp.D2Var) {
      const a = ny * ny, b = ns * ns, d = 2 * ny * ns;
      for (let k = 0; k < 3; k++) vv += nv[k] * nv[k] * (a * a * inp.D2Var[k * 3] + b * b * inp.D2Var[k * 3 + 1] + d * d * inp.D2Var[k * 3 + 2]);
    }
    let range = NaN;
    if (inp.insPos) {
      const px = sa === 2 ? inp.level_m : inp.pz[i], py = inp.py[i], pzz = sa === 2 ? inp.pz[i] : inp.level_m;
      range = Math.hypot(px - inp.insPos[ins * 3], py - inp.insPos[ins * 3 + 1], pzz - inp.insPos[ins * 3 + 2]);
    }
    // Pointing: direction change and point displacement.
    const h = Math.hypot(nx, ny) || 1e-12;
    daz[0] = ny; daz[1] = -nx; daz[2] = 0;
    del[0] = (-nz * nx) / h; del[1] = (-nz * ny) / h; del[2] = h;
    let gaz = daz[0] * U[0] + daz[1] * U[1];
    let gel = del[0] * U[0] + del[1] * U[1] + del[2] * U[2];
    if (range === range) {
      gaz += range * (daz[1] * g0 + daz[sa] * g1);
      gel += range * (del[1] * g0 + del[sa] * g1);
    }
    const saz = set.pointingAz_deg[ins] * DEG, sel = set.pointingEl_deg[ins] * DEG, sp = set.position_m[ins];
    const point2 = gaz * gaz * saz * saz + gel * gel * sel * sel + sp * sp * (g0 * g0 + g1 * g1);
    const m2 = range === range ? set.probeMoment2(ins, range) : 0;
    const probe2 = 0.25 * m2 * m2 * Math.max(0, vrss * vrss - (vv === vv ? vv : 0));
    // Sampling beyond the scatter term; negative (inflation below 1: sampling.ts) it lowers this instrument's scatter term.
    const vb2 = n > 0 ? st.vb[key] / (n * n) : 0;
    const samp2 = vb2 > 0 ? vb2 : 0, scat2 = vb2 < 0 ? Math.max(0, noise2[i] + vb2) : noise2[i];
    const e = n > 0 ? st.se[key] / n : 0;
    // Position: this row's mean sample position relative to the cell centre (0 where unknown).
    const dyi = inp.py[i] - inp.yc, dzi = inp.pz[i] - inp.zc;
    const dy = dyi === dyi ? dyi : 0, dz = dzi === dzi ? dzi : 0;
    // Degrees of freedom of this instrument's Type A variance (scatter + sampling): its effective sample count less
    // one (n - 1 for independent samples; about the number of independent passes when they are correlated).
    const ne = st.ne[key];
    const nu = Math.max(1, (ne > 0 ? ne : n) - 1);
    for (let k = 0; k < cell.dims; k++) {
      const hk = H[k * K + i], h2 = hk * hk;
      if (ws) { const a = h2 * (scat2 + samp2); ws[k] += (a * a) / nu; }
      out[k * NT] += h2 * scat2;
      out[k * NT + 1] += h2 * samp2;
      out[k * NT + 2] += h2 * point2;
      out[k * NT + 3] += h2 * probe2;
      out[k * NT + 4] += h2 * e * e;
      // Coefficients of the position bias on the components' gradients: A[k][j] (d/dy of U_j), B[k][j] (d/d second).
      for (let j = 0; j < 3; j++) {
        posA[k * 3 + j] += hk * nv[j] * dy;
        posB[k * 3 + j] += hk * nv[j] * dz;
      }
    }
  }
  for (let k = 0; k < 3; k++) {
    // Position: the first-order Taylor bias sum_i H_ki n_i . (grad U) (p_i - p_c) = sum_j A_kj dU_j/dy + B_kj dU_j/ds.
    let p = 0, vp = 0;
    for (let j = 0; j < 3; j++) {
      const a = posA[k * 3 + j], b = posB[k * 3 + j];
      p += a * D[j * 5] + b * D[j * 5 + 1];
      // The gradients' own noise inflates p^2 on average by this variance: removed, floored at zero (as for the trend).
      if (inp.DVar) vp += a * a * inp.DVar[j * 2] + b * b * inp.DVar[j * 2 + 1];
    }
    out[k * NT + 5] = p === p ? Math.max(0, p * p - (vp === vp ? vp : 0)) : 0;
    // Direction: a frame turned by eps (anticlockwise seen from above; eps = -(direction error)) reports
    // (u + eps v, v - eps u, w) of the point (x - eps y, y + eps x) of the true frame.
    const rot = k === 0 ? U[1] : k === 1 ? -U[0] : 0;
    const gy = D[k * 5], gx = sa === 0 ? D[k * 5 + 1] : 0;
    const xc = sa === 0 ? inp.zc : inp.level_m;
    const sd = (rot + xc * gy - inp.yc * gx) * inp.dirUnc_rad;
    out[k * NT + 6] = sd === sd ? sd * sd : 0;
  }
}

/** Smallest effective degrees of freedom used by typeAFactor (its factor is then 3; below 2 a t variance is infinite). */
export const MIN_DOF = 3;

/**
 * Factor on the Type A variance (noise + sampling terms, squared) of a component in its combined uncertainty, for the
 * few degrees of freedom of an estimated variance. The Type A part a = sum_i H_ki^2 u_i^2 has the effective degrees of
 * freedom nu = a^2 / ws (Welch-Satterthwaite, JCGM 100:2008, G.4.1, eq. G.2b; ws from cellBudget). The mean of nu + 1
 * samples with an estimated standard deviation s then has a scaled and shifted t distribution with nu degrees of
 * freedom, whose standard deviation is sqrt(nu / (nu - 2)) s / sqrt(n) (JCGM 101:2008, 6.4.9.4, with n - 1 = nu):
 * that is the standard uncertainty reported, so that two of them cover about 95 % whatever nu (t with 3 degrees
 * of freedom: P(|t| <= 2 sqrt(3)) = 0.96; 10: P(|t| <= 2.24) = 0.95). Without it two scatter-based
 * uncertainties cover P(|t_nu| <= 2): 0.86 for nu = 3, 0.93 for nu = 10 (the held-back horizontal-plane cases,
 * about 7-12 samples per instrument and cell: 87-90 %). nu is floored at MIN_DOF. Returns 1 when a or ws is 0.
 */
export function typeAFactor(a: number, ws: number): number {
  if (!(a > 0) || !(ws > 0)) return 1;
  const nu = Math.max(MIN_DOF, (a * a) / ws);
  return nu / (nu - 2);
}
