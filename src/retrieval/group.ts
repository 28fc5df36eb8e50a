/**
 * Grouping of a window's samples by (plane, cell, instrument) with a counting sort on typed arrays: no per-sample
 * objects. Group key = (cellOffset[plane] + cell) * instrumentCount + instrument, so the groups of one cell are
 * adjacent (one per instrument) and the cells of one plane are adjacent.
 */
import type { WindowSamples } from '../grid/windowSamples.ts';
import type { PlaneGrid } from './settings.ts';

export interface SampleGroups {
  /** Number of keys = total cells of all planes * instrumentCount. */
  keyCount: number;
  instrumentCount: number;
  /** First cell offset of each plane (position in `planes`), length planes.length + 1. */
  cellOffset: Uint32Array;
  /** Sample indices sorted by key (stable: window order within a group). */
  order: Uint32Array;
  /** Group k holds order[start[k] .. start[k + 1]). Length keyCount + 1. */
  start: Uint32Array;
  /** Group key of every sample (by sample index). */
  keys: Uint32Array;
  /** Radial velocities in group order: vrSorted[p] = samples.vr[order[p]]. */
  vrSorted: Float64Array;
}

/**
 * Sort the samples into groups. Throws RangeError for a sample whose plane is not in `planes`, whose cell is
 * outside its grid or whose instrument index is >= instrumentCount (an upstream bug, not a data problem).
 */
export function groupSamples(samples: WindowSamples, planes: PlaneGrid[], instrumentCount: number): SampleGroups {
  const I = instrumentCount;
  const cellOffset = new Uint32Array(planes.length + 1);
  let maxIndex = 0;
  for (let j = 0; j < planes.length; j++) {
    const g = planes[j].grid;
    cellOffset[j + 1] = cellOffset[j] + g.ny * g.nz;
    maxIndex = Math.max(maxIndex, planes[j].spec.index);
  }
  const planePos = new Int32Array(maxIndex + 1).fill(-1);
  for (let j = 0; j < planes.length; j++) planePos[planes[j].spec.index] = j;

  const keyCount = cellOffset[planes.length] * I;
  const n = samples.length;
  const keys = new Uint32Array(n);
  const start = new Uint32Array(keyCount + 1);
  const { plane, cell, instrument } = samples;
  for (let i = 0; i < n; i++) {
    const p = plane[i];
    const j = p < planePos.length ? planePos[p] : -1;
    if (j < 0) throw new RangeError(`sample ${i}: plane index ${p} is not among the planes retrieved`);
    const c = cell[i];
    if (c >= cellOffset[j + 1] - cellOffset[j]) throw new RangeError(`sample ${i}: cell ${c} outside plane ${p}'s grid`);
    const ins = instrument[i];
    if (ins >= I) throw new RangeError(`sample ${i}: instrument ${ins} >= instrumentCount ${I}`);
    const k = (cellOffset[j] + c) * I + ins;
    keys[i] = k;
    start[k + 1]++;
  }
  for (let k = 0; k < keyCount; k++) start[k + 1] += start[k];
  const fill = start.slice(0, keyCount);
  const order = new Uint32Array(n);
  const vrSorted = new Float64Array(n);
  const vr = samples.vr;
  for (let i = 0; i < n; i++) {
    const p = fill[keys[i]]++;
    order[p] = i;
    vrSorted[p] = vr[i];
  }
  return { keyCount, instrumentCount: I, cellOffset, order, start, keys, vrSorted };
}
