/**
 * Beam geometry in the site frame (east, north, up, metres).
 *
 * Line-of-sight unit vector for azimuth theta (degrees clockwise from north) and elevation phi (degrees above the
 * horizontal): n = (cos phi sin theta, cos phi cos theta, sin phi). The radial velocity is v_r = n . U, positive away
 * from the instrument (CF standard name radial_velocity_of_scatterers_away_from_instrument).
 *
 * Calibration: the reported angles are in the instrument's own frame. Its orientation in the site frame is the
 * rotation R = R_heading . R_pitch . R_roll applied to instrument-frame vectors:
 * - roll r turns about the instrument north axis, raising its east axis (e -> cos r e + sin r u);
 * - pitch p turns about the instrument east axis, raising its north axis (n -> cos p n + sin p u);
 * - heading h turns about the vertical, clockwise seen from above (a level beam at reported azimuth a points at a + h).
 * Range offset: true range = reported range + rangeOffset_m.
 */
import type { Calibration, Vec3 } from '../campaign/types.ts';

export const DEG = Math.PI / 180;

export function unitVector(azimuth_deg: number, elevation_deg: number): Vec3 {
  const io = Float64Array.of(azimuth_deg, elevation_deg, 0, 0, 0);
  unitVectorInto(io);
  return [io[2], io[3], io[4]];
}

/**
 * Minimax coefficients of sin and cos on [-pi/4, pi/4] from fdlibm's kernels (k_sin.c, k_cos.c; Sun Microsystems,
 * 1993, freely distributable), the same polynomials behind most C libraries' sin and cos; RND = 1.5 * 2^52 (x + RND -
 * RND rounds x to the nearest integer, ties to even, for |x| < 2^51). A const enum: the build writes the values into
 * the code (module-level constants are loaded and checked at every use in optimised code: twice the time here).
 */
const enum P {
  S1 = -1.66666666666666324348e-1, S2 = 8.33333333332248946124e-3, S3 = -1.98412698298579493134e-4,
  S4 = 2.75573137070700676789e-6, S5 = -2.50507602534068634195e-8, S6 = 1.58969099521155010221e-10,
  C1 = 4.16666666666666019037e-2, C2 = -1.38888888888741095749e-3, C3 = 2.48015872894767294178e-5,
  C4 = -2.75573143513906633035e-7, C5 = 2.08757232129817482790e-9, C6 = -1.13596475577881948265e-11,
  RND = 6755399441055744, DEG = 0.017453292519943295, INV90 = 0.011111111111111112,
}
/** Per quadrant q (angle = q * 90 deg + r): sin = sin r * QS[q] + cos r * QC[q], cos = cos r * QS[q] - sin r * QC[q]. */
const QS = Float64Array.of(1, 0, -1, 0), QC = Float64Array.of(0, 1, 0, -1);
/** Angles beyond this (degrees) go through Math.sin and Math.cos (the reduction below is exact up to about 2^44). */
const REDUCE_MAX_DEG = 1e9;

/**
 * The line-of-sight unit vector of unitVector for per-sample loops: azimuth and elevation (degrees) read from io[0]
 * and io[1], the vector written to io[2..4]. Numbers in a typed array rather than arguments and a returned array: a
 * call the optimiser does not inline (the ingest's loop is too large for that) boxes every number passed to it on the
 * heap. Sines and
 * cosines of angles in degrees reduced exactly to [-45, 45] degrees (angle - 90 n is exact by Sterbenz's lemma), then
 * the fdlibm kernel polynomials: within 1e-15 of Math.sin and Math.cos (test/geometry-los.test.ts), exact at
 * multiples of 90 degrees (a vertical beam has no horizontal component), and about half the time of three
 * Math.sin / Math.cos calls, whose own reduction of radians beyond pi/4 is the slow part.
 */
export function unitVectorInto(io: Float64Array): void {
  const azimuth_deg = io[0], elevation_deg = io[1];
  if (!(Math.abs(azimuth_deg) < REDUCE_MAX_DEG && Math.abs(elevation_deg) < REDUCE_MAX_DEG)) {
    const a = azimuth_deg * DEG, e = elevation_deg * DEG, ce = Math.cos(e);
    io[2] = ce * Math.sin(a); io[3] = ce * Math.cos(a); io[4] = Math.sin(e);
    return;
  }
  let n = azimuth_deg * P.INV90 + P.RND - P.RND;
  let x = (azimuth_deg - n * 90) * P.DEG, z = x * x;
  let s = x + x * z * (P.S1 + z * (P.S2 + z * (P.S3 + z * (P.S4 + z * (P.S5 + z * P.S6)))));
  let c = 1 - (0.5 * z - z * z * (P.C1 + z * (P.C2 + z * (P.C3 + z * (P.C4 + z * (P.C5 + z * P.C6))))));
  let q = n & 3; // n is an integer: its low two bits survive the conversion to 32 bits
  const sa = s * QS[q] + c * QC[q], ca = c * QS[q] - s * QC[q];
  n = elevation_deg * P.INV90 + P.RND - P.RND;
  x = (elevation_deg - n * 90) * P.DEG; z = x * x;
  s = x + x * z * (P.S1 + z * (P.S2 + z * (P.S3 + z * (P.S4 + z * (P.S5 + z * P.S6)))));
  c = 1 - (0.5 * z - z * z * (P.C1 + z * (P.C2 + z * (P.C3 + z * (P.C4 + z * (P.C5 + z * P.C6))))));
  q = n & 3;
  const se = s * QS[q] + c * QC[q], ce = c * QS[q] - s * QC[q];
  io[2] = ce * sa; io[3] = ce * ca; io[4] = se;
}

/** Azimuth (degrees clockwise from north, in [0, 360)) and elevation (degrees) of a direction vector. */
export function anglesOf(n: Vec3): { azimuth_deg: number; elevation_deg: number } {
  const h = Math.hypot(n[0], n[1]);
  let az = Math.atan2(n[0], n[1]) / DEG;
  if (az < 0) az += 360;
  if (az >= 360) az -= 360;
  return { azimuth_deg: az, elevation_deg: Math.atan2(n[2], h) / DEG };
}

/** Row-major 3x3 rotation taking instrument-frame vectors to the site frame (see the file header). */
export function calibrationMatrix(cal: Pick<Calibration, 'heading_deg' | 'pitch_deg' | 'roll_deg'>): Float64Array {
  const h = cal.heading_deg * DEG, p = cal.pitch_deg * DEG, r = cal.roll_deg * DEG;
  const ch = Math.cos(h), sh = Math.sin(h), cp = Math.cos(p), sp = Math.sin(p), cr = Math.cos(r), sr = Math.sin(r);
  // Columns are the images of the instrument axes e, n, u.
  const Rh = [ch, sh, 0, -sh, ch, 0, 0, 0, 1];
  const Rp = [1, 0, 0, 0, cp, -sp, 0, sp, cp];
  const Rr = [cr, 0, -sr, 0, 1, 0, sr, 0, cr];
  return mat3Mul(mat3Mul(Rh, Rp), Rr);
}

export function mat3Mul(a: ArrayLike<number>, b: ArrayLike<number>): Float64Array {
  const out = new Float64Array(9);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) out[i * 3 + j] = a[i * 3] * b[j] + a[i * 3 + 1] * b[3 + j] + a[i * 3 + 2] * b[6 + j];
  return out;
}

export function mat3Vec(m: ArrayLike<number>, v: ArrayLike<number>): Vec3 {
  return [
    m[0] * v[0] + m[1] * v[1] + m[2] * v[2],
    m[3] * v[0] + m[4] * v[1] + m[5] * v[2],
    m[6] * v[0] + m[7] * v[1] + m[8] * v[2],
  ];
}

/** Transpose (the inverse of a rotation). */
export function mat3T(m: ArrayLike<number>): Float64Array {
  return Float64Array.from([m[0], m[3], m[6], m[1], m[4], m[7], m[2], m[5], m[8]]);
}

/** Site-frame unit vector of a beam reported at (azimuth, elevation) by an instrument with calibration matrix R. */
export function calibratedUnitVector(R: ArrayLike<number>, azimuth_deg: number, elevation_deg: number): Vec3 {
  return mat3Vec(R, unitVector(azimuth_deg, elevation_deg));
}

/** Measurement point = origin + range * n (straight beam; see curvature.ts for long ranges). */
export function beamPoint(origin: Vec3, n: Vec3, range_m: number): Vec3 {
  return [origin[0] + range_m * n[0], origin[1] + range_m * n[1], origin[2] + range_m * n[2]];
}

/**
 * Steering: the reported (instrument-frame) azimuth, elevation and range that put the beam of an instrument at
 * `origin` with calibration `cal` on `target`. Inverse of calibratedUnitVector + beamPoint.
 */
export function steerTo(origin: Vec3, cal: Calibration, target: Vec3): { azimuth_deg: number; elevation_deg: number; range_m: number } {
  const d: Vec3 = [target[0] - origin[0], target[1] - origin[1], target[2] - origin[2]];
  const dist = Math.hypot(d[0], d[1], d[2]);
  const nSite: Vec3 = [d[0] / dist, d[1] / dist, d[2] / dist];
  const nInstr = mat3Vec(mat3T(calibrationMatrix(cal)), nSite);
  return { ...anglesOf(nInstr), range_m: dist - cal.rangeOffset_m };
}
