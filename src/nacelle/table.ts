/**
 * Nacelle tables: per window (nacelle/<instrument>.csv) and per gate and beam pair (nacelle/<instrument>_gates.csv).
 * Columns, units, frames and precision are declared in records/tables/nacelle.ts (the data dictionary); the values
 * here follow that order. Empty = NaN.
 */
import { isoTime } from '../io/time.ts';
import { nacelleGatesTable, nacelleTable } from '../records/tables/nacelle.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import type { NacelleWindow } from './types.ts';

const L = { window: tableLayout(nacelleTable), gates: tableLayout(nacelleGatesTable) };

export function nacelleTableCsv(rows: NacelleWindow[]): string {
  const out = [headerLine(L.window)];
  for (const r of rows)
    out.push(rowLine(L.window, [
      r.instrumentId, r.window.index, isoTime(r.window.start_s), isoTime(r.window.end_s), r.distance_m, r.distance_D, r.hubSpeed_ms, r.shubSpeed_ms,
      r.speedHeight_m, r.hubSpeedShear_ms, r.shubSpeedShear_ms, r.alpha, r.salpha, r.direction_deg, r.sdirection_deg, r.nacelle_deg, r.yawMisalignment_deg,
      r.syawMisalignment_deg, r.induction_a, r.inductionRatio, r.freeStream_ms, r.sfreeStream_ms, r.samples, r.flag, r.reason,
    ]));
  return out.join('');
}

export function nacelleGateTableCsv(rows: NacelleWindow[]): string {
  const out = [headerLine(L.gates)];
  for (const r of rows)
    for (const g of r.gates) {
      const pairs = g.pairs.length ? g.pairs : [undefined];
      for (const p of pairs)
        out.push(rowLine(L.gates, [
          r.instrumentId, r.window.index, g.range_m, g.upstream_m, p?.pair ?? '', p?.height_m, p?.u_ms, p?.v_ms, p?.speed_ms, p?.sspeed_ms,
          p?.direction_deg, p?.sdirection_deg, p?.samples ?? 0, g.alpha, g.hubSpeed_ms, g.hubSpeedShear_ms, g.ok ? 1 : 0, g.note,
        ]));
    }
  return out.join('');
}
