/**
 * The simulator's true flow over a site with several turbines and terrain, for one state (wind direction, speed,
 * yaw offsets): a power-law sheared inflow by height above the local ground, and each turbine's wake (flow.ts: a
 * Gaussian deficit growing with distance, deflected by its yaw offset, with swirl) combined by multiplying the
 * velocity ratios, u = U(z) prod_k (1 - d_k) (the product rule of Lissaman 1979 [from memory]; common practice), so
 * that a turbine standing in another's wake makes its own deficit relative to the waked flow it meets.
 *
 * Each turbine's effective inflow speed is the free stream at its hub reduced by the upstream wakes, averaged over
 * five points of its rotor (hub and half a radius up, down, left, right); its thrust coefficient follows from that
 * speed, and its power is P = min(rated, 1/2 rho A Cp U_eff^3 cos^3 gamma) (the cosine-cubed loss under yaw is
 * common practice; field studies report exponents between about 1.4 and 3).
 *
 * Close behind a rotor the Gaussian wake's amplitude (flow.ts) exceeds what momentum theory allows (it reaches 1
 * where its formula has no real value); here it is capped at the actuator disc's far-wake deficit 1 - sqrt(1 - Ct)
 * (one-dimensional momentum theory; common practice), so that turbines a few diameters apart see plausible wakes.
 */
import type { Turbine } from '../campaign/types.ts';
import { thrustCoefficientAt } from '../campaign/thrust.ts';
import { dirFromRotor, rotorFrame, toRotor, type RotorFrame } from '../geometry/frames.ts';
import { wakeAt, type WakeAtX, type WakeTruthParams } from './flow.ts';

export interface SiteState {
  direction_deg: number;
  /** Free-stream speed at hub height above the ground, m/s (of the first turbine's hub height). */
  hubSpeed_ms: number;
  /** Reference height of hubSpeed_ms, metres above ground. */
  refHeight_m: number;
  shearExponent: number;
  /** Yaw offset per turbine (campaign order), degrees. */
  yaw_deg: number[];
}

export interface SiteTurbineTruth {
  turbine: Turbine;
  frame: RotorFrame;
  params: WakeTruthParams;
  /** Rotor-averaged inflow speed the turbine meets, m/s. */
  effectiveSpeed_ms: number;
  /** Electrical power, kW. */
  power_kw: number;
}

export interface PowerModel {
  /** Power coefficient below rated. */
  cp: number;
  ratedPower_kw: number;
  /** Air density, kg/m^3. */
  rho: number;
}

/** Ground height under (e, n): the turbine's base for flat ground. */
export type GroundFn = (e: number, n: number) => number;

/** Height of the point above the ground under it, metres (at least 0.5 m). */
function agl(p: ArrayLike<number>, ground: GroundFn): number {
  return Math.max(p[2] - ground(p[0], p[1]), 0.5);
}

/**
 * Wake truth for every turbine in one state, upstream turbines first (so each sees the wakes that reach it).
 * `common` supplies the wake shape settings shared by all turbines (kStar, aspect, lateral offset, swirl).
 */
export function siteTruth(
  turbines: readonly Turbine[], s: SiteState, ground: GroundFn, common: Pick<WakeTruthParams, 'kStar' | 'aspect' | 'lateralOffset' | 'swirl'>, power: PowerModel,
): SiteTurbineTruth[] {
  const frames = turbines.map((t) => rotorFrame(s.direction_deg, [t.position[0], t.position[1], t.position[2]]));
  // Order by downstream position along the wind.
  const along = turbines.map((t, k) => t.position[0] * frames[k].dE + t.position[1] * frames[k].dN);
  const order = turbines.map((_, k) => k).sort((a, b) => along[a] - along[b]);
  const done: SiteTurbineTruth[] = [];
  const out: SiteTurbineTruth[] = new Array(turbines.length);
  for (const k of order) {
    const t = turbines[k], f = frames[k], R = t.rotorDiameter_m / 2, H = t.hubHeight_m;
    let sum = 0;
    for (const [dy, dz] of [[0, 0], [R / 2, 0], [-R / 2, 0], [0, R / 2], [0, -R / 2]]) {
      const p = [f.origin[0] - dy * f.dN, f.origin[1] + dy * f.dE, f.origin[2] + H + dz];
      const z = agl(p, ground);
      let u = s.hubSpeed_ms * Math.pow(z / s.refHeight_m, s.shearExponent);
      for (const w of done) u *= 1 - wakeDeficit(w, p, ground);
      sum += u;
    }
    const U = sum / 5;
    const ct = thrustCoefficientAt(t.thrustCoefficient, U).ct;
    const gamma = s.yaw_deg[k] ?? 0;
    const params: WakeTruthParams = { hubSpeed: U, hubHeight: H, diameter: t.rotorDiameter_m, shearExponent: s.shearExponent, ct, yaw_deg: gamma, ...common };
    const A = Math.PI * R * R;
    const p = Math.min(power.ratedPower_kw, (0.5 * power.rho * A * power.cp * U ** 3 * Math.cos((gamma * Math.PI) / 180) ** 3) / 1000);
    const truth = { turbine: t, frame: f, params, effectiveSpeed_ms: U, power_kw: p };
    done.push(truth);
    out[k] = truth;
  }
  return out;
}

/** Fractional deficit of one turbine's wake at a site point (0 upstream of half a diameter behind the rotor). */
export function wakeDeficit(w: SiteTurbineTruth, p: ArrayLike<number>, ground: GroundFn, wake?: WakeAtX): number {
  const q = toRotor(w.frame, p);
  if (q[0] < 0.5 * w.params.diameter) return 0;
  const wk = wake ?? wakeAt(q[0], w.params);
  const cap = 1 - Math.sqrt(Math.max(0, 1 - w.params.ct * Math.cos((w.params.yaw_deg * Math.PI) / 180) ** 2));
  // Terrain-following wake: its centre stays at hub height above the local ground.
  const z = agl(p, ground) + (w.frame.origin[2] - ground(w.frame.origin[0], w.frame.origin[1]));
  const dy = q[1] - wk.yc, dz = z - wk.zc;
  return Math.min(wk.amplitude, cap) * Math.exp(-(dy * dy) / (2 * wk.sigmaY * wk.sigmaY) - (dz * dz) / (2 * wk.sigmaZ * wk.sigmaZ));
}

/**
 * The true wind at a site point (east, north, up), written into out as site-frame (east, north, up) m/s: the
 * sheared free stream times every wake's velocity ratio, plus each wake's swirl.
 */
export function siteVelocity(state: SiteState, truths: readonly SiteTurbineTruth[], p: ArrayLike<number>, ground: GroundFn, out: Float64Array): void {
  const z = agl(p, ground);
  let u = state.hubSpeed_ms * Math.pow(z / state.refHeight_m, state.shearExponent);
  let v = 0, w = 0;
  for (const t of truths) {
    const q = toRotor(t.frame, p);
    if (q[0] < 0.5 * t.params.diameter) continue;
    const wk = wakeAt(q[0], t.params);
    u *= 1 - wakeDeficit(t, p, ground, wk);
    // Swirl about the wake centre (flow.ts), in the turbine's frame.
    const zz = z + (t.frame.origin[2] - ground(t.frame.origin[0], t.frame.origin[1]));
    const dy = q[1] - wk.yc, dz = zz - wk.zc;
    const r = Math.hypot(dy, dz);
    const sg = Math.sqrt(wk.sigmaY * wk.sigmaZ);
    const vt = r > 0 ? t.params.swirl * Math.min(1, (3 * t.params.diameter) / q[0]) * (r / sg) * Math.exp(0.5 - (r * r) / (2 * sg * sg)) : 0;
    if (r > 0) {
      v += (vt * dz) / r;
      w += (-vt * dy) / r;
    }
  }
  // All frames share the wind axes: express (u, v, w) of the rotor axes in the site frame.
  const site = truths.length ? dirFromRotor(truths[0].frame, [u, v, w]) : [0, 0, 0];
  out[0] = site[0]; out[1] = site[1]; out[2] = site[2];
}
