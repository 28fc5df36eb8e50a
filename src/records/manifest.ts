/**
 * What a run writes, described: the output record every stage returns for each file it writes, and the run
 * manifest (everything needed to reproduce and audit a run, written as manifest.json in the run folder).
 * Low level on purpose: io, wake, render, plan and pipeline all write through these types, and nothing here
 * imports a stage.
 */
import type { SampleAccount } from '../qc/reasons.ts';

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
  description?: string;
}

export interface WindowRecord {
  index: number;
  start: string;
  end: string;
  start_s: number;
  end_s: number;
  direction_deg: number;
  /** Accepted in-plane samples in the window. */
  samples: number;
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
  outputs: OutputRecord[];
  timings_s: Record<string, number>;
  peakRss_bytes: number;
  samplesPerSecond: number;
  assumptions: string[];
  warnings: string[];
}
