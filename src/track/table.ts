/**
 * Tracking tables. Per downstream distance (tracks/<instrument>.csv): instrument, window, window_start, window_end,
 * scan (-1 = all scans of the window pooled), x_m, x_D, axis (y: horizontal sector, z: vertical sector), centre_m,
 * scentre_m, width_m, swidth_m (Gaussian centre and standard deviation across the wake, with standard errors),
 * amplitude (peak line-of-sight deficit), centroid_m, r2, bins, samples, free_stream_ms, free_stream_source,
 * direction_bias_centre_m, direction_bias_width_m (largest change for the assumed direction +/- its uncertainty),
 * flag, reason. Deficit profiles of the window-level rows (tracks/<instrument>_profiles.csv): instrument, window,
 * x_m, axis, c_m (across-wake bin position), deficit, sdeficit.
 */
import { csvRow } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import type { TrackPoint } from './types.ts';

export function trackTableCsv(rows: TrackPoint[]): string {
  const out = [csvRow([
    'instrument', 'window', 'window_start', 'window_end', 'scan', 'x_m', 'x_D', 'axis', 'centre_m', 'scentre_m', 'width_m', 'swidth_m', 'amplitude',
    'centroid_m', 'r2', 'bins', 'samples', 'free_stream_ms', 'free_stream_source', 'direction_bias_centre_m', 'direction_bias_width_m', 'flag', 'reason',
  ])];
  for (const r of rows)
    out.push(csvRow([
      r.instrumentId, r.window.index, isoTime(r.window.start_s), isoTime(r.window.end_s), r.scan, r.x_m, r.x_D, r.axis, r.centre_m, r.scentre_m,
      r.width_m, r.swidth_m, r.amplitude, r.centroid_m, r.r2, r.bins, r.samples, r.freeStream_ms, r.freeStreamSource, r.directionBiasCentre_m,
      r.directionBiasWidth_m, r.flag, r.reason,
    ]));
  return out.join('');
}

export function trackProfilesCsv(rows: TrackPoint[]): string {
  const out = [csvRow(['instrument', 'window', 'x_m', 'axis', 'c_m', 'deficit', 'sdeficit'])];
  for (const r of rows) {
    if (r.scan !== -1) continue;
    r.profile.c_m.forEach((c, i) => out.push(csvRow([r.instrumentId, r.window.index, r.x_m, r.axis, c, r.profile.deficit[i], r.profile.sdeficit[i]])));
  }
  return out.join('');
}
