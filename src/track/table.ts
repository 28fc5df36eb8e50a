/**
 * Tracking tables: per scan (or window) and downstream bin (tracks/<instrument>.csv) and the deficit profiles of the
 * window-level rows (tracks/<instrument>_profiles.csv). Columns, units, frames and precision are declared in
 * records/tables/track.ts (the data dictionary); the values here follow that order. Empty = NaN.
 */
import { isoTime } from '../io/time.ts';
import { trackerProfilesTable, trackerTable } from '../records/tables/track.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import type { TrackPoint } from './types.ts';

const L = { rows: tableLayout(trackerTable), profiles: tableLayout(trackerProfilesTable) };

export function trackTableCsv(rows: TrackPoint[]): string {
  const out = [headerLine(L.rows)];
  for (const r of rows)
    out.push(rowLine(L.rows, [
      r.instrumentId, r.window.index, isoTime(r.window.start_s), isoTime(r.window.end_s), r.scan, r.x_m, r.x_D, r.axis, r.centre_m, r.scentre_m,
      r.width_m, r.swidth_m, r.amplitude, r.centroid_m, r.r2, r.bins, r.samples, r.freeStream_ms, r.freeStreamSource, r.directionBiasCentre_m,
      r.directionBiasWidth_m, r.flag, r.reason,
    ]));
  return out.join('');
}

export function trackProfilesCsv(rows: TrackPoint[]): string {
  const out = [headerLine(L.profiles)];
  for (const r of rows) {
    if (r.scan !== -1) continue;
    r.profile.c_m.forEach((c, i) => out.push(rowLine(L.profiles, [r.instrumentId, r.window.index, r.x_m, r.axis, c, r.profile.deficit[i], r.profile.sdeficit[i]])));
  }
  return out.join('');
}
