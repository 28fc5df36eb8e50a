/**
 * Worker-thread side of the parse thread (parseThread.ts): reads and parses the sample files with the same reader
 * as the main thread (csvSamples.ts) and posts each batch to the main thread, its arrays transferred, not copied.
 * Each file's SHA-256 is computed from the same reads, so every byte is read once.
 *
 * Flow control: at most AHEAD batches per file are with the main thread at a time; a batch comes back (arrays
 * transferred again) when the main thread has used it and is filled anew. Memory is therefore bounded by
 * files x (AHEAD + 1) batches, whatever the file sizes. The file to fill next is the one with the fewest batches
 * out, then the one furthest behind in time (the main thread reads the files in time step).
 */
import { createHash, type Hash } from 'node:crypto';
import { parentPort, workerData } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import type { SampleBatch } from './batch.ts';
import { createBatch, readSamples, type SampleChunk } from './csvSamples.ts';
import { batchArrays, type ParseWorkerData, type ToMain, type ToWorker } from './parseProtocol.ts';

const data = workerData as ParseWorkerData;
const port = parentPort!;
const instrumentIndex = new Map(data.instrumentIds.map((id, k) => [id, k]));
const pool: SampleBatch[] = [];

interface FileState {
  it: AsyncIterator<SampleChunk>;
  hash: Hash;
  bytes: number;
  out: number;
  last: number;
  done: boolean;
}

const files: FileState[] = data.files.map((f) => {
  const st: FileState = { it: undefined as unknown as AsyncIterator<SampleChunk>, hash: createHash('sha256'), bytes: 0, out: 0, last: -Infinity, done: false };
  st.it = readSamples(f.path, {
    instrumentIndex,
    owner: f.owner,
    columns: f.columns,
    sign: f.sign,
    batchSize: data.batchSize,
    reuseBatches: false,
    newBatch(file, rows) {
      const b = pool.pop();
      if (!b || b.time.length !== rows) return createBatch(file, rows);
      b.length = 0;
      b.file = file;
      return b;
    },
    onRead(bytes) {
      st.hash.update(bytes);
      st.bytes += bytes.length;
    },
  })[Symbol.asyncIterator]();
  return st;
});

function post(m: ToMain, transfer: ArrayBuffer[] = []): void {
  port.postMessage(m, transfer);
}

let pumping = false;
let failed = false;

/** Fills and posts batches while some file has room; returns when every file is at its limit or done. */
async function pump(): Promise<void> {
  if (pumping || failed) return;
  pumping = true;
  try {
    for (;;) {
      let k = -1;
      for (let j = 0; j < files.length; j++) {
        const f = files[j];
        if (f.done || f.out >= data.ahead) continue;
        if (k < 0 || f.out < files[k].out || (f.out === files[k].out && f.last < files[k].last)) k = j;
      }
      if (k < 0) break;
      const f = files[k];
      let r: IteratorResult<SampleChunk>;
      try {
        r = await f.it.next();
      } catch (e) {
        failed = true;
        const ie = e instanceof InputError ? e : undefined;
        post({ t: 'error', k, file: ie?.file ?? data.files[k].path, line: ie?.line, reason: ie ? ie.reason : String((e as Error)?.message ?? e), input: !!ie });
        return;
      }
      if (r.done) {
        f.done = true;
        post({ t: 'end', k, digest: { file: data.files[k].path, bytes: f.bytes, sha256: f.hash.digest('hex') } });
        continue;
      }
      const b = r.value.batch;
      f.out++;
      if (b.length > 0) f.last = b.time[b.length - 1];
      post({ t: 'chunk', k, batch: b, rejected: r.value.rejected }, batchArrays(b).map((a) => a.buffer as ArrayBuffer));
    }
  } finally {
    pumping = false;
  }
}

port.on('message', (m: ToWorker) => {
  if (m.t === 'free') {
    files[m.k].out--;
    pool.push(m.batch);
    void pump();
  }
});

void pump();
