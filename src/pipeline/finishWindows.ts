/**
 * The finishing side of a run: each finished window's accumulators go through the robust filter and the
 * retrieval, its field tables are written and the per-field stages run; condition bins collect the windows' kept
 * statistics and are retrieved at the end. A run feeds this from the ingest; a merge of sharded partial results
 * would feed it the merged accumulators of each window, in the same order, for the same outputs.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import type { CellAccumulator } from '../grid/accumulator.ts';
import { isoTime } from '../io/time.ts';
import { REJECT_REASONS } from '../qc/reasons.ts';
import { keyCountOf, retrieveStats } from '../retrieval/retrieveWindow.ts';
import { robustFilter } from '../retrieval/robustFilter.ts';
import type { PlaneGrid, RetrievalSettings } from '../retrieval/settings.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import type { WindowDef } from '../windows/plan.ts';
import { Ensembles, type ConditionSeries } from './ensembles.ts';
import { fieldTableName, writeFieldTable } from './fieldTable.ts';
import type { Counters } from './ingest.ts';
import type { OutputRecord, RunManifest, WindowRecord } from './manifest.ts';
import type { RunStage, StageContext } from './run.ts';
import type { GeometryFinisher } from './geometryFinish.ts';

/** Plane-windows named at most in an assumption's line; the others are counted. */
export const ASSUMPTION_LISTED = 12;

/**
 * One line per assumption for the manifest, the report and the summary: where it applied, as `in all N plane-windows`
 * or `in K of N plane-windows (p w0, p w3, ...)`, naming at most ASSUMPTION_LISTED of them (a season of windows would
 * otherwise make one line of thousands of names).
 */
export function assumptionLines(assumptions: ReadonlyMap<string, readonly string[]>, fieldCount: number): string[] {
  return [...assumptions].map(([a, where]) => {
    if (where.length === fieldCount) return `${a}: in all ${fieldCount} plane-windows`;
    const named = where.slice(0, ASSUMPTION_LISTED).join(', ');
    const more = where.length > ASSUMPTION_LISTED ? ` and ${where.length - ASSUMPTION_LISTED} more` : '';
    return `${a}: in ${where.length} of ${fieldCount} plane-windows (${named}${more})`;
  });
}

/** A window whose samples are all in: its definition, bounds, rotor-frame direction and accumulators per target. */
export interface FinishedWindow {
  def: WindowDef;
  start_s: number;
  end_s: number;
  direction_deg: number;
  /** One accumulator per target; index 0 is the plane target. */
  accs: CellAccumulator[];
}

export interface FinisherTimes {
  retrieval: number;
  write_fields: number;
  /** Time in the stages' per-field work, by stage name. */
  stages: Record<string, number>;
}

export class WindowFinisher {
  readonly windows: WindowRecord[] = [];
  readonly outputs: OutputRecord[] = [];
  /** Each assumption with the plane-windows it applied to. */
  readonly assumptions = new Map<string, string[]>();
  readonly times: FinisherTimes = { retrieval: 0, write_fields: 0, stages: {} };
  readonly ensembles: Ensembles;
  /** False once a window plan with overlapping windows is in use (outliers then stay per window). */
  disjoint = true;

  constructor(
    private readonly c: Campaign,
    private readonly planes: PlaneGrid[],
    private readonly settings: RetrievalSettings,
    private readonly runDir: string,
    private readonly stages: RunStage[],
    private readonly stageCtx: StageContext,
    private readonly counters: Counters,
    conditionSeries: ConditionSeries,
    /** The sibling geometries (profiles, nacelle instruments, trackers), finished before each window's planes. */
    private readonly geometry?: GeometryFinisher,
  ) {
    this.ensembles = new Ensembles(c, conditionSeries, keyCountOf(planes, c.instruments.length), c.instruments.length);
  }

  /** Write a field's tables and run the per-field stages; returns the wake rows the stages made. */
  private async handleFields(fields: FieldResult[], ordinal: number, tag: string): Promise<WakePlaneWindow[]> {
    const tw = performance.now();
    for (const f of fields) {
      const rel = fieldTableName(f, ordinal);
      await writeFieldTable(f, join(this.runDir, rel), this.c.turbine.rotorDiameter_m);
      const label = f.window.label ? ` (${f.window.label})` : '';
      this.outputs.push({ kind: 'field-table', path: rel, plane: f.planeId, ...(f.window.kind === 'ensemble' ? { bin: ordinal } : { window: ordinal }), description: `retrieved wind field, ${f.planeId}, ${tag}${label}` });
      for (const a of f.assumptions) {
        // in place (a copy per window grew with the square of the windows of a long campaign)
        let where = this.assumptions.get(a);
        if (!where) this.assumptions.set(a, (where = []));
        where.push(`${f.planeId} ${f.window.kind === 'ensemble' ? 'bin' : 'w'}${ordinal}`);
      }
    }
    this.times.write_fields += (performance.now() - tw) / 1000;
    // The planes of this window together (the wake of one turbine may take its inflow from another plane).
    this.stageCtx.shared.windowFields = fields;
    for (const stage of this.stages) {
      if (!stage.field) continue;
      const ts = performance.now();
      for (const f of fields) this.outputs.push(...(await stage.field(f, this.stageCtx)));
      this.times.stages[stage.name] = (this.times.stages[stage.name] ?? 0) + (performance.now() - ts) / 1000;
    }
    const rows = this.stageCtx.shared.wakeRows as WeakMap<FieldResult, WakePlaneWindow> | undefined;
    return fields.map((f) => rows?.get(f)).filter((r): r is WakePlaneWindow => r !== undefined);
  }

  /** One finished window: filter, retrieve, write, stages, condition bin. Windows are numbered in arrival order. */
  async window(w: FinishedWindow): Promise<void> {
    const tr = performance.now();
    const ordinal = this.windows.length;
    const info = { index: ordinal, start_s: w.start_s, end_s: w.end_s, kind: w.def.kind, label: w.def.label, level: w.def.level };
    const { stats, outliers, sampling } = robustFilter(w.accs[0], this.settings.robust, w);
    const geoOutliers = this.geometry?.window(w, ordinal);
    const fields = retrieveStats(stats, this.planes, info, w.direction_deg, this.settings, sampling);
    const outlierCount = outliers.reduce((a, b) => a + b, 0);
    // With disjoint windows every sample is in one window: its outliers are run-level rejections. With
    // overlapping windows a sample can be an outlier in one window and kept in another: counted per window.
    if (this.disjoint) {
      for (let i = 0; i < outliers.length; i++) {
        this.counters.accepted[i] -= outliers[i];
        this.counters.reject(i, REJECT_REASONS.indexOf('outlier'), outliers[i]);
        if (geoOutliers?.[i]) {
          this.counters.accepted[i] -= geoOutliers[i];
          this.counters.reject(i, REJECT_REASONS.indexOf('outlier'), geoOutliers[i]);
        }
      }
    }
    this.times.retrieval += (performance.now() - tr) / 1000;
    const record: WindowRecord = {
      index: ordinal, start: isoTime(w.start_s), end: isoTime(w.end_s), start_s: w.start_s, end_s: w.end_s,
      kind: w.def.kind, label: w.def.label, ...(Number.isFinite(w.def.level) ? { level_deg: w.def.level } : {}),
      direction_deg: w.direction_deg, samples: w.accs[0].total() - outlierCount, outliers: outlierCount,
    };
    this.windows.push(record);
    const rows = await this.handleFields(fields, ordinal, isoTime(w.start_s));
    if (this.ensembles.enabled) {
      const values = this.ensembles.values(w, rows);
      const hub = rows.map((r) => r.inflow.hubSpeed_ms).filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
      record.bin = this.ensembles.add(ordinal, w, stats, values, hub.length ? hub[(hub.length - 1) >> 1] : NaN);
      this.geometry?.assignBin(record.bin, w);
      record.conditions = Object.fromEntries(this.ensembles.specs.map((b, k) => [b.variable, values[k]]));
    }
  }

  /** After the last window: the ensembles of the condition bins (recorded in the manifest), with notices. */
  async end(manifest: RunManifest, notices: string[]): Promise<void> {
    const e = this.ensembles;
    if (!e.enabled) return;
    const tr = performance.now();
    const bins = e.retrieve(this.planes, this.settings);
    this.geometry?.solveBins();
    this.times.retrieval += (performance.now() - tr) / 1000;
    manifest.ensembles = e.summary().map((b) => ({ bin: b.index, label: b.label, windows: b.windows, empty: b.windows.length === 0 }));
    const empty = manifest.ensembles.filter((b) => b.empty).length;
    if (empty) notices.push(`${empty} of ${e.binCount} condition bins received no window (listed in the manifest)`);
    if (e.outside.length) notices.push(`${e.outside.length} windows fell outside every condition bin`);
    for (const { bin, fields } of bins) await this.handleFields(fields, bin.index, `bin ${bin.index}, ${bin.windows.length} windows`);
  }
}
