/** Messages between the main thread and the parse worker (parseThread.ts, parseWorker.ts). */
import type { ColumnMap } from '../campaign/schema.ts';
import type { RejectedRow, SampleBatch } from './batch.ts';

export interface ParseFile {
  path: string;
  /** Index of the instrument owning the file. */
  owner: number;
  columns: ColumnMap;
  sign: 'away' | 'toward';
}

export interface ParseWorkerData {
  files: ParseFile[];
  /** Instrument ids in index order. */
  instrumentIds: string[];
  batchSize: number;
  /** Batches per file the main thread may hold at once. */
  ahead: number;
}

export interface FileDigest {
  file: string;
  bytes: number;
  sha256: string;
  error?: string;
}

export type ToMain =
  | { t: 'chunk'; k: number; batch: SampleBatch; rejected: RejectedRow[] }
  | { t: 'end'; k: number; digest: FileDigest }
  | { t: 'error'; k: number; file: string; line: number | undefined; reason: string; input: boolean };

export type ToWorker = { t: 'free'; k: number; batch: SampleBatch };

/** The arrays of a batch, each on its own buffer (what a transfer moves). */
export function batchArrays(b: SampleBatch): ArrayBufferView[] {
  return [b.line, b.time, b.instrument, b.azimuth, b.elevation, b.range, b.radialVelocity, b.cnr];
}
