/**
 * Site frame (east, north, up) to rotor frame (x downstream, y to the left looking downstream, z up).
 *
 * Wind from direction D (degrees clockwise from north) blows toward D + 180, so the downstream unit vector is
 * d = (-sin D, -cos D, 0) and the left unit vector is l = (cos D, -sin D, 0) (d turned 90 degrees anticlockwise seen
 * from above). The rotor-frame origin is the tower base: x = (p - base) . d, y = (p - base) . l, z = p_up - base_up.
 * Velocities: u = U . d (streamwise), v = U . l (lateral, positive to the left), w = U_up.
 * Wind from D at speed S in the site frame: (u_east, v_north) = (-S sin D, -S cos D) (common practice).
 */
import type { Vec3 } from '../campaign/types.ts';
import { DEG } from './beam.ts';

export interface RotorFrame {
  /** Wind direction (from), degrees. */
  direction_deg: number;
  origin: Vec3;
  /** Downstream unit vector (east, north). */
  dE: number;
  dN: number;
}

export function rotorFrame(direction_deg: number, origin: Vec3): RotorFrame {
  const D = direction_deg * DEG;
  return { direction_deg, origin, dE: -Math.sin(D), dN: -Math.cos(D) };
}

/** Site point to rotor-frame coordinates. Left vector l = (-dN, dE). */
export function toRotor(f: RotorFrame, p: ArrayLike<number>): Vec3 {
  const e = p[0] - f.origin[0], n = p[1] - f.origin[1];
  return [e * f.dE + n * f.dN, -e * f.dN + n * f.dE, p[2] - f.origin[2]];
}

/** Site-frame direction (or velocity) to rotor-frame components (no translation). */
export function dirToRotor(f: RotorFrame, v: ArrayLike<number>): Vec3 {
  return [v[0] * f.dE + v[1] * f.dN, -v[0] * f.dN + v[1] * f.dE, v[2]];
}

/** Rotor-frame point back to the site frame. */
export function fromRotor(f: RotorFrame, q: ArrayLike<number>): Vec3 {
  return [f.origin[0] + q[0] * f.dE - q[1] * f.dN, f.origin[1] + q[0] * f.dN + q[1] * f.dE, f.origin[2] + q[2]];
}

/** Rotor-frame direction (or velocity) back to site-frame components. */
export function dirFromRotor(f: RotorFrame, q: ArrayLike<number>): Vec3 {
  return [q[0] * f.dE - q[1] * f.dN, q[0] * f.dN + q[1] * f.dE, q[2]];
}

/** Site-frame wind (east, north) components from speed and direction (from). */
export function windComponents(speed: number, direction_deg: number): [number, number] {
  const D = direction_deg * DEG;
  return [-speed * Math.sin(D), -speed * Math.cos(D)];
}
