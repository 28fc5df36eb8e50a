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

/**
 * Standard uncertainty (degrees) of the window direction of directionForWindow, for the uncertainty budget's
 * direction term: a type A evaluation (GUM, JCGM 100:2008, 4.2.3: the experimental standard deviation of the mean,
 * s / sqrt(n)) of the series rows inside the window, their deviations taken from the circular mean and wrapped into
 * [-180, 180). Rows are taken as independent (minute values of a vane or sonic usually are, nearly; correlated rows
 * would make this too small). A fixed direction, fewer than two rows inside (nearest-row fallback) or no series: 0
 * from the scatter (README: Uncertainty). Ensembles (members): each member window defines its own frame, and an
 * equal-weight mean of m independent frame errors has sqrt(sum u_j^2) / m. The campaign's
 * windDirection.uncertainty_deg (the source's own standard uncertainty, a type B evaluation, GUM 4.3; default 0) is
 * added in quadrature, unreduced by pooling (the same vane error in every window).
 */
export function directionUncertaintyForWindow(c: Campaign, series: Series | undefined, w: { start_s: number; end_s: number; members?: [number, number][] }): number {
  const b = c.windDirection.uncertainty_deg ?? 0;
  if (c.windDirection.kind === 'fixed' || !series || series.time.length === 0) return b;
  const parts = w.members && w.members.length ? w.members : [[w.start_s, w.end_s] as [number, number]];
  let sum2 = 0;
  for (const [start, end] of parts) {
    const [a, b] = rowsInWindow(series, Number.isFinite(start) ? start : -Infinity, Number.isFinite(end) ? end : Infinity);
    const u = meanDirectionUncertainty(series.values.direction_deg, a, b);
    sum2 += u * u;
  }
  // The source's own (type B) uncertainty is common to every member window: not reduced by pooling.
  return Math.sqrt(sum2 / (parts.length * parts.length) + b * b);
}

/** s / sqrt(n) of the directions in rows [lo, hi) about their circular mean (degrees); 0 with fewer than two finite rows. */
export function meanDirectionUncertainty(values: Float64Array, lo: number, hi: number): number {
  const m = circularMeanDeg(values, lo, hi);
  if (!(m === m)) return 0;
  let n = 0, s2 = 0;
  for (let i = lo; i < hi; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) continue;
    const d = ((((v - m) % 360) + 540) % 360) - 180;
    s2 += d * d;
    n++;
  }
  return n >= 2 ? Math.sqrt(s2 / (n - 1) / n) : 0;
}
