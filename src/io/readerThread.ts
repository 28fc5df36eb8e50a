/**
 * Samples read on a thread of their own (readerWorker.ts): for NetCDF-4 files (sampleSource.ts says why only those),
 * the HDF5 library's decompression and the conversion to SI run beside the caller's work instead of before it. The same face as the readers (a SampleChunk
 * stream, InputError for a bad file on the first pull, a batch valid until the next pull); chunks arrive
 * at most AHEAD per file ahead of the consumer, so memory stays bounded. One thread serves every file of the
 * process; it keeps the process alive only while a chunk is awaited (a run that stops early does not hang on it).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import { batchBuffers, type SampleBatch } from './batch.ts';
import type { SampleChunk, SampleReaderOptions } from './csvSamples.ts';

type Message = { id: number; chunk?: SampleChunk; done?: boolean; checked?: unknown; error?: { file: string; line: number | undefined; reason: string; message: string } };

/**
 * Whether to read on the reader thread: where the process may use two cores or more (os.availableParallelism),
 * unless WAKEPLANE_READER_THREAD=0 (the processes of `run --cores`, which share the cores already, are started so).
 */
export function readerThreadWanted(): boolean {
  return process.env.WAKEPLANE_READER_THREAD !== '0' && availableParallelism() >= 2;
}

function errorFrom(e: NonNullable<Message['error']>): Error {
  return e.file ? new InputError(e.file, e.line, e.reason) : new Error(e.message);
}

/** The worker script: the bundle's dist/sampleReader.js, or from the sources a starter that loads the .ts file through tsx. */
function workerUrl(): URL {
  const built = new URL('./sampleReader.js', import.meta.url);
  return existsSync(fileURLToPath(built)) ? built : new URL('./readerBoot.mjs', import.meta.url);
}

class ReaderThread {
  private readonly worker: Worker;
  private nextId = 0;
  private readonly queues = new Map<number, { items: Message[]; wake: (() => void) | null }>();
  private dead: Error | null = null;
  /** Callers waiting in take(): the thread is referenced (keeps the process alive) only while there are some. */
  private waiting = 0;

  constructor() {
    this.worker = new Worker(workerUrl(), { execArgv: [] });
    this.worker.on('message', (m: Message) => {
      const q = this.queues.get(m.id);
      if (!q) return;
      q.items.push(m);
      q.wake?.();
    });
    const fail = (e: Error) => {
      this.dead ??= e;
      for (const q of this.queues.values()) q.wake?.();
    };
    this.worker.on('error', fail);
    this.worker.on('exit', (code) => fail(new Error(`sample reader thread stopped (exit code ${code})`)));
    this.worker.unref();
  }

  get failed(): boolean {
    return this.dead !== null;
  }

  /** Loads the HDF5 library on the thread now (io/hdf5.ts), ahead of the first file. */
  warm(): void {
    this.worker.postMessage({ op: 'warm', id: -1 });
  }

  /** checkSamples of `path` on the thread. */
  async check(path: string, opts: SampleReaderOptions): Promise<unknown> {
    const id = this.nextId++;
    this.queues.set(id, { items: [], wake: null });
    const { instrumentIndex, owner, columns, sign } = opts;
    this.worker.postMessage({ op: 'check', id, path, opts: { instrumentIndex, owner, columns, sign } });
    try {
      const m = await this.take(id);
      if (m.error) throw errorFrom(m.error);
      return m.checked;
    } finally {
      this.queues.delete(id);
    }
  }

  open(path: string, opts: SampleReaderOptions): number {
    const id = this.nextId++;
    this.queues.set(id, { items: [], wake: null });
    const { instrumentIndex, owner, columns, sign, batchSize, highWaterMark } = opts;
    this.worker.postMessage({ op: 'open', id, path, opts: { instrumentIndex, owner, columns, sign, batchSize, highWaterMark } });
    return id;
  }

  /** The next message for file `id`; the thread keeps the process alive only while someone waits here. */
  async take(id: number): Promise<Message> {
    const q = this.queues.get(id)!;
    while (q.items.length === 0) {
      if (this.dead) throw this.dead;
      if (this.waiting++ === 0) this.worker.ref();
      try {
        await new Promise<void>((resolve) => { q.wake = resolve; });
      } finally {
        q.wake = null;
        if (--this.waiting === 0) this.worker.unref();
      }
    }
    return q.items.shift()!;
  }

  /** One more chunk wanted; `give` (a batch the consumer is done with) goes back to be filled again. */
  next(id: number, give?: SampleBatch): void {
    if (this.dead) return;
    this.worker.postMessage({ op: 'next', id, give }, give ? batchBuffers(give) : []);
  }

  close(id: number): void {
    if (!this.queues.delete(id)) return;
    if (!this.dead) this.worker.postMessage({ op: 'close', id });
  }
}

let shared: ReaderThread | undefined;

function thread(): ReaderThread {
  if (!shared || shared.failed) shared = new ReaderThread();
  return shared;
}

/** Starts the reader thread and has it load the HDF5 library, before any file is asked for (cli/early.ts). */
export function warmReaderThread(): void {
  thread().warm();
}

/** checkSamples (sampleSource.ts) on the reader thread. */
export function checkThreaded(path: string, opts: SampleReaderOptions): Promise<unknown> {
  return thread().check(path, opts);
}

/** openSamples (sampleSource.ts) on the reader thread. */
export async function* readThreaded(path: string, opts: SampleReaderOptions): AsyncGenerator<SampleChunk> {
  const t = thread();
  const id = t.open(path, opts);
  try {
    for (;;) {
      const m = await t.take(id);
      if (m.error) throw errorFrom(m.error);
      if (m.done || !m.chunk) return;
      // The same shape as the readers' own batches (an object rebuilt by the message's deserialiser has another
      // layout, which makes the consumer's per-sample loop polymorphic).
      const b = m.chunk.batch;
      yield {
        batch: { length: b.length, file: b.file, line: b.line, time: b.time, instrument: b.instrument, azimuth: b.azimuth, elevation: b.elevation, range: b.range, radialVelocity: b.radialVelocity, cnr: b.cnr },
        rejected: m.chunk.rejected,
      };
      // the consumer pulled again: it is done with this batch
      t.next(id, m.chunk.batch);
    }
  } finally {
    t.close(id);
  }
}
