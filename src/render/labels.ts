/**
 * Shared wording for figure titles and file names.
 */
import type { PlaneSpec } from '../campaign/types.ts';
import type { FieldResult, WindowInfo } from '../retrieval/types.ts';
import { formatNumber } from './ticks.ts';

/** "2026-06-01 12:00–12:10 UTC" (the end date is repeated only when it differs). */
export function windowLabel(w: WindowInfo): string {
  if (w.kind === 'ensemble') return `${w.label ?? `bin ${w.index}`} (${w.members?.length ?? 0} windows)`;
  const a = isoMinute(w.start_s), b = isoMinute(w.end_s);
  if (!a) return `window ${w.index}`;
  const same = a.slice(0, 10) === b.slice(0, 10);
  return `${a}\u2013${same ? b.slice(11) : b} UTC`;
}

function isoMinute(s: number): string {
  if (!Number.isFinite(s)) return '';
  return new Date(Math.round(s * 1000)).toISOString().slice(0, 16).replace('T', ' ');
}

/** "x = 5.0 D (600 m)" for a cross plane, "z = 90 m" for a horizontal one. */
export function planePosition(f: Pick<FieldResult, 'orientation' | 'x_m' | 'z_m'>, diameter_m: number): string {
  if (f.orientation === 'cross') return `x = ${formatNumber(f.x_m / diameter_m, 1)} D (${formatNumber(f.x_m, 0)} m)`;
  return `horizontal plane at z = ${formatNumber(f.z_m, 0)} m`;
}

/** Base file name (no extension) under images/: <plane>_w<window>_<what>. */
/** File stem of a plane image: <plane>_w<window>_<what>, or <plane>_bin<bin>_<what> for a condition-bin ensemble. */
export function imageName(planeId: string, window: number, what: string, ensemble = false): string {
  return `${planeId}_${ensemble ? 'bin' : 'w'}${window}_${what}`;
}

export function axisLabels(orientation: PlaneSpec['orientation']): { yLabel: string; zLabel: string; note: string } {
  return orientation === 'cross'
    ? { yLabel: 'y, lateral, positive to the left (m)', zLabel: 'z, height above ground (m)', note: 'Seen looking downstream: +y is on the left.' }
    : { yLabel: 'y, lateral, positive to the left (m)', zLabel: 'x, downstream of the rotor (m)', note: 'Seen from above with the flow going up the page: +y is on the left.' };
}
