/** Messages between the main thread and the sample-reader worker (threadedSamples.ts, readerWorker.ts). */
import type { ColumnMap } from '../campaign/schema.ts';
import type { SampleChunk } from './csvSamples.ts';

/** SampleReaderOptions in a structured-clone-friendly form (the Map as entries). */
export interface WireOptions {
  instrumentIndex: [string, number][];
  owner: number;
  columns: ColumnMap;
  sign: 'away' | 'toward';
  batchSize?: number;
  highWaterMark?: number;
}

export type ToWorker =
  | { op: 'open'; id: number; path: string; opts: WireOptions; ahead: number }
  | { op: 'more'; id: number }
  | { op: 'close'; id: number };

export interface WireError {
  name: string;
  message: string;
  file?: string;
  line?: number;
  reason?: string;
}

export type FromWorker =
  | { op: 'chunk'; id: number; chunk: SampleChunk }
  | { op: 'end'; id: number }
  | { op: 'error'; id: number; error: WireError };
