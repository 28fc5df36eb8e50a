/**
 * A geometry target: where accepted samples go and how they are keyed into a window's accumulator. Cross and
 * horizontal planes (planeTarget.ts) are one target; other geometries (profiles, nacelle beams, single-instrument
 * sectors) are siblings of the same shape: the ingest computes each sample's site-frame beam and measurement point
 * once, then hands it to the target of its instrument, which decides the key (or that the sample lies outside it).
 * Each target has its own key space, accumulator per window and solver.
 */
import type { CellAccumulator } from './accumulator.ts';

/** The rotor frame of one window: its x axis (downstream) in site east and north components. */
export interface WindowFrame {
  dE: number;
  dN: number;
  /** Window start (Unix s; -Infinity for a whole-record window) and its first sample time so far. */
  start_s: number;
  first_s: number;
  /** Window end (Unix s, exclusive; Infinity for a whole-record window); with start_s gives the middle used by the budget sums. */
  end_s?: number;
}

export interface SampleTarget {
  /** Names the target in outputs and errors (e.g. "planes"). */
  readonly id: string;
  /** Keys of one window's accumulator. */
  readonly keyCount: number;
  /** Rejection reason (qc/reasons.ts index) of a sample that falls outside the target. */
  readonly outsideReason: number;
  /**
   * Add one accepted sample to `acc` when it lies in the target: instrument index, radial velocity (m/s, positive
   * away), site-frame beam unit vector (ne, nn, nu) and measurement point (pe, pn, pu, metres), time (Unix s),
   * ground height under the point (site-frame up, metres; from the terrain model, geometry/terrain.ts).
   * Returns false when the sample lies outside the target.
   */
  add(acc: CellAccumulator, frame: WindowFrame, ins: number, vr: number, ne: number, nn: number, nu: number, pe: number, pn: number, pu: number, t: number, ground: number): boolean;
}
