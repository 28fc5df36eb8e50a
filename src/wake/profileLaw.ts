/**
 * Vertical wind-speed laws and their least-squares fits to (height, speed) points.
 *
 * Power law: V(z) = V_ref (z / z_ref)^alpha (IEC 61400-1 ed. 3, normal wind profile [from memory]); fitted
 * linearly as ln V = ln V_ref + alpha ln(z / z_ref), weighted by the count behind each point.
 * Log law: V(z) = (u_star / kappa) ln(z / z0), kappa = 0.40 (neutral surface layer; Stull 1988, An Introduction to
 * Boundary Layer Meteorology, section 9.7 [from memory]); fitted linearly as V = b ln z + a with b = u_star / kappa,
 * z0 = exp(-a / b).
 * Heights in metres above ground, speeds in m/s. Fit quality (RMSE, R^2) is in m/s on the points themselves.
 */
import { KAPPA } from './options.ts';

export interface LawParams {
  law: 'power' | 'log';
  zRef_m: number;
  uRef_ms: number;
  alpha: number;
  uStar_ms: number;
  z0_m: number;
}

export interface LawFit extends LawParams {
  rmse_ms: number;
  r2: number;
  ok: boolean;
  note: string;
}

/** Speed of the law at height z (NaN at or below z0 for the log law, or z <= 0). */
export function evalLaw(p: LawParams, z: number): number {
  if (!(z > 0)) return NaN;
  if (p.law === 'power') return p.uRef_ms * Math.pow(z / p.zRef_m, p.alpha);
  return z > p.z0_m ? (p.uStar_ms / KAPPA) * Math.log(z / p.z0_m) : NaN;
}

function weightedLine(x: number[], y: number[], w: number[]): { a: number; b: number } | null {
  let sw = 0, sx = 0, sy = 0;
  for (let i = 0; i < x.length; i++) { sw += w[i]; sx += w[i] * x[i]; sy += w[i] * y[i]; }
  const mx = sx / sw, my = sy / sw;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < x.length; i++) { sxx += w[i] * (x[i] - mx) ** 2; sxy += w[i] * (x[i] - mx) * (y[i] - my); }
  if (!(sxx > 0)) return null;
  const b = sxy / sxx;
  return { a: my - b * mx, b };
}

function quality(p: LawParams, z: number[], u: number[]): { rmse_ms: number; r2: number } {
  let ss = 0, mu = 0;
  for (const v of u) mu += v / u.length;
  let st = 0;
  for (let i = 0; i < z.length; i++) { ss += (u[i] - evalLaw(p, z[i])) ** 2; st += (u[i] - mu) ** 2; }
  return { rmse_ms: Math.sqrt(ss / z.length), r2: st > 0 ? 1 - ss / st : NaN };
}

/**
 * Fits a law to points (z_i, u_i) with weights w_i (counts). Needs two distinct heights; with a single height the
 * power law falls back to alpha = 0.2 (IEC 61400-1 normal wind profile [from memory]) and says so in `note`; the
 * log law cannot be formed from one height (ok = false).
 */
export function fitLaw(law: 'power' | 'log', z: number[], u: number[], w: number[], zRef: number): LawFit {
  const keep = z.map((_, i) => i).filter((i) => z[i] > 0 && u[i] > 0 && Number.isFinite(u[i]) && w[i] > 0);
  const zz = keep.map((i) => z[i]), uu = keep.map((i) => u[i]), ww = keep.map((i) => w[i]);
  const bad: LawFit = { law, zRef_m: zRef, uRef_ms: NaN, alpha: NaN, uStar_ms: NaN, z0_m: NaN, rmse_ms: NaN, r2: NaN, ok: false, note: '' };
  const distinct = new Set(zz).size;
  if (distinct === 0) return { ...bad, note: 'no positive speeds at positive heights' };
  if (distinct === 1) {
    if (law === 'log') return { ...bad, note: 'a log law needs at least two heights' };
    let su = 0, sw = 0;
    for (let i = 0; i < zz.length; i++) { su += ww[i] * uu[i]; sw += ww[i]; }
    const p: LawParams = { law, zRef_m: zRef, alpha: 0.2, uRef_ms: (su / sw) / Math.pow(zz[0] / zRef, 0.2), uStar_ms: NaN, z0_m: NaN };
    return { ...p, rmse_ms: NaN, r2: NaN, ok: true, note: 'single height: alpha = 0.2 assumed (IEC 61400-1 normal wind profile)' };
  }
  if (law === 'power') {
    const line = weightedLine(zz.map((v) => Math.log(v / zRef)), uu.map(Math.log), ww);
    if (!line) return { ...bad, note: 'degenerate heights' };
    const p: LawParams = { law, zRef_m: zRef, uRef_ms: Math.exp(line.a), alpha: line.b, uStar_ms: NaN, z0_m: NaN };
    return { ...p, ...quality(p, zz, uu), ok: true, note: '' };
  }
  const line = weightedLine(zz.map(Math.log), uu, ww);
  if (!line || !(line.b > 0)) return { ...bad, note: 'speed does not increase with height: no log law' };
  const p: LawParams = { law, zRef_m: zRef, uRef_ms: NaN, alpha: NaN, uStar_ms: line.b * KAPPA, z0_m: Math.exp(-line.a / line.b) };
  return { ...p, ...quality(p, zz, uu), ok: true, note: '' };
}
