/**
 * Geometry of a multi-beam wind retrieval: error amplification, conditioning and crossing angles.
 *
 * With K beams whose unit vectors are the rows of A (K x 3), the radial velocities are v_r = A U + e. For unit
 * radial-velocity noise the retrieved components have covariance (A^T A)^-1, so the error amplification of component
 * k is DOP_k = sqrt([(A^T A)^-1]_kk) (the same algebra as satellite-positioning dilution of precision; Milbert 2008).
 * The condition number is the ratio of A's largest to smallest singular value, sqrt(lambda_max / lambda_min) of
 * A^T A. The crossing angle of two beams is the angle between their lines (0 to 90 degrees: a beam and its reverse
 * measure the same component).
 *
 * These kernels work on flat Float64Arrays and allocate only their small result.
 */

export interface Amplification3 {
  /** Error amplification of the three components (NaN when singular). */
  dop: [number, number, number];
  /** Condition number of A (Infinity when singular). */
  cond: number;
  /** Smallest crossing angle between any two beams, degrees. */
  minCrossing_deg: number;
  /** (A^T W A)^-1, row-major 3x3 (NaN when singular). */
  inv: Float64Array;
}

/** Normal matrix N = A^T W A (row-major 3x3) from K rows of A in `rows` (K*3) and optional weights. */
export function normalMatrix(rows: ArrayLike<number>, k: number, weights?: ArrayLike<number>): Float64Array {
  const N = new Float64Array(9);
  for (let i = 0; i < k; i++) {
    const w = weights ? weights[i] : 1;
    const a = rows[i * 3], b = rows[i * 3 + 1], c = rows[i * 3 + 2];
    N[0] += w * a * a; N[1] += w * a * b; N[2] += w * a * c;
    N[4] += w * b * b; N[5] += w * b * c; N[8] += w * c * c;
  }
  N[3] = N[1]; N[6] = N[2]; N[7] = N[5];
  return N;
}

/** Inverse of a symmetric 3x3 matrix by cofactors; NaN-filled when it is singular to working precision. */
export function invertSym3(N: ArrayLike<number>): Float64Array {
  const a = N[0], b = N[1], c = N[2], d = N[4], e = N[5], f = N[8]; // read directly (no array per call)
  const A = d * f - e * e, B = c * e - b * f, C = b * e - c * d;
  const det = a * A + b * B + c * C;
  const scale = Math.max(Math.abs(a), Math.abs(d), Math.abs(f));
  const out = new Float64Array(9);
  if (!(Math.abs(det) > 1e-14 * scale * scale * scale)) return out.fill(NaN);
  const D = a * f - c * c, E = b * c - a * e, F = a * d - b * b;
  out[0] = A / det; out[1] = B / det; out[2] = C / det;
  out[3] = B / det; out[4] = D / det; out[5] = E / det;
  out[6] = C / det; out[7] = E / det; out[8] = F / det;
  return out;
}

/** Eigenvalues of a symmetric 3x3 matrix, ascending (trigonometric closed form; Smith 1961). */
export function eigSym3(N: ArrayLike<number>): [number, number, number] {
  const a = N[0], b = N[1], c = N[2], d = N[4], e = N[5], f = N[8];
  const p1 = b * b + c * c + e * e;
  if (p1 === 0) return [a, d, f].sort((x, y) => x - y) as [number, number, number];
  const q = (a + d + f) / 3;
  const p2 = (a - q) ** 2 + (d - q) ** 2 + (f - q) ** 2 + 2 * p1;
  const p = Math.sqrt(p2 / 6);
  const B = [(a - q) / p, b / p, c / p, (d - q) / p, e / p, (f - q) / p];
  const detB = B[0] * (B[3] * B[5] - B[4] * B[4]) - B[1] * (B[1] * B[5] - B[4] * B[2]) + B[2] * (B[1] * B[4] - B[3] * B[2]);
  const r = Math.min(1, Math.max(-1, detB / 2));
  const phi = Math.acos(r) / 3;
  const l1 = q + 2 * p * Math.cos(phi);
  const l3 = q + 2 * p * Math.cos(phi + (2 * Math.PI) / 3);
  const l2 = 3 * q - l1 - l3;
  return [l3, l2, l1];
}

/**
 * Angle between the lines of beams i and j (rows of A), degrees in [0, 90]: in 3-D, or with `uv` between their
 * projections on the plane of the first two columns (u, v); 0 for a projection of zero length.
 */
function lineAngle(rows: ArrayLike<number>, i: number, j: number, uv = false): number {
  const a = i * 3, b = j * 3;
  const za = uv ? 0 : rows[a + 2], zb = uv ? 0 : rows[b + 2];
  const dot = Math.abs(rows[a] * rows[b] + rows[a + 1] * rows[b + 1] + za * zb);
  const n = Math.hypot(rows[a], rows[a + 1], za) * Math.hypot(rows[b], rows[b + 1], zb);
  return n > 0 ? (Math.acos(Math.min(1, dot / n)) * 180) / Math.PI : 0;
}

/** Smallest angle between the lines of any two of the K unit vectors, degrees (NaN for fewer than two). */
export function minCrossingAngle(rows: ArrayLike<number>, k: number): number {
  let best = Infinity;
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) best = Math.min(best, lineAngle(rows, i, j));
  return k < 2 ? NaN : best;
}

/**
 * Best crossing of three beams among K: the largest, over every choice of three beams, of the smallest angle between
 * the lines of two of them, degrees (the smallest crossing angle itself for K = 3; NaN for fewer than three). A beam
 * added nearly parallel to another lowers minCrossingAngle but not this: least-squares amplification can only fall
 * when a beam is added, so a crossing criterion on redundant beams must not fail a cell that three of its beams
 * resolve at well-spread angles.
 */
export function bestTripleCrossingAngle(rows: ArrayLike<number>, k: number): number {
  if (k < 3) return NaN;
  const ang = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) ang[i * k + j] = lineAngle(rows, i, j);
  let best = -Infinity;
  for (let i = 0; i < k; i++)
    for (let j = i + 1; j < k; j++)
      for (let l = j + 1; l < k; l++) best = Math.max(best, Math.min(ang[i * k + j], ang[i * k + l], ang[j * k + l]));
  return best;
}

/**
 * Smallest crossing angle of K beams as a two-component (w = 0) system sees them: the angle between their
 * projections on the plane of the first two columns (u, v), degrees in [0, 90]; NaN for fewer than two beams. The
 * 3-D angle (minCrossingAngle) also counts an elevation difference, which resolves only w: a beam looking down and
 * one looking up cross at up to 10 degrees more in 3-D than in u, v.
 */
export function minCrossingAngleUV(rows: ArrayLike<number>, k: number): number {
  let best = Infinity;
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) best = Math.min(best, lineAngle(rows, i, j, true));
  return k < 2 ? NaN : best;
}

/**
 * Best crossing of two beams among K as a two-component (w = 0) system sees them: the largest angle between the
 * u, v projections of any two beams, degrees in [0, 90] (NaN for fewer than two). The pair analogue of
 * bestTripleCrossingAngle: a redundant beam beside another never makes the crossing worse.
 */
export function bestPairCrossingAngleUV(rows: ArrayLike<number>, k: number): number {
  let best = -Infinity;
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) best = Math.max(best, lineAngle(rows, i, j, true));
  return k < 2 ? NaN : best;
}

/** Amplification, conditioning and crossing angle of K >= 1 beams (rows of A in `rows`). */
export function amplification3(rows: ArrayLike<number>, k: number): Amplification3 {
  const N = normalMatrix(rows, k);
  const inv = invertSym3(N);
  const ev = eigSym3(N);
  const cond = ev[0] > 0 ? Math.sqrt(ev[2] / ev[0]) : Infinity;
  return {
    dop: [Math.sqrt(inv[0]), Math.sqrt(inv[4]), Math.sqrt(inv[8])],
    cond: Number.isFinite(inv[0]) ? cond : Infinity,
    minCrossing_deg: minCrossingAngle(rows, k),
    inv,
  };
}

/**
 * Two-component geometry (first two columns of A only, for a retrieval that assumes the third component known):
 * amplification of the two components and the condition number of the K x 2 matrix.
 */
export function amplification2(rows: ArrayLike<number>, k: number): { dop: [number, number]; cond: number; inv: Float64Array } {
  let a = 0, b = 0, d = 0;
  for (let i = 0; i < k; i++) {
    const x = rows[i * 3], y = rows[i * 3 + 1];
    a += x * x; b += x * y; d += y * y;
  }
  const det = a * d - b * b;
  const inv = new Float64Array(4);
  if (!(det > 1e-14 * Math.max(a, d) ** 2)) {
    inv.fill(NaN);
    return { dop: [NaN, NaN], cond: Infinity, inv };
  }
  inv[0] = d / det; inv[1] = -b / det; inv[2] = -b / det; inv[3] = a / det;
  const tr = a + d, disc = Math.sqrt(Math.max(0, (tr * tr) / 4 - det));
  const lmax = tr / 2 + disc, lmin = tr / 2 - disc;
  return { dop: [Math.sqrt(inv[0]), Math.sqrt(inv[3])], cond: lmin > 0 ? Math.sqrt(lmax / lmin) : Infinity, inv };
}
