/**
 * The sample reader on a second thread: the same chunks as readSamples (csvSamples.ts), parsed in one shared
 * worker thread so that parsing overlaps the consumer's work (quality control, geometry, gridding) on a machine
 * with two or more cores. Batch arrays are transferred, not copied; each open file runs at most `ahead` chunks
 * ahead of its consumer, so memory stays bounded. The worker starts with the first open file and stops when the
 * last one is closed; it does not keep the process alive while nobody waits for it.
 *
 * Errors keep their meaning: a header problem rejects the first next() with the same InputError (file, line,
 * reason) that readSamples throws.
 */
import { Worker } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import type { SampleChunk, SampleReaderOptions } from './csvSamples.ts';
import type { FromWorker, ToWorker, WireError } from './threadedWire.ts';

export interface ThreadedReaderOptions extends SampleReaderOptions {
  /** Chunks the worker may run ahead of the consumer, per file. @default 2 */
  ahead?: number;
}

interface Pending {
  queue: FromWorker[];
  wake: (() => void) | null;
}

let worker: Worker | null = null;
let users = 0;
let nextId = 1;
const pending = new Map<number, Pending>();

function acquire(): Worker {
  if (!worker) {
    const w = new Worker(new URL('./readerThread.mjs', import.meta.url));
    w.unref();
    w.on('message', (m: FromWorker) => {
      const p = pending.get(m.id);
      if (!p) return;
      p.queue.push(m);
      if (p.wake) {
        const wake = p.wake;
        p.wake = null;
        wake();
      }
    });
    w.on('error', (e) => {
      // the worker died: fail every open stream
      for (const [id, p] of pending) {
        p.queue.push({ op: 'error', id, error: { name: 'Error', message: `sample reader thread failed: ${e.message}` } });
        p.wake?.();
        p.wake = null;
      }
      if (worker === w) worker = null;
    });
    worker = w;
  }
  users++;
  return worker;
}

function release(w: Worker): void {
  users--;
  if (users === 0 && worker === w) {
    worker = null;
    void w.terminate();
  }
}

function rebuild(e: WireError): Error {
  if (e.name === 'InputError' && e.file !== undefined) return new InputError(e.file, e.line ?? undefined, e.reason ?? e.message);
  const err = new Error(e.message);
  err.name = e.name;
  return err;
}

let waiting = 0;

async function take(w: Worker, p: Pending): Promise<FromWorker> {
  while (p.queue.length === 0) {
    if (waiting++ === 0) w.ref(); // someone waits: keep the process alive until the message comes
    try {
      await new Promise<void>((res) => (p.wake = res));
    } finally {
      if (--waiting === 0) w.unref();
    }
  }
  return p.queue.shift()!;
}

/** Same contract as readSamples (csvSamples.ts), parsing on the shared reader thread. */
export async function* readSamplesThreaded(path: string, opts: ThreadedReaderOptions): AsyncGenerator<SampleChunk> {
  const w = acquire();
  const id = nextId++;
  const p: Pending = { queue: [], wake: null };
  pending.set(id, p);
  let finished = false;
  const post = (m: ToWorker) => w.postMessage(m);
  try {
    post({
      op: 'open',
      id,
      path,
      ahead: Math.max(1, opts.ahead ?? 2),
      opts: {
        instrumentIndex: [...opts.instrumentIndex],
        owner: opts.owner,
        columns: opts.columns,
        sign: opts.sign,
        batchSize: opts.batchSize,
        highWaterMark: opts.highWaterMark,
      },
    });
    for (;;) {
      const m = await take(w, p);
      if (m.op === 'end') { finished = true; return; }
      if (m.op === 'error') { finished = true; throw rebuild(m.error); }
      post({ op: 'more', id });
      yield m.chunk;
    }
  } finally {
    if (!finished) post({ op: 'close', id });
    pending.delete(id);
    release(w);
  }
}
