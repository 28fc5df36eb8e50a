/**
 * Averaging windows and the wind direction that defines each window's rotor frame.
 *
 * Fixed windows are aligned to multiples of their length since the Unix epoch (so 600 s windows start at :00, :10,
 * ... UTC), window index = floor(t / length). A 'record' window is one window (index 0) spanning the whole record.
 * The direction of a window comes from the campaign: a fixed value, or the vector (circular) mean of the series rows
 * inside the window; with no row inside, the nearest row within one window length; otherwise NaN (its samples are
 * then rejected as no_wind_direction).
 */
import type { Campaign } from '../campaign/types.ts';
import { circularMeanDeg, rowsInWindow, type Series } from '../io/series.ts';

export interface WindowScheme {
  fixed: boolean;
  length_s: number;
  indexOf(t: number): number;
  bounds(index: number): [number, number];
}

export function windowScheme(c: Campaign): WindowScheme {
  if (c.windows.kind === 'fixed') {
    const L = c.windows.length_s;
    return { fixed: true, length_s: L, indexOf: (t) => Math.floor(t / L), bounds: (i) => [i * L, (i + 1) * L] };
  }
  return { fixed: false, length_s: Infinity, indexOf: () => 0, bounds: () => [-Infinity, Infinity] };
}

export function directionForWindow(c: Campaign, series: Series | undefined, start: number, end: number): number {
  if (c.windDirection.kind === 'fixed') return c.windDirection.deg;
  if (!series || series.time.length === 0) return NaN;
  const lo = Number.isFinite(start) ? start : -Infinity;
  const hi = Number.isFinite(end) ? end : Infinity;
  const [a, b] = rowsInWindow(series, lo, hi);
  const values = series.values.direction_deg;
  if (b > a) return circularMeanDeg(values, a, b);
  // Nearest row within one window length.
  const mid = (start + end) / 2;
  const k = Math.min(Math.max(a, 0), series.time.length - 1);
  let best = -1, dist = Infinity;
  for (const j of [k - 1, k]) {
    if (j < 0 || j >= series.time.length) continue;
    const d = Math.abs(series.time[j] - mid);
    if (d < dist) { dist = d; best = j; }
  }
  return best >= 0 && dist <= end - start ? values[best] : NaN;
}
