/**
 * Averaging windows as data: a plan answers which windows contain a time, and describes each window (its bounds and
 * why it exists). The ingest looks a sample's time up in the plan; it does not decide what a window is.
 *
 * Windows are half-open intervals [start, end) in Unix seconds (UTC). Kinds:
 * - fixed: length L every step S (S = L: contiguous; S < L: overlapping; S > L: gaps) aligned to an anchor time;
 *   window k = [anchor + k S, anchor + k S + L) for every integer k (so samples before the anchor have windows too).
 * - list: explicit windows (the experiment's log), each with an optional label.
 * - segment: spans of steady turbine state (segments.ts), labelled by their state level.
 * - record: one window over the whole record; its bounds are the first and last sample times.
 * A window's id is an integer: k for fixed plans, the position in the sorted table for listed ones.
 */

export type WindowKind = 'fixed' | 'list' | 'segment' | 'record';

export interface WindowDef {
  id: number;
  start_s: number;
  end_s: number;
  kind: WindowKind;
  /** Why the window exists, for people: a list label, a state level ("yaw offset -10 deg"), or ''. */
  label: string;
  /** Segment windows: the state level (yaw offset, degrees); NaN otherwise. */
  level: number;
}

export interface WindowPlan {
  kind: WindowKind;
  /** True when no two windows overlap (each sample is in at most one window). */
  disjoint: boolean;
  /**
   * Ids of the windows containing t, ascending, written into out; returns how many (at most out.length). `range`
   * receives [from, to): the interval around t over which the answer stays the same (so callers can skip lookups).
   */
  find(t: number, out: Int32Array, range: Float64Array): number;
  /** The window with this id. */
  def(id: number): WindowDef;
  /** Every window when the plan is finite (list, segment, record); undefined for fixed plans. */
  all?: WindowDef[];
  /** Most windows one time can fall into (sizes the lookup buffer). */
  maxOverlap: number;
}

/** Fixed windows of `length_s` every `step_s`, aligned so that one window starts at `anchor_s`. */
export function fixedPlan(anchor_s: number, length_s: number, step_s: number = length_s): WindowPlan {
  if (!(length_s > 0) || !(step_s > 0) || !Number.isFinite(anchor_s)) throw new RangeError('fixed windows need a finite anchor and positive length and step');
  const def = (k: number): WindowDef => ({ id: k, start_s: anchor_s + k * step_s, end_s: anchor_s + k * step_s + length_s, kind: 'fixed', label: '', level: NaN });
  const maxOverlap = Math.ceil(length_s / step_s) + 1;
  return {
    kind: 'fixed',
    disjoint: step_s >= length_s,
    maxOverlap,
    def,
    find(t, out, range) {
      const hi = Math.floor((t - anchor_s) / step_s);
      let n = 0;
      // Windows k <= hi start at or before t; those with start + length > t contain it.
      for (let k = hi - maxOverlap + 1; k <= hi; k++) {
        if (anchor_s + k * step_s + length_s > t && anchor_s + k * step_s <= t && n < out.length) out[n++] = k;
      }
      // The set changes only at window starts and ends: the last of each at or before t, the next of each after.
      const prevStart = anchor_s + hi * step_s;
      const e = Math.floor((t - anchor_s - length_s) / step_s);
      const prevEnd = anchor_s + e * step_s + length_s;
      range[0] = Math.max(prevStart, prevEnd);
      range[1] = Math.min(prevStart + step_s, prevEnd + step_s);
      if (!(range[0] <= t && t < range[1])) { range[0] = t; range[1] = t; } // rounding at a bound: no reuse
      return n;
    },
  };
}

/**
 * A plan over a finite list of windows (sorted by start, then end; ids are positions in that order). Lookup: the
 * elementary intervals between all window bounds, each with the windows covering it, found by binary search
 * (with the last answer cached, as samples arrive mostly in time order).
 */
export function tablePlan(kind: WindowKind, windows: Omit<WindowDef, 'id'>[]): WindowPlan {
  const defs: WindowDef[] = [...windows]
    .sort((a, b) => a.start_s - b.start_s || a.end_s - b.end_s)
    .map((w, id) => ({ ...w, id }));
  const bounds = [...new Set(defs.flatMap((w) => [w.start_s, w.end_s]))].sort((a, b) => a - b);
  const B = Float64Array.from(bounds);
  // Elementary interval j = [B[j], B[j+1]); CSR list of covering windows.
  const cover: number[][] = Array.from({ length: Math.max(0, B.length - 1) }, () => []);
  for (const w of defs) {
    let j = lowerBound(B, w.start_s);
    for (; j < B.length - 1 && B[j] < w.end_s; j++) cover[j].push(w.id);
  }
  const off = new Int32Array(cover.length + 1);
  cover.forEach((c, j) => (off[j + 1] = off[j] + c.length));
  const ids = Int32Array.from(cover.flat());
  let maxOverlap = 1, disjoint = true;
  for (const c of cover) {
    maxOverlap = Math.max(maxOverlap, c.length);
    if (c.length > 1) disjoint = false;
  }
  let last = -1;
  return {
    kind,
    disjoint,
    maxOverlap,
    all: defs,
    def: (id) => defs[id],
    find(t, out, range) {
      let j = last;
      if (!(j >= 0 && B[j] <= t && t < B[j + 1])) {
        j = upperBound(B, t) - 1; // last bound <= t
        if (j < 0 || j >= B.length - 1) {
          range[0] = j < 0 ? -Infinity : B[B.length - 1];
          range[1] = j < 0 ? (B.length ? B[0] : Infinity) : Infinity;
          return 0;
        }
        last = j;
      }
      range[0] = B[j]; range[1] = B[j + 1];
      let n = 0;
      for (let p = off[j]; p < off[j + 1] && n < out.length; p++) out[n++] = ids[p];
      return n;
    },
  };
}

/** One window over the whole record; the ingest sets its bounds from the samples. */
export function recordPlan(): WindowPlan {
  const w: WindowDef = { id: 0, start_s: -Infinity, end_s: Infinity, kind: 'record', label: 'whole record', level: NaN };
  return { kind: 'record', disjoint: true, maxOverlap: 1, all: [w], def: () => w, find: (_t, out, range) => ((range[0] = -Infinity), (range[1] = Infinity), (out[0] = 0), 1) };
}

/** First index with a[i] >= x. */
export function lowerBound(a: Float64Array, x: number): number {
  let lo = 0, hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** First index with a[i] > x. */
export function upperBound(a: Float64Array, x: number): number {
  let lo = 0, hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid] <= x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
