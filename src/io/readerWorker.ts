/**
 * The sample reader thread (started by readerThread.ts): runs the file's reader (sampleSource.ts; runs use it for
 * NetCDF-4 files) for every file the main thread opens and posts its chunks, at most AHEAD per file beyond what the main
 * thread has taken, so that parsing, decompression and conversion run beside the main thread's work with bounded
 * memory. Batches travel by transfer (no copy) and come back with the next request, to be filled again.
 *
 * Messages in: {op: 'warm'} (load the HDF5 library now), {op: 'open', id, path, opts}, {op: 'next', id, give?} (one more chunk wanted; `give` a batch done
 * with), {op: 'close', id}, {op: 'check', id, path, opts} (checkSamples). Out: {id, chunk} | {id, done: true} |
 * {id, checked} | {id, error: {file, line, reason, message}}.
 */
import { parentPort } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import { batchBuffers, type SampleBatch } from './batch.ts';
import type { SampleChunk, SampleReaderOptions } from './csvSamples.ts';
import { checkSamples, openSamples } from './sampleSource.ts';

/** Chunks a file may have in flight (posted, not yet taken back by a request). */
export const AHEAD = 2;

interface Reader {
  it: AsyncGenerator<SampleChunk>;
  credits: number;
  busy: boolean;
  done: boolean;
  pool: SampleBatch[];
}

const readers = new Map<number, Reader>();
const port = parentPort!;

async function pump(id: number): Promise<void> {
  const r = readers.get(id);
  if (!r || r.busy || r.done) return;
  r.busy = true;
  try {
    while (r.credits > 0 && !r.done && readers.get(id) === r) {
      const next = await r.it.next();
      if (next.done) {
        r.done = true;
        port.postMessage({ id, done: true });
        break;
      }
      r.credits--;
      const chunk = next.value;
      port.postMessage({ id, chunk }, batchBuffers(chunk.batch));
      // Let waiting messages in before the next chunk (a file opened meanwhile gets its first chunk next, instead of
      // after this file's chunks ahead: the main thread waits for every file's first chunk before its ingest).
      if (r.credits > 0) await new Promise<void>((resolve) => setImmediate(resolve));
    }
  } catch (e) {
    r.done = true;
    port.postMessage({ id, error: errorOf(e) });
  } finally {
    r.busy = false;
  }
}

function errorOf(e: unknown): { file: string; line: number | undefined; reason: string; message: string } {
  return e instanceof InputError
    ? { file: e.file, line: e.line, reason: e.reason, message: e.message }
    : { file: '', line: undefined, reason: '', message: e instanceof Error ? e.message : String(e) };
}

port.on('message', (m: { op: string; id: number; path?: string; opts?: SampleReaderOptions; give?: SampleBatch }) => {
  if (m.op === 'warm') {
    // the HDF5 library (WebAssembly) set up ahead of the first file; a failure shows when a file is opened
    import('./hdf5.ts').then((h) => h.loadHdf5()).catch(() => {});
  } else if (m.op === 'check') {
    checkSamples(m.path!, { ...m.opts!, thread: false }).then(
      (checked) => port.postMessage({ id: m.id, checked }),
      (e: unknown) => port.postMessage({ id: m.id, error: errorOf(e) }),
    );
  } else if (m.op === 'open') {
    const pool: SampleBatch[] = [];
    // reuseBatches false: a posted batch belongs to the main thread until it comes back
    const it = openSamples(m.path!, { ...m.opts!, thread: false, reuseBatches: false, batchPool: pool });
    readers.set(m.id, { it, credits: AHEAD, busy: false, done: false, pool });
    void pump(m.id);
  } else if (m.op === 'next') {
    const r = readers.get(m.id);
    if (!r) return;
    if (m.give) r.pool.push(m.give);
    r.credits++;
    void pump(m.id);
  } else if (m.op === 'close') {
    const r = readers.get(m.id);
    readers.delete(m.id);
    if (r) void r.it.return(undefined);
  }
});
