/**
 * One turbine's power in one averaging window, from its series (one row every few seconds to a minute): the mean
 * power over the rows in [start, end) that report an available status and a power value, the share of such rows,
 * the mean nacelle wind speed and whether the window can be used.
 *
 * Availability filtering (common practice in power-performance work, e.g. IEC 61400-12-1 excludes periods of
 * unavailability [from memory]): a row counts when its status is one of `availableStatus` (rows without a status
 * column count) and its power is a number. A window is flagged, for that turbine, and left out of the comparison when:
 * - `no_rows`: the series has no row inside it;
 * - `gap`: two consecutive rows, or the window's start or end and the nearest row, are more than maxGap_s apart (the
 *   reason names the file and the lines around the gap);
 * - `negative_power`: a row reports negative power (an export of consumption or a wrong sign; named by file and line);
 * - `unavailable`: fewer than minAvailability of its rows count.
 */
import type { Series } from '../io/series.ts';
import { rowsInWindow } from '../io/series.ts';

export interface WindowPowerSettings {
  availableStatus: readonly number[];
  minAvailability: number;
  maxGap_s: number;
}

export type WindowPowerFlag = 'ok' | 'no_rows' | 'gap' | 'negative_power' | 'unavailable';

export interface WindowPower {
  /** Mean power of the counted rows, kW (NaN when none). */
  power_kw: number;
  /** Counted rows / rows in the window. */
  availability: number;
  rows: number;
  /** Mean nacelle wind speed of the counted rows, m/s (NaN without the column). */
  windSpeed_ms: number;
  flag: WindowPowerFlag;
  /** Why flagged, naming the file and line ('' when ok). */
  reason: string;
}

const lineOf = (s: Series, i: number) => (s.lines ? s.lines[i] : i + 2);

export function windowPower(s: Series, start_s: number, end_s: number, o: WindowPowerSettings): WindowPower {
  const [lo, hi] = rowsInWindow(s, start_s, end_s);
  const out: WindowPower = { power_kw: NaN, availability: 0, rows: hi - lo, windSpeed_ms: NaN, flag: 'ok', reason: '' };
  if (hi <= lo) return { ...out, flag: 'no_rows', reason: `${s.file}: no row between ${new Date(start_s * 1000).toISOString()} and ${new Date(end_s * 1000).toISOString()}` };
  const p = s.values.power_kw, st = s.values.status, ws = s.values.wind_speed_ms;
  let sum = 0, n = 0, wsum = 0, wn = 0;
  for (let i = lo; i < hi; i++) {
    const v = p[i];
    if (v < 0) return { ...out, flag: 'negative_power', reason: `${s.file}:${lineOf(s, i)}: negative power ${v} kW` };
    const okStatus = !st || !Number.isFinite(st[i]) ? true : o.availableStatus.includes(st[i]);
    if (!okStatus || !Number.isFinite(v)) continue;
    sum += v; n++;
    if (ws && Number.isFinite(ws[i])) { wsum += ws[i]; wn++; }
  }
  // Gaps: between rows, and at the window's edges.
  const T = s.time;
  if (T[lo] - start_s > o.maxGap_s) return { ...out, flag: 'gap', reason: `${s.file}:${lineOf(s, lo)}: first row ${(T[lo] - start_s).toFixed(0)} s after the window start (more than ${o.maxGap_s} s)` };
  if (end_s - T[hi - 1] > o.maxGap_s) return { ...out, flag: 'gap', reason: `${s.file}:${lineOf(s, hi - 1)}: last row ${(end_s - T[hi - 1]).toFixed(0)} s before the window end (more than ${o.maxGap_s} s)` };
  for (let i = lo + 1; i < hi; i++) {
    if (T[i] - T[i - 1] > o.maxGap_s) {
      return { ...out, flag: 'gap', reason: `${s.file}:${lineOf(s, i - 1)}-${lineOf(s, i)}: ${(T[i] - T[i - 1]).toFixed(0)} s between rows (more than ${o.maxGap_s} s)` };
    }
  }
  out.availability = n / (hi - lo);
  out.power_kw = n > 0 ? sum / n : NaN;
  out.windSpeed_ms = wn > 0 ? wsum / wn : NaN;
  if (out.availability < o.minAvailability) {
    out.flag = 'unavailable';
    out.reason = `${s.file}: ${n} of ${hi - lo} rows available with power (lines ${lineOf(s, lo)}-${lineOf(s, hi - 1)}), below ${o.minAvailability}`;
  }
  return out;
}
