/**
 * Plausibility of the campaign's geometry, beyond what the schema can say about one value at a time.
 *
 * Errors (the campaign cannot describe a real set-up; loading stops):
 * - hub height or rotor diameter above MAX_TURBINE_M (a unit slip: millimetres or feet for metres);
 * - hub height below half the rotor diameter (the blades would pass below the tower base);
 * - a cell larger than its plane along an axis (the grid would hold one cell centred outside the plane);
 * - a plane entirely below the ground (cross plane z.max <= 0, horizontal plane z_m <= 0; heights above ground).
 * Warnings (possible, but most likely a slip; the run goes on and says so):
 * - an instrument within the rotor's reach (closer to the hub than the rotor radius, in any yaw);
 * - an instrument more than 1 m below the ground;
 * - a plane beyond every instrument's reach in every wind direction (plan.maxRange_m, per instrument kind);
 * - a plane extent that is not a whole number of cells (the grid covers n whole cells from the minimum).
 */
import { planSchema } from '../plan/schema.ts';
import type { KeyPath } from './problems.ts';
import type { Campaign, PlaneSpec } from './types.ts';

/** Largest plausible hub height and rotor diameter, metres (the largest turbines built stay well below; from memory). */
export const MAX_TURBINE_M = 500;

export interface Implausible {
  path: KeyPath;
  rule: string;
  received?: unknown;
}

const axisNames = (p: PlaneSpec): [string, string] => (p.orientation === 'cross' ? ['y', 'z'] : ['y', 'xRange']);

export function plausibilityErrors(c: Campaign): Implausible[] {
  const out: Implausible[] = [];
  const t = c.turbine;
  if (t.hubHeight_m > MAX_TURBINE_M) out.push({ path: ['turbine', 'hubHeight_m'], rule: `hub height above ${MAX_TURBINE_M} m is not plausible (metres expected)`, received: t.hubHeight_m });
  if (t.rotorDiameter_m > MAX_TURBINE_M) out.push({ path: ['turbine', 'rotorDiameter_m'], rule: `rotor diameter above ${MAX_TURBINE_M} m is not plausible (metres expected)`, received: t.rotorDiameter_m });
  if (t.hubHeight_m < t.rotorDiameter_m / 2) {
    out.push({ path: ['turbine', 'hubHeight_m'], rule: `below half the rotor diameter (${t.rotorDiameter_m / 2} m): the blades would pass below the tower base`, received: t.hubHeight_m });
  }
  for (const p of c.planes) {
    const [a, b] = axisNames(p);
    const ext = [p.y.max - p.y.min, p.second.max - p.second.min];
    [0, 1].forEach((k) => {
      if (p.cell_m[k] > ext[k] + 1e-9) {
        out.push({ path: ['planes', p.index, 'cell_m'], rule: `the cell (${p.cell_m[k]} m along ${k === 0 ? a : b}) is larger than the plane's extent along it (${ext[k]} m)`, received: p.cell_m });
      }
    });
    if (p.orientation === 'cross' && p.second.max <= 0) out.push({ path: ['planes', p.index, 'z'], rule: 'the plane lies entirely below the ground (z is height above the tower base)', received: p.second });
    if (p.orientation === 'horizontal' && p.z_m <= 0) out.push({ path: ['planes', p.index, 'z_m'], rule: 'the plane lies at or below the ground (z_m is height above the tower base)', received: p.z_m });
  }
  return out;
}

/** One-line warnings (key path first) for set-ups that are possible but most likely a slip. */
export function plausibilityWarnings(c: Campaign): string[] {
  const out: string[] = [];
  const t = c.turbine;
  const hub = [t.position[0], t.position[1], t.position[2] + t.hubHeight_m];
  const R = t.rotorDiameter_m / 2;
  for (const ins of c.instruments) {
    const [e, n, u] = ins.position;
    const d = Math.hypot(e - hub[0], n - hub[1], u - hub[2]);
    if (d < R) {
      out.push(`instruments[${ins.index}] (${ins.id}): stands ${d.toFixed(1)} m from the hub, within the rotor radius (${R} m): the rotor would sweep through it; check position_m (east, north, up, metres) and turbine.position_m`);
    }
    if (u < c.site.groundLevel_m - 1) {
      out.push(`instruments[${ins.index}] (${ins.id}): stands ${(c.site.groundLevel_m - u).toFixed(1)} m below the ground (site.groundLevel_m ${c.site.groundLevel_m} m); check the up coordinate`);
    }
  }
  const plan = planSchema.safeParse(c.plan ?? {});
  if (plan.success) {
    const reachOf = (kind: 'pulsed' | 'cw') => plan.data.maxRange_m[kind];
    for (const p of c.planes) {
      let best = Infinity;
      for (const ins of c.instruments) best = Math.min(best, nearestPossibleDistance(c, p, ins.position) - reachOf(ins.kind));
      if (best > 0 && c.instruments.length > 0) {
        out.push(`planes[${p.index}] (${p.id}): beyond every instrument's reach in any wind direction (nearest point at least ${best.toFixed(0)} m past plan.maxRange_m); check the plane and the instrument positions`);
      }
    }
  }
  for (const p of c.planes) {
    const [a, b] = axisNames(p);
    [0, 1].forEach((k) => {
      const lo = k === 0 ? p.y.min : p.second.min, hi = k === 0 ? p.y.max : p.second.max;
      const n = Math.max(1, Math.round((hi - lo) / p.cell_m[k]));
      const covered = n * p.cell_m[k];
      if (Math.abs(covered - (hi - lo)) > 1e-6 * Math.max(1, hi - lo) && p.cell_m[k] <= hi - lo) {
        out.push(`planes[${p.index}] (${p.id}): the ${k === 0 ? a : b} extent ${hi - lo} m is not a whole number of ${p.cell_m[k]} m cells; the grid covers ${lo} .. ${lo + covered} m`);
      }
    });
  }
  return out;
}

/**
 * A lower bound of the distance from `pos` (site frame) to any point of plane `p` in any wind direction: the plane's
 * points lie in a ring around the tower (horizontal radius between rMin and rMax) at heights within its vertical
 * extent, so the distance is at least the gap to that ring in the horizontal combined with the gap in height.
 */
function nearestPossibleDistance(c: Campaign, p: PlaneSpec, pos: readonly number[]): number {
  const t = c.turbine.position;
  const ay = Math.min(Math.abs(p.y.min), Math.abs(p.y.max)) * (p.y.min <= 0 && p.y.max >= 0 ? 0 : 1);
  const by = Math.max(Math.abs(p.y.min), Math.abs(p.y.max));
  let rMin: number, rMax: number, zLo: number, zHi: number;
  if (p.orientation === 'cross') {
    rMin = Math.hypot(p.x_m, ay); rMax = Math.hypot(p.x_m, by); zLo = p.second.min; zHi = p.second.max;
  } else {
    const ax = p.second.min <= 0 && p.second.max >= 0 ? 0 : Math.min(Math.abs(p.second.min), Math.abs(p.second.max));
    const bx = Math.max(Math.abs(p.second.min), Math.abs(p.second.max));
    rMin = Math.hypot(ax, ay); rMax = Math.hypot(bx, by); zLo = zHi = p.z_m;
  }
  const r = Math.hypot(pos[0] - t[0], pos[1] - t[1]);
  const dh = r < rMin ? rMin - r : r > rMax ? r - rMax : 0;
  const h = pos[2] - t[2];
  const dz = h < zLo ? zLo - h : h > zHi ? h - zHi : 0;
  return Math.hypot(dh, dz);
}
