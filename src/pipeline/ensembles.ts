/**
 * Condition bins and ensemble fields. Each finished window gets its condition values (campaign `conditions.bins`:
 * hub-height inflow speed, wind direction, turbulence intensity, yaw offset, or the window mean of a series
 * column) and so its bin: one interval [edge_i, edge_i+1) of every declared variable. The kept-sample statistics of
 * the windows of one bin are merged (sums of counts, radial velocities and their squares, beam vectors and
 * positions: retrieval/cellStats.ts), never averages of averages, and retrieved like one window: the ensemble
 * equals a single window over the pooled kept samples, with the robust filter applied per window.
 *
 * The ensemble's rotor frame: each window's beam vectors are in its own rotor frame, so the ensemble is a field
 * relative to the wind; its direction_deg is the circular mean of its windows' directions.
 */
import { stateTurbine } from '../campaign/turbines.ts';
import type { Campaign } from '../campaign/types.ts';
import { ConfigError, InputError } from '../errors.ts';
import { circularMeanDeg, readSeries, rowsInWindow, type Series } from '../io/series.ts';
import { emptyCellStats, mergeCellStats, type CellStats } from '../retrieval/cellStats.ts';
import { retrieveStats } from '../retrieval/retrieveWindow.ts';
import type { PlaneGrid, RetrievalSettings } from '../retrieval/settings.ts';
import type { FieldResult, WindowInfo } from '../retrieval/types.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import { pushTo } from '../math/group.ts';

export interface ConditionSeries {
  turbine?: Series;
  inflow?: Series;
  direction?: Series;
}

type BinSpec = NonNullable<Campaign['conditions']>['bins'][number];

/** The series the condition variables need, with the columns they name (errors name the file and the column). */
export function loadConditionSeries(c: Campaign): ConditionSeries {
  const out: ConditionSeries = {};
  const bins = c.conditions?.bins ?? [];
  const need: Record<'turbine' | 'inflow' | 'direction', Set<string>> = { turbine: new Set(), inflow: new Set(), direction: new Set() };
  for (const b of bins) {
    const m = /^(turbine|inflow|direction)\.(.+)$/.exec(b.variable);
    if (m) need[m[1] as keyof typeof need].add(m[2]);
    if (b.variable === 'turbulence_intensity') need.inflow.add('turbulence_intensity');
  }
  const ref = { turbine: stateTurbine(c).series, inflow: c.inflow.kind === 'series' ? c.inflow : undefined, direction: c.windDirection.kind === 'series' ? c.windDirection : undefined };
  for (const k of ['turbine', 'inflow', 'direction'] as const) {
    if (need[k].size === 0) continue;
    const r = ref[k];
    if (!r) throw new ConfigError(c.sourceFile, 'conditions.bins', `a bin needs the ${k} series, which the campaign does not have`);
    // A bin's column may have holes: the window mean skips them (seriesMean). A column the file lacks is named with
    // the campaign key that asked for it, beside the file and its header.
    const keyOf = (name: string) => {
      const i = bins.findIndex((b) => b.variable === `${k}.${name}` || (k === 'inflow' && name === 'turbulence_intensity' && b.variable === name));
      return i < 0 ? undefined : `conditions.bins[${i}].variable "${bins[i].variable}"`;
    };
    out[k] = readSeries(r.file, r.columns, [...need[k]], [], { holes: [...need[k]], keyOf });
  }
  return out;
}

export interface BinInfo {
  index: number;
  label: string;
  /** Windows (run ordinals) in the bin. */
  windows: number[];
}

interface BinState {
  stats: CellStats;
  members: [number, number][];
  /** The members' state levels (segment windows; NaN for other kinds). */
  levels: number[];
  /** The members' hub-height inflow speeds, m/s (NaN when unknown). */
  speeds: number[];
  sin: number;
  cos: number;
}

function seriesMean(s: Series, column: string, start: number, end: number): number {
  const v = s.values[column];
  if (!v) throw new InputError(s.file, 1, `no column "${column}"`);
  const [a, b] = rowsInWindow(s, start, end);
  if (column.endsWith('_deg')) return circularMeanDeg(v, a, b);
  let sum = 0, n = 0;
  for (let i = a; i < b; i++) if (Number.isFinite(v[i])) { sum += v[i]; n++; }
  return n ? sum / n : NaN;
}

function medianOf(values: number[]): number {
  const f = values.filter(Number.isFinite).sort((a, b) => a - b);
  if (f.length === 0) return NaN;
  const m = f.length >> 1;
  return f.length % 2 ? f[m] : (f[m - 1] + f[m]) / 2;
}

const fmt = (x: number) => String(Number(x.toPrecision(6)));

export class Ensembles {
  readonly specs: BinSpec[];
  private readonly radix: number[];
  readonly binCount: number;
  private readonly state = new Map<number, BinState>();
  private readonly windowsOf = new Map<number, number[]>();
  /** Windows whose values fell outside every bin (or were unknown), with the values. */
  readonly outside: { window: number; values: Record<string, number> }[] = [];

  constructor(
    private readonly c: Campaign,
    private readonly series: ConditionSeries,
    private readonly keyCount: number,
    private readonly instrumentCount: number,
  ) {
    this.specs = c.conditions?.bins ?? [];
    this.radix = this.specs.map((b) => b.edges.length - 1);
    this.binCount = this.radix.reduce((a, b) => a * b, 1);
  }

  get enabled(): boolean {
    return this.specs.length > 0;
  }

  /** The condition values of one window (in the order of the campaign's bins). */
  values(w: { start_s: number; end_s: number; direction_deg: number }, rows: WakePlaneWindow[]): number[] {
    return this.specs.map((b) => {
      switch (b.variable) {
        case 'hub_speed_ms': return medianOf(rows.map((r) => r.inflow.hubSpeed_ms));
        case 'wind_direction_deg': return w.direction_deg;
        case 'yaw_offset_deg': return medianOf(rows.map((r) => r.yawOffset_deg));
        case 'turbulence_intensity': return seriesMean(this.series.inflow!, 'turbulence_intensity', w.start_s, w.end_s);
        default: {
          const [src, col] = [b.variable.slice(0, b.variable.indexOf('.')), b.variable.slice(b.variable.indexOf('.') + 1)];
          return seriesMean(this.series[src as keyof ConditionSeries]!, col, w.start_s, w.end_s);
        }
      }
    });
  }

  /**
   * Bin of a set of values, or -1 when any value is outside its edges or unknown. Angles (variables ending in _deg)
   * count modulo 360: a value is taken as the one of its turns in [first edge, first edge + 360), so a wind-direction
   * sector may cross north (edges [-10, 0, 10] hold 359 and 1 degrees); the campaign keeps such edges within a turn.
   */
  binOf(values: number[]): number {
    let bin = 0;
    for (let k = 0; k < this.specs.length; k++) {
      const e = this.specs[k].edges;
      let v = values[k];
      if (this.specs[k].variable.endsWith('_deg')) v = e[0] + ((((v - e[0]) % 360) + 360) % 360);
      let j = -1;
      for (let i = 0; i + 1 < e.length; i++) if (v >= e[i] && v < e[i + 1]) { j = i; break; }
      if (j < 0) return -1;
      bin = bin * this.radix[k] + j;
    }
    return bin;
  }

  label(bin: number): string {
    const parts: string[] = [];
    for (let k = this.specs.length - 1; k >= 0; k--) {
      const j = bin % this.radix[k];
      bin = (bin - j) / this.radix[k];
      const e = this.specs[k].edges;
      parts.unshift(`${this.specs[k].variable} in [${fmt(e[j])}, ${fmt(e[j + 1])})`);
    }
    return parts.join('; ');
  }

  /** Add a finished window's kept-sample statistics to its bin. */
  add(window: number, w: { start_s: number; end_s: number; direction_deg: number; def?: { level: number } }, stats: CellStats, values: number[], hubSpeed_ms = NaN): number {
    const bin = this.binOf(values);
    if (bin < 0) {
      this.outside.push({ window, values: Object.fromEntries(this.specs.map((b, k) => [b.variable, values[k]])) });
      return -1;
    }
    let st = this.state.get(bin);
    if (!st) {
      st = { stats: emptyCellStats(this.keyCount, this.instrumentCount), members: [], levels: [], speeds: [], sin: 0, cos: 0 };
      this.state.set(bin, st);
    }
    mergeCellStats(st.stats, stats);
    st.members.push([w.start_s, w.end_s]);
    st.levels.push(w.def?.level ?? NaN);
    st.speeds.push(hubSpeed_ms);
    const D = (w.direction_deg * Math.PI) / 180;
    if (Number.isFinite(D)) { st.sin += Math.sin(D); st.cos += Math.cos(D); }
    pushTo(this.windowsOf, bin, window);
    return bin;
  }

  /**
   * Bins whose windows' hub speeds spread by more than 10 % (max / min - 1; common practice, not derived): pooling
   * merges the windows' samples, so a cell's u mixes flows of different speed in proportion to its samples from each
   * window, which distorts the ensemble's wake (its fit, centre and deficits). One warning per such bin.
   */
  speedWarnings(): string[] {
    const out: string[] = [];
    for (const [bin, st] of [...this.state].sort((a, b) => a[0] - b[0])) {
      const v = st.speeds.filter((x) => Number.isFinite(x) && x > 0);
      if (v.length < 2) continue;
      const lo = Math.min(...v), hi = Math.max(...v);
      if (hi / lo - 1 <= 0.1) continue;
      out.push(`condition bin ${bin} (${this.label(bin)}) pools windows whose hub speeds range from ${lo.toFixed(1)} to ${hi.toFixed(1)} m/s: `
        + `a cell's u mixes them in proportion to its samples from each window, which distorts the ensemble's wake (fit, centre, deficits); `
        + `bin by hub_speed_ms as well, or use narrower bins`);
    }
    return out;
  }

  /** Every bin with its windows (empty bins included, so none is dropped silently). */
  summary(): BinInfo[] {
    return Array.from({ length: this.binCount }, (_, i) => ({ index: i, label: this.label(i), windows: this.windowsOf.get(i) ?? [] }));
  }

  /**
   * Retrieve each bin with at least conditions.minWindows windows. Throws a ConfigError when no window fell in any
   * bin (the conditions select nothing).
   */
  retrieve(planes: PlaneGrid[], settings: RetrievalSettings): { bin: BinInfo; fields: FieldResult[] }[] {
    if (this.state.size === 0) {
      const seen = this.outside.slice(0, 3).map((o) => JSON.stringify(o.values, (_k, v) => (typeof v === 'number' ? Number(v.toPrecision(4)) : v))).join(', ');
      throw new ConfigError(this.c.sourceFile, 'conditions.bins', `no window falls in any condition bin${seen ? ` (window values: ${seen})` : ''}`);
    }
    const minWindows = this.c.conditions?.minWindows ?? 1;
    const out: { bin: BinInfo; fields: FieldResult[] }[] = [];
    for (const bin of this.summary()) {
      const st = this.state.get(bin.index);
      if (!st || bin.windows.length < minWindows) continue;
      const members = [...st.members].sort((a, b) => a[0] - b[0]);
      const dir = ((Math.atan2(st.sin, st.cos) * 180) / Math.PI + 360) % 360;
      // The state level, when every member window has the same one (a bin of segment windows of one level).
      const level = st.levels.every((l) => l === st.levels[0]) && Number.isFinite(st.levels[0]) ? st.levels[0] : undefined;
      const info: WindowInfo = {
        index: bin.index, start_s: members[0][0], end_s: Math.max(...members.map((m) => m[1])), kind: 'ensemble', label: bin.label, members,
        ...(level !== undefined ? { level } : {}),
      };
      out.push({ bin, fields: retrieveStats(st.stats, planes, info, dir, settings) });
    }
    return out;
  }
}
