/**
 * Tables of the power-gain analysis (power/ in the run folder):
 *
 * power/power_gain.csv — one row per downstream turbine, yaw-offset level and bin, then one combined row (bins
 *   "all") per turbine and level: turbine, reference, level_deg, direction_lo_deg, direction_hi_deg, speed_lo_ms,
 *   speed_hi_ms, windows_baseline, windows_steered, ratio_baseline, ratio_steered (energy ratios: sum of the turbine's
 *   window-mean power over the reference's), gain (ratio_steered / ratio_baseline - 1; combined: the
 *   distribution-weighted gain), gain_lo, gain_hi (bootstrap percentile interval at `confidence`), gain_se (bootstrap
 *   standard error), weight (the bin's share of the windows in the combination), deflection_m (mean measured lateral
 *   wake centre at the turbine, steered minus baseline windows, rotor frame of the turbine waking it, + = left looking
 *   downstream), deflection_windows_baseline, deflection_windows_steered, confidence, replicates.
 *
 * power/window_power.csv — one row per window and turbine: window, start, end, state (baseline|steered|unknown),
 *   level_deg, direction_deg, speed_ms (binning speed), turbine, power_kw, availability, wind_speed_ms, rows, flag
 *   (ok|no_rows|gap|negative_power|unavailable), reason (file and line).
 */
import { powerGainTable, windowPowerTable } from '../records/tables/index.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import { isoTime } from '../io/time.ts';
import type { ReportTable } from '../render/report.ts';
import type { PowerAnalysis } from './analyse.ts';

export function powerGainCsv(a: PowerAnalysis): string {
  const L = tableLayout(powerGainTable);
  let s = headerLine(L);
  for (const g of a.gains) {
    const r = g.result;
    for (const b of r.bins) {
      s += rowLine(L, [g.turbine, g.reference, g.level_deg, b.directionLo, b.directionHi, b.speedLo, b.speedHi, b.nBaseline, b.nSteered, b.ratioBaseline, b.ratioSteered,
        b.gain, b.gainLo, b.gainHi, b.gainSe, b.weight, b.deflection_m, b.nDeflectionBaseline, b.nDeflectionSteered, r.confidence, r.replicates]);
    }
    const c = r.combined;
    s += rowLine(L, [g.turbine, g.reference, g.level_deg, 'all', 'all', 'all', 'all', c.nBaseline, c.nSteered, NaN, NaN, c.gain, c.lo, c.hi, c.se, 1, c.deflection_m, NaN, NaN, r.confidence, r.replicates]);
  }
  return s;
}

export function windowPowerCsv(a: PowerAnalysis): string {
  const L = tableLayout(windowPowerTable);
  let s = headerLine(L);
  for (const w of a.windows) {
    for (const [id, p] of Object.entries(w.perTurbine)) {
      s += rowLine(L, [w.window.id, isoTime(w.window.start_s), isoTime(w.window.end_s), w.state, w.level_deg, w.window.direction_deg, w.speed_ms, id, p.power_kw, p.availability, p.windSpeed_ms, p.rows, p.flag, p.reason]);
    }
  }
  return s;
}

const pct = (x: number) => (Number.isFinite(x) ? `${(100 * x).toFixed(1)} %` : '');

/** Report table: per turbine and level the bins holding both states and the combined gain with its interval. */
export function powerReportTables(a: PowerAnalysis, link = 'power/power_gain.csv'): ReportTable[] {
  if (!a.gains.length) return [];
  const rows: ReportTable['rows'] = [];
  for (const g of a.gains) {
    for (const b of g.result.bins) {
      if (!(b.nBaseline > 0 && b.nSteered > 0)) continue;
      const interval = Number.isFinite(b.gain) ? `${pct(b.gainLo)} to ${pct(b.gainHi)}` : 'too few windows in a state: not in the combination';
      rows.push([g.turbine, g.level_deg, `${b.directionLo} to ${b.directionHi}`, `${b.speedLo} to ${b.speedHi}`, b.nBaseline, b.nSteered, pct(b.gain), interval, b.deflection_m]);
    }
    const c = g.result.combined;
    rows.push([g.turbine, g.level_deg, 'all (combined)', 'all', c.nBaseline, c.nSteered, pct(c.gain), `${pct(c.lo)} to ${pct(c.hi)}`, c.deflection_m]);
  }
  const conf = a.gains[0].result.confidence;
  return [{
    title: `Power gain of wake steering (reference ${a.reference})`,
    columns: ['turbine', 'yaw offset (deg)', 'wind direction (deg)', 'wind speed (m/s)', 'windows without', 'windows with', 'gain', `${(100 * conf).toFixed(0)} % interval`, 'deflection at turbine (m)'],
    rows,
    link,
    note: [...a.assumptions.map((x) => x.replace(/^power gain: /, '')), ...a.notes].join('; ') + '.',
  }];
}
