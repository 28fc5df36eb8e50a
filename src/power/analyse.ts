/**
 * The power question of wake steering for a campaign: for each downstream turbine and each yaw-offset level, the gain
 * of its energy ratio to a reference turbine between windows with and without yaw offset (gain.ts), per wind-direction
 * and wind-speed bin and combined, with bootstrap intervals, the windows behind each number and the measured wake
 * deflection at the turbine; with two turbines or more compared, the same for their summed power (the group's net
 * gain: the yawed turbines' losses against the downstream ones' gains). Pure: the stage (pipeline/powerStage.ts) loads the series and hands the windows in.
 *
 * Window state: a segment window's state level (windows/segments.ts); any other window's mean yaw offset of the
 * turbine whose series gives the state (campaign/turbines.ts stateTurbine). Within baselineTolerance_deg of 0 it is a
 * baseline window; otherwise a steered window of its level (other windows: their mean yaw offset rounded to the
 * nearest multiple of levelStep_deg, the campaign's wake.yawBin_deg). A window that is not one state is neither
 * ('unknown', left out): its yaw offset changes inside it (the mean yaw offsets of its thirds differ by more than
 * levelStep_deg / 2: a yaw step inside it), or its mean lies outside the baseline tolerance but rounds to level 0.
 * Wind direction of a window: the campaign's direction source (windows/direction.ts). Wind speed: the reference
 * turbine's nacelle wind speed (wind_speed_ms) when its series has one, else the window's measured hub-height inflow
 * speed (the wake analysis); windows without either are left out.
 */
import { rowsInWindow, type Series } from '../io/series.ts';
import { rowYawOffset } from '../windows/segments.ts';
import { powerGain, type GainEdges, type GainResult, type GainWindow } from './gain.ts';
import { windowPower, type WindowPower, type WindowPowerSettings } from './windowPower.ts';
import type { BootstrapSettings } from './bootstrap.ts';

export interface PowerWindow {
  /** Window ordinal (the plan's id or the run's ordinal). */
  id: number;
  start_s: number;
  end_s: number;
  direction_deg: number;
  /** Segment level (degrees) or NaN. */
  level_deg: number;
  /** Mean yaw offset of the state turbine in the window (degrees) or NaN. */
  yawOffset_deg: number;
  /** Mean yaw offsets of the state turbine in the window's first, middle and last thirds (degrees, NaN without rows). */
  yawThirds_deg?: readonly number[];
  /** Measured hub-height inflow speed of the window, m/s (NaN when none). */
  inflowSpeed_ms: number;
  /** Measured wake centre at each turbine (by id), rotor frame of the turbine waking it, metres. */
  centreAt: Record<string, number>;
}

export interface PowerTurbine {
  id: string;
  series: Series;
}

export interface PowerSettings extends WindowPowerSettings, BootstrapSettings {
  baselineTolerance_deg: number;
  /** Other than segment windows: steered windows are grouped by their mean yaw offset rounded to this, degrees. */
  levelStep_deg: number;
  /** Windows each state needs in a bin for its gain. @default 2 */
  minWindowsPerState?: number;
  /** Bin edges; computed from the windows when absent (10 degrees, 2 m/s). */
  directionEdges_deg?: number[];
  speedEdges_ms?: number[];
}

export interface PowerGainResult {
  turbine: string;
  reference: string;
  /** Yaw-offset level of the steered windows, degrees (NaN: every steered window of non-segment plans). */
  level_deg: number;
  result: GainResult;
}

export interface PowerAnalysis {
  reference: string;
  edges: GainEdges;
  windows: { window: PowerWindow; state: 'baseline' | 'steered' | 'unknown'; level_deg: number; speed_ms: number; perTurbine: Record<string, WindowPower> }[];
  gains: PowerGainResult[];
  assumptions: string[];
  notes: string[];
}

function autoEdges(values: number[], width: number, circular: boolean): number[] {
  const v = values.filter(Number.isFinite);
  if (!v.length) return [0, width];
  let lo = Math.min(...v), hi = Math.max(...v);
  if (circular && hi - lo > 180) { const w = v.map((x) => (x > 180 ? x - 360 : x)); lo = Math.min(...w); hi = Math.max(...w); }
  const a = Math.floor(lo / width) * width, b = (Math.floor(hi / width) + 1) * width;
  const out: number[] = [];
  for (let e = a; e <= b + 1e-9; e += width) out.push(e);
  return out;
}

/**
 * Mean yaw offset (degrees) of a turbine series' rows in [start, end): each row's nacelle direction minus the wind
 * direction at its time (its own wind_direction_deg, else `directionAt(t)`), wrapped to [-180, 180); NaN without rows.
 */
export function meanRowYawOffset(s: Series, start: number, end: number, directionAt: (t: number) => number): number {
  const [lo, hi] = rowsInWindow(s, start, end);
  if (!s.values.yaw_deg) return NaN;
  let sum = 0, n = 0;
  for (let i = lo; i < hi; i++) {
    const g = rowYawOffset(s, i, directionAt);
    if (Number.isFinite(g)) { sum += g; n++; }
  }
  return n ? sum / n : NaN;
}

/** True when a window's yaw offset changes inside it: its thirds' mean yaw offsets differ by more than half a level step. */
function mixedWindow(w: PowerWindow, s: PowerSettings): boolean {
  const t = (w.yawThirds_deg ?? []).filter(Number.isFinite);
  return t.length >= 2 && Math.max(...t) - Math.min(...t) > s.levelStep_deg / 2;
}

/** Separator of the turbine ids of a group row (power_gain.csv `turbine`). */
export const GROUP_JOIN = '+';

type StateRow = { window: PowerWindow; state: 'baseline' | 'steered' | 'unknown'; level_deg: number; speed_ms: number; perTurbine: Record<string, WindowPower> };

/**
 * The gain at level L of one turbine, or of several together: their summed window-mean power over the reference's,
 * in the windows where every one of them and the reference were available. For a group the yawed turbines' own
 * losses count against the downstream turbines' gains, so it is the net answer for the group (the farm's, when the
 * group is every turbine but the reference); named by the ids joined with GROUP_JOIN, without a deflection. Same
 * bins, weights and bootstrap either way (gain.ts).
 */
function gainOf(rows: StateRow[], members: string[], reference: string, L: number, edges: GainEdges, s: PowerSettings): PowerGainResult {
  const list: GainWindow[] = [];
  for (const r of rows) {
    if (r.state === 'unknown') continue;
    if (r.state === 'steered' && !(r.level_deg === L || (Number.isNaN(L) && Number.isNaN(r.level_deg)))) continue;
    const pr = r.perTurbine[reference];
    if (pr.flag !== 'ok' || members.some((m) => r.perTurbine[m].flag !== 'ok')) continue;
    const power = members.reduce((acc, m) => acc + r.perTurbine[m].power_kw, 0);
    const centre = members.length === 1 ? r.window.centreAt[members[0]] ?? NaN : NaN;
    list.push({ window: r.window.id, direction_deg: r.window.direction_deg, speed_ms: r.speed_ms, steered: r.state === 'steered', power_kw: power, reference_kw: pr.power_kw, centre_m: centre });
  }
  return { turbine: members.join(GROUP_JOIN), reference, level_deg: L, result: powerGain(list, edges, s, s.minWindowsPerState ?? 2) };
}

export function analysePower(windows: PowerWindow[], turbines: PowerTurbine[], reference: string, downstream: string[], s: PowerSettings): PowerAnalysis {
  const ref = turbines.find((t) => t.id === reference)!;
  let mixed = 0;
  const rows: StateRow[] = windows.map((w) => {
    const perTurbine: Record<string, WindowPower> = {};
    for (const t of turbines) perTurbine[t.id] = windowPower(t.series, w.start_s, w.end_s, s);
    const lvl = Number.isFinite(w.level_deg) ? w.level_deg : w.yawOffset_deg;
    let state: 'baseline' | 'steered' | 'unknown' = !Number.isFinite(lvl) ? 'unknown' : Math.abs(lvl) <= s.baselineTolerance_deg ? 'baseline' : 'steered';
    if (!Number.isFinite(w.level_deg) && state !== 'unknown' && mixedWindow(w, s)) { state = 'unknown'; mixed++; }
    const nacelle = perTurbine[ref.id].windSpeed_ms;
    const speed = Number.isFinite(nacelle) ? nacelle : w.inflowSpeed_ms;
    // Segment windows carry their level; other windows take their mean yaw offset to the nearest multiple of levelStep_deg.
    let level = Number.isFinite(w.level_deg) ? w.level_deg : state === 'steered' ? Math.round(lvl / s.levelStep_deg) * s.levelStep_deg : NaN;
    // Outside the baseline tolerance yet nearest level 0: neither state (mostly a transition's tail).
    if (state === 'steered' && level === 0) { state = 'unknown'; level = NaN; mixed++; }
    return { window: w, state, level_deg: level, speed_ms: speed, perTurbine };
  });
  const edges: GainEdges = {
    direction_deg: s.directionEdges_deg ?? autoEdges(rows.map((r) => r.window.direction_deg), 10, true),
    speed_ms: s.speedEdges_ms ?? autoEdges(rows.map((r) => r.speed_ms), 2, false),
  };
  const levels = [...new Set(rows.filter((r) => r.state === 'steered').map((r) => r.level_deg))].sort((a, b) => a - b);
  const gains: PowerGainResult[] = [];
  for (const d of downstream) for (const L of levels) gains.push(gainOf(rows, [d], ref.id, L, edges, s));
  if (downstream.length >= 2) for (const L of levels) gains.push(gainOf(rows, downstream, ref.id, L, edges, s));
  const flagged = rows.reduce((n, r) => n + Object.values(r.perTurbine).filter((p) => p.flag !== 'ok').length, 0);
  const assumptions = [
    'power gain: the flow is stationary within each wind-direction and wind-speed bin (windows with and without yaw offset differ only by the yaw offset)',
    reference === '' ? '' : `power gain: the reference turbine ${ref.id} is unaffected by the yaw offsets${downstream.length && levels.length ? ' (if it is itself yawed, its own loss under yaw raises every ratio: read the gains as gains relative to it)' : ''}`,
    `power gain: only windows in which both turbines were available (status ${s.availableStatus.join('/')}, at least ${(100 * s.minAvailability).toFixed(0)} % of the rows with power, no gap over ${s.maxGap_s} s, no negative power) enter`,
  ].filter(Boolean);
  const notes = [
    `bootstrap: ${s.replicates} replicates, percentile intervals at ${(100 * s.confidence).toFixed(0)} %, seed ${s.seed} (Efron & Tibshirani 1993)`,
    `${flagged} turbine-windows flagged and left out (power/window_power.csv names file and line)`,
  ];
  if (mixed) notes.push(`${mixed} windows not in one yaw state (a yaw step inside the window, or a mean offset between baseline and the first level) left out`);
  if (!levels.length) notes.push('no window with a yaw offset: no gain to compute');
  if (!rows.some((r) => r.state === 'baseline')) notes.push('no window without yaw offset: no baseline');
  return { reference: ref.id, edges, windows: rows, gains, assumptions, notes };
}
