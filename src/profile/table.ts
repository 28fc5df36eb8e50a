/**
 * The profile table: one row per window (or condition bin) and height. Columns: instrument, window (ordinal or bin),
 * kind, window_start, window_end (ISO 8601 UTC), height_m (above ground), radius_m (mean horizontal distance of the
 * samples), u_ms, v_ms (east, north), w_ms (up), su_ms, sv_ms, sw_ms (standard uncertainties), speed_ms, sspeed_ms
 * (horizontal speed), direction_deg, sdirection_deg (from, clockwise from north), sectors, samples, rmse_ms (RMS
 * residual of the sector means about the uniform-wind fit), r2 (homogeneity check), chi2_dof, max_gap_deg (largest
 * azimuth gap), flag, reason.
 */
import { csvRow } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import type { ProfileWindow } from './types.ts';

export const PROFILE_COLUMNS = [
  'instrument', 'window', 'kind', 'window_start', 'window_end', 'height_m', 'radius_m', 'u_ms', 'v_ms', 'w_ms', 'su_ms', 'sv_ms', 'sw_ms',
  'speed_ms', 'sspeed_ms', 'direction_deg', 'sdirection_deg', 'sectors', 'samples', 'rmse_ms', 'r2', 'chi2_dof', 'max_gap_deg', 'flag', 'reason',
];

export function profileTableCsv(rows: ProfileWindow[]): string {
  const out = [csvRow(PROFILE_COLUMNS)];
  for (const pw of rows)
    for (const p of pw.points)
      out.push(csvRow([
        p.instrumentId, pw.window.index, pw.window.kind ?? '', isoTime(pw.window.start_s), isoTime(pw.window.end_s), p.height_m, p.radius_m,
        p.u_ms, p.v_ms, p.w_ms, p.su_ms, p.sv_ms, p.sw_ms, p.speed_ms, p.sspeed_ms, p.direction_deg, p.sdirection_deg, p.sectors, p.samples,
        p.rmse_ms, p.r2, p.chi2dof, p.maxGap_deg, p.flag, p.reason,
      ]));
  return out.join('');
}
