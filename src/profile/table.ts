/**
 * The profile table: one row per window (or condition bin) and height. Columns, units, frames and precision are
 * declared in records/tables/profile.ts (the data dictionary); the values here follow that order. Empty = NaN.
 */
import { isoTime } from '../io/time.ts';
import { profilerTable } from '../records/tables/profile.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import type { ProfileWindow } from './types.ts';

const L = tableLayout(profilerTable);

export function profileTableCsv(rows: ProfileWindow[]): string {
  const out = [headerLine(L)];
  for (const pw of rows)
    for (const p of pw.points)
      out.push(rowLine(L, [
        p.instrumentId, pw.window.index, pw.window.kind ?? '', isoTime(pw.window.start_s), isoTime(pw.window.end_s), p.height_m, p.sampleHeight_m, p.radius_m,
        p.u_ms, p.v_ms, p.w_ms, p.su_ms, p.sv_ms, p.sw_ms, p.speed_ms, p.sspeed_ms, p.direction_deg, p.sdirection_deg, p.sectors, p.samples,
        p.rmse_ms, p.r2, p.chi2dof, p.maxGap_deg, p.flag, p.reason,
      ]));
  return out.join('');
}
