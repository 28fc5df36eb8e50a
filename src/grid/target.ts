/**
 * A geometry target: where accepted samples go and how they are keyed into a window's accumulator. Cross and
 * horizontal planes (planeTarget.ts) are one target; other geometries (profiles, nacelle beams, single-instrument
 * sectors) are siblings of the same shape: the ingest computes each sample's site-frame beam and measurement point
 * once, then hands it to the target of its instrument, which decides the key (or that the sample lies outside it).
 * Each target has its own key space, accumulator per window and solver.
 */
import type { CellAccumulator } from './accumulator.ts';

/**
 * The rotor frame and times of one open window, in a typed array (fields FRAME) that the ingest updates in place:
 * the x axis (downstream) in site east and north components (dE, dN); window start and end (Unix s; -Infinity and
 * Infinity for a whole-record window; their middle is the one the budget sums use); the first and last sample
 * times seen so far. A typed array rather than an object: read for every sample, it keeps one shape whatever the
 * values (an object's fields change representation with their values, which throws optimised code away).
 */
export type WindowFrame = Float64Array;
// Field offsets as const enums (FRAME, SAMPLE): the bundle writes them into the per-sample code as numbers (an
// object of offsets is loaded from the module and checked at every use in optimised code, a dozen times per sample).
export const enum FRAME { dE = 0, dN = 1, start = 2, end = 3, first = 4, last = 5 }
export const FRAME_FIELDS = 6;

/** A window frame with the given axis and bounds, no sample seen yet. */
export function windowFrame(dE: number, dN: number, start_s = -Infinity, end_s = Infinity): WindowFrame {
  return Float64Array.of(dE, dN, start_s, end_s, Infinity, -Infinity);
}

/**
 * One accepted sample as the ingest hands it to a target, in a scratch array reused for every sample (numbers passed
 * as arguments to a call that is not inlined would each be boxed on the heap: gigabytes of garbage over a campaign).
 * Fields: radial velocity (m/s, positive away), site-frame beam unit vector (ne, nn, nu), measurement point (pe, pn,
 * pu, metres), time (Unix s), ground height under the point (site-frame up, metres; geometry/terrain.ts).
 */
export const enum SAMPLE { vr = 0, ne = 1, nn = 2, nu = 3, pe = 4, pn = 5, pu = 6, t = 7, ground = 8 }
export const SAMPLE_FIELDS = 9;

/** A scratch sample (SAMPLE fields) with the given values. */
export function sampleOf(vr: number, ne: number, nn: number, nu: number, pe: number, pn: number, pu: number, t = 0, ground = 0): Float64Array {
  return Float64Array.of(vr, ne, nn, nu, pe, pn, pu, t, ground);
}

export interface SampleTarget {
  /** Names the target in outputs and errors (e.g. "planes"). */
  readonly id: string;
  /** Keys of one window's accumulator. */
  readonly keyCount: number;
  /** Rejection reason (qc/reasons.ts index) of a sample that falls outside the target. */
  readonly outsideReason: number;
  /**
   * Add one accepted sample to `acc` when it lies in the target: instrument index and the sample's values in `s`
   * (fields SAMPLE below). Returns false when the sample lies outside the target.
   */
  add(acc: CellAccumulator, frame: WindowFrame, ins: number, s: Float64Array): boolean;
  /**
   * Optional, for rays of many range gates: the ranges along a straight beam from site-frame point o (oe, on, ou)
   * with unit vector (ne, nn, nu) outside which no sample can lie in the target for this window frame, written to
   * out[0] (lowest) and out[1] (highest), metres; [Infinity, -Infinity] when none can. Conservative: a range inside
   * may still miss (add() decides), a range outside must miss (add() would return false), so the ingest may count
   * such a sample outside without calling add(). Targets whose membership is not an interval of range on a
   * straight beam leave it out.
   */
  reach?(frame: WindowFrame, oe: number, on: number, ou: number, ne: number, nn: number, nu: number, out: Float64Array): void;
}

/**
 * Slack of reach() intervals: REACH_SLACK_M in the coordinate the target tests (metres), far above the rounding
 * of the per-sample arithmetic (about 1e-12 m at 10 km) and far below a cell, so a sample near the edge always goes
 * through add().
 */
export const REACH_SLACK_M = 1e-3;

/**
 * The ranges r at which c0 + k r lies in [lo, hi] (a slab along one axis), widened by REACH_SLACK_M, merged into
 * out (out[0] = min, out[1] = max). A beam along the slab (|k| tiny) reaches it at every range or at none.
 */
export function reachSlab(c0: number, k: number, lo: number, hi: number, out: Float64Array): void {
  const a = lo - REACH_SLACK_M - c0, b = hi + REACH_SLACK_M - c0;
  if (Math.abs(k) < 1e-9) {
    // c varies by less than 1e-9 r: under the slack for any range below a million metres.
    if (a <= 0 && b >= 0) { out[0] = -Infinity; out[1] = Infinity; }
    return;
  }
  const r1 = a / k, r2 = b / k;
  const rlo = r1 < r2 ? r1 : r2, rhi = r1 < r2 ? r2 : r1;
  if (rlo < out[0]) out[0] = rlo;
  if (rhi > out[1]) out[1] = rhi;
}
