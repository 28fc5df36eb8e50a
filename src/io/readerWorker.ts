/**
 * Body of the sample-reader worker thread (see threadedSamples.ts): runs readSamples for each stream the main
 * thread opens and posts its chunks, transferring the batch arrays (no copy). Each stream may run `ahead` chunks
 * ahead of the consumer; the consumer grants one more per chunk it takes.
 */
import { parentPort } from 'node:worker_threads';
import type { SampleChunk } from './csvSamples.ts';
import { readSamples } from './csvSamples.ts';
import type { ToWorker, WireOptions } from './threadedWire.ts';

interface Stream {
  gen: AsyncGenerator<SampleChunk>;
  credits: number;
  pumping: boolean;
  closed: boolean;
}

const port = parentPort!;
const streams = new Map<number, Stream>();

function transferList(c: SampleChunk): ArrayBuffer[] {
  const b = c.batch;
  return [b.line, b.time, b.instrument, b.azimuth, b.elevation, b.range, b.radialVelocity, b.cnr].map((a) => a.buffer as ArrayBuffer);
}

async function pump(id: number, s: Stream): Promise<void> {
  if (s.pumping) return;
  s.pumping = true;
  try {
    while (s.credits > 0 && !s.closed) {
      const r = await s.gen.next();
      if (s.closed) break;
      if (r.done) {
        port.postMessage({ op: 'end', id });
        streams.delete(id);
        return;
      }
      s.credits--;
      port.postMessage({ op: 'chunk', id, chunk: r.value }, transferList(r.value));
    }
  } catch (e) {
    const err = e as Error & { file?: string; line?: number; reason?: string };
    port.postMessage({ op: 'error', id, error: { name: err.name, message: err.message, file: err.file, line: err.line, reason: err.reason } });
    streams.delete(id);
  } finally {
    s.pumping = false;
  }
}

function open(id: number, path: string, o: WireOptions, ahead: number): void {
  const gen = readSamples(path, {
    instrumentIndex: new Map(o.instrumentIndex),
    owner: o.owner,
    columns: o.columns,
    sign: o.sign,
    batchSize: o.batchSize,
    highWaterMark: o.highWaterMark,
    reuseBatches: false, // the arrays are transferred to the main thread
  });
  const s: Stream = { gen, credits: ahead, pumping: false, closed: false };
  streams.set(id, s);
  void pump(id, s);
}

port.on('message', (m: ToWorker) => {
  if (m.op === 'open') open(m.id, m.path, m.opts, m.ahead);
  else {
    const s = streams.get(m.id);
    if (!s) return;
    if (m.op === 'more') {
      s.credits++;
      void pump(m.id, s);
    } else {
      s.closed = true;
      streams.delete(m.id);
      void s.gen.return(undefined);
    }
  }
});
