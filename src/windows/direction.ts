/**
 * The wind direction that defines each window's rotor frame. From the campaign: a fixed value, or the vector
 * (circular) mean of the direction series rows inside the window; with no row inside, the nearest row within one
 * window length; otherwise NaN (the window's samples are then rejected as no_wind_direction).
 */
import type { Campaign } from '../campaign/types.ts';
import { circularMeanDeg, rowsInWindow, type Series } from '../io/series.ts';

export function directionForWindow(c: Campaign, series: Series | undefined, start: number, end: number): number {
  if (c.windDirection.kind === 'fixed') return c.windDirection.deg;
  if (!series || series.time.length === 0) return NaN;
  const lo = Number.isFinite(start) ? start : -Infinity;
  const hi = Number.isFinite(end) ? end : Infinity;
  const [a, b] = rowsInWindow(series, lo, hi);
  const values = series.values.direction_deg;
  if (b > a) return circularMeanDeg(values, a, b);
  return nearestValue(series, values, (start + end) / 2, end - start);
}

/** The wind direction at one time: fixed, or the nearest series row within maxDistance_s (NaN otherwise). */
export function directionAt(c: Campaign, series: Series | undefined, t: number, maxDistance_s: number): number {
  if (c.windDirection.kind === 'fixed') return c.windDirection.deg;
  if (!series || series.time.length === 0) return NaN;
  return nearestValue(series, series.values.direction_deg, t, maxDistance_s);
}

function nearestValue(series: Series, values: Float64Array, t: number, maxDistance_s: number): number {
  const [k] = rowsInWindow(series, t, t);
  let best = -1, dist = Infinity;
  for (const j of [k - 1, k]) {
    if (j < 0 || j >= series.time.length) continue;
    const d = Math.abs(series.time[j] - t);
    if (d < dist) { dist = d; best = j; }
  }
  return best >= 0 && dist <= maxDistance_s ? values[best] : NaN;
}
