/**
 * Added turbulence in a wake: the turbulence intensity of u inside the wake against the plane's undisturbed cells,
 * from the retrieval's per-cell turbulence intensity (retrieval/fieldBudget.ts: sqrt(var u) / |u|, var u from the
 * crossed-beam variance equations).
 *
 * Wake cells: deficit at least half the plane's largest deficit (and at least minDeficit); ambient cells: |deficit|
 * below minDeficit. Each side's intensity is the median over its cells (robust against the noisy per-cell
 * variances). Added intensity I+ = sqrt(max(0, I_wake^2 - I_ambient^2)), the usual definition (e.g. Crespo &
 * Hernández 1996, J. Wind Eng. Ind. Aerodyn. 61, eq. for the added turbulence; from memory). NaN with fewer than
 * MIN_CELLS cells on either side.
 *
 * Limits: the intensities are probe-volume filtered and neglect the crossed-beam covariances (README: Turbulence
 * statistics); the ambient cells are those of the same plane beside the wake, not an upstream measurement.
 */
import { median } from './stats.ts';

export const MIN_CELLS = 3;

export interface AddedTurbulence {
  wake: number;
  ambient: number;
  added: number;
  wakeCells: number;
  ambientCells: number;
}

export function addedTurbulence(ti: Float64Array | undefined, deficit: Float64Array, maxDeficit: number, minDeficit: number): AddedTurbulence {
  const none = { wake: NaN, ambient: NaN, added: NaN, wakeCells: 0, ambientCells: 0 };
  if (!ti || !Number.isFinite(maxDeficit)) return none;
  const inWake: number[] = [], ambient: number[] = [];
  const wakeFrom = Math.max(minDeficit, maxDeficit / 2);
  for (let c = 0; c < ti.length; c++) {
    const t = ti[c], d = deficit[c];
    if (!Number.isFinite(t) || !Number.isFinite(d)) continue;
    if (d >= wakeFrom) inWake.push(t);
    else if (Math.abs(d) < minDeficit) ambient.push(t);
  }
  const out = { ...none, wakeCells: inWake.length, ambientCells: ambient.length };
  if (inWake.length < MIN_CELLS || ambient.length < MIN_CELLS) return out;
  out.wake = median(inWake);
  out.ambient = median(ambient);
  out.added = Math.sqrt(Math.max(0, out.wake ** 2 - out.ambient ** 2));
  return out;
}
