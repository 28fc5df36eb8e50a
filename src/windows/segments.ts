/**
 * Segment windows: contiguous spans in which the turbine state is steady, from the turbine series.
 *
 * The state is known at the series rows. A row's state is the yaw-offset level gamma_l with |gamma - gamma_l| <= tolerance
 * (nearest level), where gamma = nacelle - wind direction wrapped to [-180, 180) degrees (the house convention:
 * positive when the nacelle is turned clockwise seen from above); the wind direction is the series' own
 * wind_direction_deg where given, else the campaign's wind-direction source at that time. A row is excluded as
 * "transition" when no level is within tolerance, "wind_sector" or "power" when an optional condition fails. A row
 * that lacks the values (a logger's dropout: an empty yaw cell, no wind direction within reach, or no power under a
 * power condition) says nothing about the state and is skipped, as if it were not in the file: the rows around it
 * decide, and the time between them is a gap when they are more than maxGap_s apart (so a dropout of a few rows
 * inside a steady step does not cut it, while a long one does). Consecutive rows of one level, no more than maxGap_s apart, form a span from the first of
 * them to the last (the time between rows of different states is a transition: when exactly the state changed
 * between them is unknown, so it is excluded rather than guessed); the first settle_s of a span are excluded
 * ("settle": the wake needs time to reach the planes after a yaw step), spans shorter than minDuration_s are
 * excluded ("short"), and with subWindow_s a span is cut into sub-windows of that length from its start (the rest
 * of the span is excluded as "remainder"). Every excluded second is counted by reason in the summary.
 */
import { wrapDeg180 } from '../geometry/angles.ts';
import type { Series } from '../io/series.ts';
import type { WindowDef } from './plan.ts';

export interface SegmentSettings {
  /** Yaw-offset levels, degrees (nacelle minus wind direction). */
  levels_deg: number[];
  /** A row belongs to a level when its yaw offset is within this, degrees. */
  tolerance_deg: number;
  /** Shortest span kept, seconds. */
  minDuration_s: number;
  /** Rows further apart than this leave a gap, seconds. */
  maxGap_s: number;
  /** Excluded at the start of every span, seconds. */
  settle_s: number;
  /** Keep only rows whose wind direction lies clockwise from `from` to `to`, degrees. */
  windSector_deg?: { from: number; to: number };
  /** Keep only rows whose power lies in [min, max], kW. */
  power_kw?: { min?: number; max?: number };
  /** Cut spans into windows of this length, seconds. */
  subWindow_s?: number;
}

export const EXCLUSION_REASONS = ['transition', 'wind_sector', 'power', 'gap', 'settle', 'short', 'remainder'] as const;
export type ExclusionReason = (typeof EXCLUSION_REASONS)[number];

/**
 * The gap between series rows beyond which the state is unknown, when the campaign does not give one: 2.5 times the
 * median interval between consecutive rows, at least 60 s. So one missing row (twice the interval) or a logger clock
 * that jitters around its rate is not a gap, while two missing rows (three intervals) are; a series of one row a
 * minute is not cut at every interval a little over 60 s. A choice of ours, not a published rule.
 */
export function defaultSegmentGap(series: Series): number {
  const median = medianInterval(series);
  return median > 0 ? Math.max(60, 2.5 * median) : 60;
}

/** Median interval between consecutive rows of a series (ascending times), seconds; 0 with fewer than two. */
export function medianInterval(series: Series): number {
  const T = series.time;
  const d: number[] = [];
  for (let i = 1; i < T.length; i++) if (T[i] > T[i - 1]) d.push(T[i] - T[i - 1]);
  if (d.length === 0) return 0;
  d.sort((a, b) => a - b);
  const m = d.length >> 1;
  return d.length % 2 ? d[m] : (d[m - 1] + d[m]) / 2;
}

export interface SegmentSummary {
  /** Rows further apart than this were a gap, seconds (the campaign's maxGap_s or defaultSegmentGap). */
  maxGap_s: number;
  /** Series time span considered, seconds. */
  total_s: number;
  /** Time inside windows, seconds. */
  windows_s: number;
  /** Excluded time by reason, seconds. */
  excluded_s: Record<ExclusionReason, number>;
  /** Steady spans found (before the minimum-duration rule) and windows made. */
  spans: number;
  windows: number;
}

const GAP = -1, TRANSITION = -2, SECTOR = -3, POWER = -4;

function inSector(d: number, from: number, to: number): boolean {
  const w = (x: number) => ((x % 360) + 360) % 360;
  return w(d - from) <= w(to - from);
}

/**
 * The segment windows of a turbine series (values yaw_deg, optional wind_direction_deg and power_kw).
 * `directionAt(t)` gives the campaign's wind direction where the series has none (NaN when unknown).
 */
/**
 * Yaw offset of row i of a turbine series, degrees in [-180, 180): its nacelle direction minus the wind direction at
 * its time (the row's own wind_direction_deg, else `directionAt(t)`); NaN where either is missing.
 */
export function rowYawOffset(series: Series, i: number, directionAt: (t: number) => number): number {
  const nac = series.values.yaw_deg?.[i] ?? NaN;
  const wd = series.values.wind_direction_deg;
  const dir = wd && Number.isFinite(wd[i]) ? wd[i] : directionAt(series.time[i]);
  return Number.isFinite(nac) && Number.isFinite(dir) ? wrapDeg180(nac - dir) : NaN;
}

export function segmentWindows(
  series: Series, directionAt: (t: number) => number, s: SegmentSettings,
): { windows: Omit<WindowDef, 'id'>[]; summary: SegmentSummary } {
  const T = series.time;
  const N = T.length;
  const excluded = Object.fromEntries(EXCLUSION_REASONS.map((r) => [r, 0])) as Record<ExclusionReason, number>;
  const summary: SegmentSummary = { maxGap_s: s.maxGap_s, total_s: 0, windows_s: 0, excluded_s: excluded, spans: 0, windows: 0 };
  const windows: Omit<WindowDef, 'id'>[] = [];
  if (N === 0) return { windows, summary };
  const wd = series.values.wind_direction_deg, pw = series.values.power_kw;

  // State of each row and the interval it holds.
  const state = new Int32Array(N);
  for (let i = 0; i < N; i++) {
    const g = rowYawOffset(series, i, directionAt);
    if (!Number.isFinite(g)) { state[i] = GAP; continue; }
    let best = -1, bestD = Infinity;
    s.levels_deg.forEach((l, j) => {
      const d = Math.abs(wrapDeg180(g - l));
      if (d <= s.tolerance_deg && d < bestD) { best = j; bestD = d; }
    });
    if (best < 0) { state[i] = TRANSITION; continue; }
    if (s.windSector_deg && !inSector(wd && Number.isFinite(wd[i]) ? wd[i] : directionAt(T[i]), s.windSector_deg.from, s.windSector_deg.to)) { state[i] = SECTOR; continue; }
    if (s.power_kw) {
      const p = pw ? pw[i] : NaN;
      // A row without a power value (a dropout in a series that has the column) says nothing about the condition:
      // skipped like a row without a yaw. A series without the column fails the condition everywhere.
      if (pw && !Number.isFinite(p)) { state[i] = GAP; continue; }
      const lo = s.power_kw.min ?? -Infinity, hi = s.power_kw.max ?? Infinity;
      if (!(p >= lo && p <= hi)) { state[i] = POWER; continue; }
    }
    state[i] = best;
  }
  const reasonOf = (st: number): ExclusionReason => (st === TRANSITION ? 'transition' : st === SECTOR ? 'wind_sector' : st === POWER ? 'power' : 'gap');

  const closeSpan = (level: number, a: number, b: number) => {
    summary.spans++;
    const settle = Math.min(s.settle_s, b - a);
    excluded.settle += settle;
    const start = a + settle;
    const dur = b - start;
    if (dur < s.minDuration_s || dur <= 0) { excluded.short += dur; return; }
    const L = s.levels_deg[level];
    const label = `yaw offset ${L > 0 ? '+' : ''}${L}\u00b0`;
    if (s.subWindow_s) {
      const k = Math.floor(dur / s.subWindow_s);
      for (let j = 0; j < k; j++) windows.push({ start_s: start + j * s.subWindow_s, end_s: start + (j + 1) * s.subWindow_s, kind: 'segment', label, level: L });
      excluded.remainder += dur - k * s.subWindow_s;
      summary.windows_s += k * s.subWindow_s;
    } else {
      windows.push({ start_s: start, end_s: b, kind: 'segment', label, level: L });
      summary.windows_s += dur;
    }
  };

  // The state is known at the rows only (rows without values skipped). Between two consecutive rows of one level (no
  // gap) it is taken as steady; any other interval between rows is excluded, by the reason of the row that is not at
  // a level (transition when both are at different levels), or as a gap when the rows are more than maxGap_s apart.
  // Time before the first and after the last row with values is a gap.
  let spanLevel = -1, spanStart = NaN, spanEnd = NaN, last = -1;
  for (let i = 0; i < N; i++) {
    const st = state[i];
    if (st === GAP) continue;
    if (last < 0) {
      excluded.gap += T[i] - T[0];
    } else {
      const dt = T[i] - T[last];
      const prev = state[last];
      if (dt > s.maxGap_s) {
        excluded.gap += dt;
      } else if (st >= 0 && st === prev) {
        spanEnd = T[i];
        last = i;
        continue;
      } else {
        excluded[prev < 0 ? reasonOf(prev) : st < 0 ? reasonOf(st) : 'transition'] += dt;
      }
    }
    if (spanLevel >= 0) closeSpan(spanLevel, spanStart, spanEnd);
    spanLevel = st;
    spanStart = spanEnd = T[i];
    last = i;
  }
  excluded.gap += last < 0 ? T[N - 1] - T[0] : T[N - 1] - T[last];
  if (spanLevel >= 0) closeSpan(spanLevel, spanStart, spanEnd);
  summary.total_s = T[N - 1] - T[0];
  summary.windows = windows.length;
  return { windows, summary };
}
