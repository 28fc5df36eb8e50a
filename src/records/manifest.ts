/**
 * What a run writes, described: the output record every stage returns for each file it writes, and the run
 * manifest (everything needed to reproduce and audit a run, written as manifest.json in the run folder).
 * Low level on purpose: io, wake, render, plan and pipeline all write through these types, and nothing here
 * imports a stage (only types).
 */
import type { InstrumentCnrLimit } from '../qc/cnrLimits.ts';
import type { SampleAccount } from '../qc/reasons.ts';
import type { SegmentSummary } from '../windows/segments.ts';

export interface InputFileRecord {
  file: string;
  instrument: string;
  bytes: number;
  sha256: string;
}

export interface OutputRecord {
  /** field-table | manifest | rejected-rows | wake-table | steering | downstream | model-fit | image | report | ... */
  kind: string;
  /** Path relative to the run folder. */
  path: string;
  plane?: string;
  window?: number;
  /** Condition bin of an ensemble output. */
  bin?: number;
  description?: string;
}

export interface WindowRecord {
  index: number;
  start: string;
  end: string;
  start_s: number;
  end_s: number;
  /** Why the window exists: fixed, list, segment or record, with its label and (segments) state level. */
  kind: string;
  label: string;
  level_deg?: number;
  direction_deg: number;
  /** In-plane samples kept in the window (after the robust filter). */
  samples: number;
  /** Samples the robust filter rejected in this window. */
  outliers: number;
  /** Condition values of the window and its condition bin (-1: outside every bin), when conditions are declared. */
  conditions?: Record<string, number>;
  bin?: number;
}

export interface EnsembleRecord {
  bin: number;
  label: string;
  /** Windows (indices into windows[]) pooled in the bin. */
  windows: number[];
  empty: boolean;
}

export interface RunManifest {
  tool: { name: 'wakeplane'; version: string };
  campaign: { name: string; file: string; sha256: string; description: string };
  startedAt: string;
  finishedAt: string;
  inputs: InputFileRecord[];
  /** The campaign after defaults (what the run actually used). */
  settings: unknown;
  samples: { total: SampleAccount; perInstrument: Record<string, SampleAccount>; balanced: boolean };
  windows: WindowRecord[];
  /** Condition bins, empty ones included. */
  ensembles?: EnsembleRecord[];
  /** Segment windows: how the turbine series' time divided into windows and exclusions (seconds by reason). */
  segments?: SegmentSummary;
  outputs: OutputRecord[];
  timings_s: Record<string, number>;
  /** The process's peak resident memory at the end of the run, bytes (the whole process's, since it started). */
  peakRss_bytes: number;
  /**
   * The same peak when the run started: where it equals peakRss_bytes, the process reached its peak before the run
   * (other work in the same process: the demo's simulation, an earlier run) and the run's own peak is at most that.
   */
  peakRssAtStart_bytes?: number;
  samplesPerSecond: number;
  assumptions: string[];
  warnings: string[];
  /**
   * The CNR limits the run applied, per instrument: fixed (qc.cnr_db.min a number) or estimated from the data before
   * the ingest (qc.cnr_db.min "auto"; src/qc/cnrLimits.ts), with the evidence curve. The same limits are in
   * settings.qc.cnr_db.resolved_db.
   */
  cnrLimits?: { mode: 'auto' | 'fixed' | 'mixed'; perInstrument: Record<string, InstrumentCnrLimit> };
  /** Set by `wakeplane render` when it redid the figures and the report of this run folder. */
  rendered?: { at: string; seconds: number };
  /** The uncertainty budget's summary (pipeline/budgetStage.ts); absent when the budget is off. */
  uncertainty?: UncertaintySummary;
}

/**
 * The uncertainty budget of a run, per plane: the root-mean-square of each term (m/s) over every retrieved cell of
 * every window, per component, and the same at one chosen cell (how it was chosen is stated), with the number of
 * values averaged. Terms: noise, sampling, pointing, probe, timing, position, combined (retrieval/budget.ts).
 */
export interface UncertaintySummary {
  terms: string[];
  planes: {
    plane: string;
    allCells: Record<string, Record<string, number> & { values: number }>;
    /** The cell the report's bar chart shows: y and the plane's second axis (`second_axis`: z on cross planes, x on horizontal ones), metres. */
    chosenCell: { y_m: number; second_m: number; second_axis: 'z' | 'x'; how: string; components: Record<string, Record<string, number> & { values: number }> };
  }[];
  /** What the budget leaves out (README: Uncertainty). */
  notCovered: string[];
}
