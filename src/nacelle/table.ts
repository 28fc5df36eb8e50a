/**
 * Nacelle tables. Per window (nacelle/<instrument>.csv): instrument, window, window_start, window_end, distance_m,
 * distance_D (upstream, along the nacelle axis), hub_speed_ms, shub_speed_ms (as measured at hub height: the pair, or
 * the mean of the two pairs), hub_speed_shear_ms, shub_speed_shear_ms (4 beams: power-law corrected to hub height),
 * alpha, salpha (shear exponent), direction_deg, sdirection_deg (wind from), nacelle_deg (window-mean nacelle
 * direction), yaw_misalignment_deg, syaw_misalignment_deg (nacelle minus wind direction, positive = nacelle turned
 * clockwise from the wind), induction_a, induction_ratio (U/U_inf on the axis at the distance, vortex-sheet model),
 * free_stream_ms, sfree_stream_ms (induction-corrected), samples, flag, reason.
 * Per gate (nacelle/<instrument>_gates.csv): instrument, window, range_m, upstream_m, pair, height_m, u_ms, v_ms,
 * speed_ms, sspeed_ms, direction_deg, sdirection_deg, samples, alpha, hub_speed_ms, hub_speed_shear_ms, ok, note.
 */
import { csvRow } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import type { NacelleWindow } from './types.ts';

export function nacelleTableCsv(rows: NacelleWindow[]): string {
  const out = [csvRow([
    'instrument', 'window', 'window_start', 'window_end', 'distance_m', 'distance_D', 'hub_speed_ms', 'shub_speed_ms', 'hub_speed_shear_ms',
    'shub_speed_shear_ms', 'alpha', 'salpha', 'direction_deg', 'sdirection_deg', 'nacelle_deg', 'yaw_misalignment_deg', 'syaw_misalignment_deg',
    'induction_a', 'induction_ratio', 'free_stream_ms', 'sfree_stream_ms', 'samples', 'flag', 'reason',
  ])];
  for (const r of rows)
    out.push(csvRow([
      r.instrumentId, r.window.index, isoTime(r.window.start_s), isoTime(r.window.end_s), r.distance_m, r.distance_D, r.hubSpeed_ms, r.shubSpeed_ms,
      r.hubSpeedShear_ms, r.shubSpeedShear_ms, r.alpha, r.salpha, r.direction_deg, r.sdirection_deg, r.nacelle_deg, r.yawMisalignment_deg,
      r.syawMisalignment_deg, r.induction_a, r.inductionRatio, r.freeStream_ms, r.sfreeStream_ms, r.samples, r.flag, r.reason,
    ]));
  return out.join('');
}

export function nacelleGateTableCsv(rows: NacelleWindow[]): string {
  const out = [csvRow(['instrument', 'window', 'range_m', 'upstream_m', 'pair', 'height_m', 'u_ms', 'v_ms', 'speed_ms', 'sspeed_ms', 'direction_deg', 'sdirection_deg', 'samples', 'alpha', 'hub_speed_ms', 'hub_speed_shear_ms', 'ok', 'note'])];
  for (const r of rows)
    for (const g of r.gates) {
      const pairs = g.pairs.length ? g.pairs : [undefined];
      for (const p of pairs)
        out.push(csvRow([
          r.instrumentId, r.window.index, g.range_m, g.upstream_m, p?.pair ?? '', p?.height_m, p?.u_ms, p?.v_ms, p?.speed_ms, p?.sspeed_ms,
          p?.direction_deg, p?.sdirection_deg, p?.samples ?? 0, g.alpha, g.hubSpeed_ms, g.hubSpeedShear_ms, g.ok ? 1 : 0, g.note,
        ]));
    }
  return out.join('');
}
