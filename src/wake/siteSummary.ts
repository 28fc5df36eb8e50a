/**
 * Campaign-level summaries with several turbines: the rows of each turbine (wake/siteWakes.ts) summarised in that
 * turbine's rotor frame with its own diameter, hub height and thrust (analyse.ts summariseWake), then put together:
 * the first turbine's model fits, every turbine's downstream points and steering bins (their plane ids name the
 * turbine: plane@turbine), all rows. `turbineWakesCsv` lists every turbine's wake per plane and window with where its
 * inflow came from and the measured centre just upstream of each turbine it wakes.
 */
import type { Campaign } from '../campaign/types.ts';
import { turbineWakesTable } from '../records/tables/index.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import { isoTime } from '../io/time.ts';
import { summariseWake, type WakeInputs } from './analyse.ts';
import type { WakeAnalysis, WakePlaneWindow } from './types.ts';

export function summariseSiteWake(rows: WakePlaneWindow[], c: Campaign, inputs: WakeInputs): WakeAnalysis {
  const per = c.turbines
    .map((t) => ({ t, rows: rows.filter((r) => r.turbineId === t.id) }))
    .filter((g) => g.rows.length > 0)
    .map((g) => ({ t: g.t, a: summariseWake(g.rows, { ...c, turbine: g.t }, inputs) }));
  if (per.length === 0) return summariseWake([], c, inputs);
  const first = per[0].a;
  return {
    ...first,
    rows: [...rows].sort((a, b) => a.planeIndex - b.planeIndex || a.window.start_s - b.window.start_s || (a.turbineId ?? '').localeCompare(b.turbineId ?? '')),
    downstream: { ...first.downstream, points: per.flatMap((p) => p.a.downstream.points) },
    steering: { ...first.steering, bins: per.flatMap((p) => p.a.steering.bins), curves: per.flatMap((p) => p.a.steering.curves) },
    notes: [
      `several turbines: wake rows per turbine in its own rotor frame; model fits for ${per[0].t.id}`,
      ...per.flatMap((p) => p.a.notes.map((n) => `${p.t.id}: ${n}`)),
    ],
  };
}

/** wake/turbine_wakes.csv (columns declared in records/tables/sites.ts): one row per turbine row and turbine it wakes. */
export function turbineWakesCsv(rows: readonly WakePlaneWindow[]): string {
  const L = tableLayout(turbineWakesTable);
  let s = headerLine(L);
  for (const r of rows) {
    if (!r.turbineId) continue;
    const w = r.window;
    const base = [r.planeId, r.turbineId, w.index, isoTime(w.start_s), isoTime(w.end_s), w.kind ?? '', w.label ?? '', w.level, r.yawOffset_deg, (r.wakedBy ?? []).join(';'), r.inflowFrom ?? '', r.inflow.hubSpeed_ms, r.flag, r.reason];
    const at = r.centreAtTurbines ?? [];
    if (at.length === 0) s += rowLine(L, [...base, '', NaN, NaN, NaN]);
    for (const a of at) s += rowLine(L, [...base, a.turbineId, a.x_m, a.yc_m, a.syc_m]);
  }
  return s;
}
