/**
 * The turbines of a site seen from one frame: where each tower base and hub lies in the rotor-frame axes of a
 * window (x downstream, y to the left looking downstream, z up; geometry/frames.ts) about a frame origin (a
 * turbine's tower base or the site origin), and which turbines stand in each other's wakes.
 *
 * Wake reach (common practice, a generous top-hat envelope): turbine j's wake at a distance dx > 0 downstream has
 * the half-width r(dx) = R_j + k_w dx with k_w = 0.1 (wider than Jensen's 0.075 so that a meandering or deflected
 * wake is not missed), up to maxLength_D rotor diameters. Turbine k is waked by j when k lies downstream of j by more
 * than half a diameter and its rotor overlaps that envelope: |y_k - y_j| < r(x_k - x_j) + R_k.
 */
import type { Turbine, Vec3 } from '../campaign/types.ts';
import { DEG } from './beam.ts';

/** Wake-envelope spread per metre downstream (common practice; see the file docblock). */
export const WAKE_SPREAD = 0.1;
/** Wakes are followed to this many rotor diameters downstream. */
export const WAKE_LENGTH_D = 25;

export interface TurbineInFrame {
  index: number;
  id: string;
  /** Tower base in the frame: downstream x, lateral y, metres; its height relative to the frame's height base. */
  x: number;
  y: number;
  zBase: number;
  /** Hub height in the frame's height coordinate, metres. */
  zHub: number;
  diameter: number;
}

/** Downstream and left unit vectors (east, north) of wind from `direction_deg`. */
export function frameAxes(direction_deg: number): { dE: number; dN: number } {
  const D = direction_deg * DEG;
  return { dE: -Math.sin(D), dN: -Math.cos(D) };
}

/**
 * Every turbine in the frame of wind direction `direction_deg` about `origin`. `heights` as a plane's: 'base'
 * (from the origin's up coordinate), 'terrain' (above the ground: a tower base is at 0), 'site' (site-frame up).
 */
export function turbinesInFrame(turbines: readonly Turbine[], direction_deg: number, origin: Vec3, heights: 'base' | 'terrain' | 'site' = 'base'): TurbineInFrame[] {
  const { dE, dN } = frameAxes(direction_deg);
  return turbines.map((t) => {
    const e = t.position[0] - origin[0], n = t.position[1] - origin[1];
    const zBase = heights === 'terrain' ? 0 : heights === 'site' ? t.position[2] : t.position[2] - origin[2];
    return { index: t.index, id: t.id, x: e * dE + n * dN, y: -e * dN + n * dE, zBase, zHub: zBase + t.hubHeight_m, diameter: t.rotorDiameter_m };
  });
}

/** Half-width of turbine j's wake envelope at dx metres downstream (NaN upstream of it or beyond the wake length). */
export function wakeHalfWidth(j: Pick<TurbineInFrame, 'diameter'>, dx: number): number {
  if (!(dx > 0) || dx > WAKE_LENGTH_D * j.diameter) return NaN;
  return j.diameter / 2 + WAKE_SPREAD * dx;
}

/** True when turbine k stands in turbine j's wake (see the file docblock). */
export function isWakedBy(k: TurbineInFrame, j: TurbineInFrame): boolean {
  if (k.index === j.index) return false;
  const dx = k.x - j.x;
  if (!(dx > j.diameter / 2)) return false;
  const r = wakeHalfWidth(j, dx);
  return Math.abs(k.y - j.y) < r + k.diameter / 2;
}

/** For each turbine, the turbines whose wakes reach its rotor, nearest upstream first. */
export function wakingTurbines(list: readonly TurbineInFrame[]): number[][] {
  return list.map((k) => list.filter((j) => isWakedBy(k, j)).sort((a, b) => b.x - a.x).map((j) => j.index));
}

/**
 * The first point where the straight segment a -> b passes through the rotor disk of a turbine (hub at `hub`,
 * radius R, rotor axis along the horizontal wind direction given by the downstream unit vector (dE, dN)), as the
 * fraction along the segment, or NaN when it misses. The disk is the circle of radius R about the hub in the plane
 * normal to the wind (the rotor facing the wind; yaw offsets of a few tens of degrees turn it, which this ignores).
 */
export function segmentThroughDisk(a: ArrayLike<number>, b: ArrayLike<number>, hub: ArrayLike<number>, R: number, dE: number, dN: number): number {
  // Distance of a point from the rotor plane along the axis: s = (p - hub) . d.
  const sa = (a[0] - hub[0]) * dE + (a[1] - hub[1]) * dN;
  const sb = (b[0] - hub[0]) * dE + (b[1] - hub[1]) * dN;
  if (sa === sb || sa * sb > 0) return NaN;
  const f = sa / (sa - sb);
  const pe = a[0] + f * (b[0] - a[0]) - hub[0], pn = a[1] + f * (b[1] - a[1]) - hub[1], pu = a[2] + f * (b[2] - a[2]) - hub[2];
  return pe * pe + pn * pn + pu * pu <= R * R ? f : NaN;
}
