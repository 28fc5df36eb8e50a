/**
 * Finishing of the sibling geometries for each window: the robust filter on each target's accumulator (the same
 * rule as the planes), then the profile solver (VAD/DBS), the nacelle reconstruction and the wake tracker. Results
 * are kept as small rows (never the accumulators) for the tables and images at the end of the run. A profiler named
 * as the campaign's inflow reference hands its profile of each window (and of each condition bin, from merged
 * statistics) to the wake analysis of the planes (`profileInflow`), so the windows are finished here before their
 * plane fields go to the stages.
 */
import type { Campaign } from '../campaign/types.ts';
import { thrustCoefficientAt } from '../campaign/thrust.ts';
import { circularMeanDeg, rowsInWindow, type Series } from '../io/series.ts';
import { inflowFromProfile } from '../profile/inflow.ts';
import { solveProfile } from '../profile/solve.ts';
import type { ProfileWindow } from '../profile/types.ts';
import { interpolatedMeanDeg } from '../geometry/nacelle.ts';
import { solveNacelle } from '../nacelle/solve.ts';
import type { NacelleWindow } from '../nacelle/types.ts';
import { solveTrack } from '../track/solve.ts';
import type { TrackPoint } from '../track/types.ts';
import { mergeCellStats, type CellStats } from '../retrieval/cellStats.ts';
import { robustFilter } from '../retrieval/robustFilter.ts';
import type { RobustSettings } from '../retrieval/settings.ts';
import type { FieldResult } from '../retrieval/types.ts';
import { evalLaw } from '../wake/profileLaw.ts';
import { inflowFixed, inflowFromSeries } from '../wake/inflow.ts';
import type { InflowProfile } from '../wake/types.ts';
import type { FinishedWindow } from './finishWindows.ts';
import type { RunTargets } from './geometryTargets.ts';

/** What the sibling geometries produced in a run (kept in StageContext.shared.geometry). */
export interface GeometryResults {
  profiles: ProfileWindow[];
  /** Condition-bin profiles (from merged statistics). */
  profileBins: (ProfileWindow & { bin: number })[];
  nacelle: NacelleWindow[];
  tracks: TrackPoint[];
  /** Run-level notes (assumptions, warnings about the input frames). */
  notes: string[];
}

/**
 * A gap of the series giving a nacelle instrument its frame (the turbine series, or its inclinometer series:
 * `what`) overlapping [start, end), described; '' when none.
 */
export function seriesGapIn(s: Series | undefined, start: number, end: number, maxGap_s: number, what: 'turbine' | 'inclinometer' = 'turbine'): string {
  if (!s || s.time.length === 0) return `no ${what} series`;
  const T = s.time;
  const gaps: string[] = [];
  if (T[0] - maxGap_s > start) gaps.push(`series starts ${(T[0] - start).toFixed(0)} s after the window start`);
  if (T[T.length - 1] + maxGap_s < end) gaps.push(`series ends ${(end - T[T.length - 1]).toFixed(0)} s before the window end`);
  const [lo, hi] = rowsInWindow(s, start, end);
  for (let i = Math.max(1, lo); i <= Math.min(T.length - 1, hi); i++) {
    if (T[i] - T[i - 1] > maxGap_s && T[i] > start && T[i - 1] < end) gaps.push(`no ${what}-series row for ${(T[i] - T[i - 1]).toFixed(0)} s`);
  }
  const missing = what === 'turbine' ? 'nacelle direction missing' : 'inclinometer tilt and roll missing';
  return gaps.length ? `${missing}: ${gaps.join(', ')} (samples there rejected as no_nacelle_direction)` : '';
}

export class GeometryFinisher {
  readonly results: GeometryResults = { profiles: [], profileBins: [], nacelle: [], tracks: [], notes: [] };
  private readonly inflowOf = new Map<string, InflowProfile>();
  private lastProfileStats: CellStats | undefined;
  private readonly binStats = new Map<number, { stats: CellStats; members: [number, number][]; sin: number; cos: number }>();
  private readonly refLayout;

  constructor(
    private readonly c: Campaign,
    private readonly t: RunTargets,
    private readonly robust: RobustSettings,
    private readonly inflowSeries?: Series,
  ) {
    const ref = c.inflow.kind === 'profile' ? c.inflow.instrument : undefined;
    this.refLayout = ref ? t.profile?.layouts.find((l) => l.instrument.id === ref) : undefined;
    if (ref) this.results.notes.push(`inflow reference: the profile of ${ref}, projected on each window's wind direction; its uncertainty carried into the deficit`);
    if (t.nacelle) this.results.notes.push('nacelle instruments: w = 0 assumed in each beam pair; homogeneous flow across the beam separation; nacelle direction from the turbine series taken as exact');
    if (t.track) this.results.notes.push('wake tracking: the wind taken to blow along the window wind direction (horizontal); bias of that assumption estimated per downstream distance');
  }

  /** The profile inflow of a plane field's window or condition bin (wake analysis). */
  profileInflow = (f: FieldResult): InflowProfile | undefined =>
    this.inflowOf.get(`${f.window.kind === 'ensemble' ? 'bin' : 'w'}${f.window.index}`);

  /** Filters and solves one finished window; returns the robust-filter outliers per instrument. */
  window(w: FinishedWindow, ordinal: number): Float64Array {
    const I = this.c.instruments.length;
    const outliers = new Float64Array(I);
    const info = { index: ordinal, start_s: w.start_s, end_s: w.end_s, kind: w.def.kind, label: w.def.label };
    const filtered = (k: number): CellStats => {
      const r = robustFilter(w.accs[k], this.robust);
      for (let i = 0; i < I; i++) outliers[i] += r.outliers[i];
      return r.stats;
    };
    let windowInflow: InflowProfile | undefined;
    if (this.t.profile) {
      const st = filtered(this.t.profileIndex);
      this.lastProfileStats = st;
      for (const l of this.t.profile.layouts) {
        const points = solveProfile(st, l);
        this.results.profiles.push({ instrumentId: l.instrument.id, window: info, points });
        if (l === this.refLayout) {
          windowInflow = inflowFromProfile(points, w.direction_deg, this.c.turbine.hubHeight_m, (this.c.inflow as { law: 'power' | 'log' }).law, l.instrument.id);
          this.inflowOf.set(`w${ordinal}`, windowInflow);
        }
      }
    }
    if (this.t.nacelle) {
      const st = filtered(this.t.nacelleIndex);
      for (const l of this.t.nacelle.layouts) {
        const maxGap = l.instrument.nacelle!.maxGap_s;
        const ts = this.t.turbineSeries;
        const [lo, hi] = ts ? rowsInWindow(ts, w.start_s, w.end_s) : [0, 0];
        // The mean of the series rows in the window; a window with no row (a series sparser than the windows) takes
        // the series interpolated over it, as its samples were turned.
        let nacelle = ts ? circularMeanDeg(ts.values.yaw_deg, lo, hi) : NaN;
        if (ts && !Number.isFinite(nacelle)) nacelle = interpolatedMeanDeg(ts.time, ts.values.yaw_deg, w.start_s, w.end_s, maxGap);
        const incl = this.t.orientationSeries[l.instrument.index];
        const gaps = [seriesGapIn(ts, w.start_s, w.end_s, maxGap), incl ? seriesGapIn(incl, w.start_s, w.end_s, maxGap, 'inclinometer') : '']
          .filter((g) => g).join('; ');
        this.results.nacelle.push(solveNacelle(st, l, info, {
          hubHeight_m: this.c.turbine.hubHeight_m, rotorDiameter_m: this.c.turbine.rotorDiameter_m,
          ctAt: (v) => thrustCoefficientAt(this.c.turbine.thrustCoefficient as number | [number, number][], v).ct,
          nacelle_deg: nacelle, seriesGap: gaps,
        }));
      }
    }
    if (this.t.track) {
      const st = filtered(this.t.trackIndex);
      const ref = this.freeStream(windowInflow, w);
      for (const l of this.t.track.layouts) {
        this.results.tracks.push(...solveTrack(st, l, {
          window: info, direction_deg: w.direction_deg, rotorDiameter_m: this.c.turbine.rotorDiameter_m,
          freeStreamAt: ref?.at, freeStreamSource: ref?.source,
        }));
      }
    }
    return outliers;
  }

  /** The free stream for the trackers from the campaign's inflow reference (none for plane inflow). */
  private freeStream(profile: InflowProfile | undefined, w: FinishedWindow): { at: (z: number) => number; source: string } | undefined {
    const inf = this.c.inflow, H = this.c.turbine.hubHeight_m;
    let p: InflowProfile | undefined;
    if (inf.kind === 'profile') p = profile;
    else if (inf.kind === 'fixed') p = inflowFixed(inf, H);
    else if (inf.kind === 'series' && this.inflowSeries) p = inflowFromSeries(this.inflowSeries, w.start_s, w.end_s, H);
    if (!p || !p.ok) return undefined;
    const q = p;
    return { at: (z) => evalLaw(q, z), source: `inflow reference (${q.source})` };
  }

  /** The condition bin of the window just finished: its profile statistics join the bin's. */
  assignBin(bin: number | undefined, w: FinishedWindow): void {
    if (bin === undefined || bin < 0 || !this.lastProfileStats) return;
    let cur = this.binStats.get(bin);
    if (!cur) {
      cur = { stats: this.lastProfileStats, members: [], sin: 0, cos: 0 };
      this.binStats.set(bin, cur);
    } else mergeCellStats(cur.stats, this.lastProfileStats);
    cur.members.push([w.start_s, w.end_s]);
    const D = (w.direction_deg * Math.PI) / 180;
    if (Number.isFinite(D)) { cur.sin += Math.sin(D); cur.cos += Math.cos(D); }
  }

  /** Profiles of the condition bins (before the bins' plane fields are analysed). */
  solveBins(): void {
    if (!this.t.profile) return;
    for (const [bin, { stats, members, sin, cos }] of this.binStats) {
      const dir = ((Math.atan2(sin, cos) * 180) / Math.PI + 360) % 360;
      for (const l of this.t.profile.layouts) {
        const points = solveProfile(stats, l);
        const start = Math.min(...members.map((m) => m[0])), end = Math.max(...members.map((m) => m[1]));
        this.results.profileBins.push({ instrumentId: l.instrument.id, window: { index: bin, start_s: start, end_s: end, kind: 'ensemble' }, points, bin });
        if (l === this.refLayout) {
          this.inflowOf.set(`bin${bin}`, inflowFromProfile(points, dir, this.c.turbine.hubHeight_m, (this.c.inflow as { law: 'power' | 'log' }).law, l.instrument.id));
        }
      }
    }
  }
}
