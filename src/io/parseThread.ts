/**
 * Parsing on a second core: a worker thread (parseWorker.ts) reads, checksums and parses every sample file, and the
 * main thread receives the batches and does the rest (quality control, geometry, gridding, retrieval). Each file
 * is offered as an iterator with the same contract as readSamples(): chunks in file order, a chunk's batch valid
 * until the next pull of that file (the arrays then go back to the worker to be filled again). The rows, their
 * order, values and rejections are those of readSamples() on the main thread: the worker runs the same reader.
 *
 * Worth it when there is a second core and enough data to repay the worker's start (about 50 ms); see
 * useParseThread().
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { availableParallelism } from 'node:os';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import type { SampleChunk } from './csvSamples.ts';
import { batchArrays, type FileDigest, type ParseFile, type ParseWorkerData, type ToMain, type ToWorker } from './parseProtocol.ts';

/** Below this much input a run reads on the main thread (the worker's start would not pay for itself). */
export const PARSE_THREAD_MIN_BYTES = 32 * 2 ** 20;

export type ParseThreadChoice = 'auto' | 'on' | 'off';

/** Whether to parse on a worker thread: 'on'/'off' as asked; 'auto' when two cores and enough input are there. */
export function useParseThread(choice: ParseThreadChoice, inputBytes: number): boolean {
  if (choice !== 'auto') return choice === 'on';
  return availableParallelism() >= 2 && inputBytes >= PARSE_THREAD_MIN_BYTES;
}

/** Path of tsx's ES-module API (its package `exports`, import condition), found from the module at `from`. */
function tsxEsmApi(from: string): string {
  const pkgFile = createRequire(from).resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgFile, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  return join(dirname(pkgFile), pkg.exports['./esm/api'].import.default);
}

interface FileQueue {
  ready: SampleChunk[];
  /** The chunk last handed out, returned to the worker at the next pull. */
  lent: SampleChunk | null;
  ended: boolean;
  waiting: { resolve: (r: IteratorResult<SampleChunk>) => void; reject: (e: Error) => void } | null;
}

export class ParseThread {
  private readonly worker: Worker;
  private readonly queues: FileQueue[];
  private readonly digestList: (FileDigest | undefined)[];
  private failure: Error | null = null;
  private digestWaiter: { resolve: (d: FileDigest[]) => void; reject: (e: Error) => void } | null = null;
  private closed = false;

  constructor(files: ParseFile[], instrumentIds: string[], batchSize = 16384, ahead = 2) {
    const here = import.meta.url;
    const data: ParseWorkerData = { files, instrumentIds, batchSize, ahead };
    if (here.endsWith('.ts')) {
      // from the sources (tests, WAKEPLANE_FROM_SOURCE): the worker first registers the TypeScript loader
      const tsx = pathToFileURL(tsxEsmApi(here)).href;
      const entry = new URL('./parseWorker.ts', here).href;
      const boot = `import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(entry)}); });`;
      this.worker = new Worker(boot, { eval: true, workerData: data });
    } else this.worker = new Worker(new URL('./parseWorker.js', here), { workerData: data });
    this.queues = files.map(() => ({ ready: [], lent: null, ended: false, waiting: null }));
    this.digestList = files.map(() => undefined);
    this.worker.on('message', (m: ToMain) => this.receive(m));
    this.worker.on('error', (e) => this.fail(e instanceof Error ? e : new Error(String(e))));
    this.worker.on('exit', (code) => {
      if (!this.closed && code !== 0) this.fail(new Error(`the parse worker stopped (exit code ${code})`));
    });
  }

  private receive(m: ToMain): void {
    const q = this.queues[m.k];
    if (m.t === 'chunk') {
      const chunk: SampleChunk = { batch: m.batch, rejected: m.rejected };
      if (q.waiting) {
        const w = q.waiting;
        q.waiting = null;
        q.lent = chunk;
        w.resolve({ value: chunk, done: false });
      } else q.ready.push(chunk);
    } else if (m.t === 'end') {
      q.ended = true;
      this.digestList[m.k] = m.digest;
      if (q.waiting && q.ready.length === 0) {
        const w = q.waiting;
        q.waiting = null;
        w.resolve({ value: undefined, done: true });
      }
      if (this.digestWaiter && this.digestList.every((d) => d !== undefined)) this.digestWaiter.resolve(this.digestList as FileDigest[]);
    } else {
      this.fail(m.input ? new InputError(m.file, m.line, m.reason) : new Error(`${m.file}: ${m.reason}`));
    }
  }

  private fail(e: Error): void {
    if (this.failure) return;
    this.failure = e;
    for (const q of this.queues) {
      if (q.waiting) {
        const w = q.waiting;
        q.waiting = null;
        w.reject(e);
      }
    }
    this.digestWaiter?.reject(e);
  }

  /** The chunks of file k, in order (one consumer per file). */
  file(k: number): AsyncIterator<SampleChunk> {
    const q = this.queues[k];
    return {
      next: () => {
        if (q.lent) {
          // the consumer is done with the last batch: its arrays go back to be filled again
          const b = q.lent.batch;
          q.lent = null;
          if (!this.failure && !this.closed) this.worker.postMessage({ t: 'free', k, batch: b } satisfies ToWorker, batchArrays(b).map((a) => a.buffer as ArrayBuffer));
        }
        if (q.ready.length > 0) {
          q.lent = q.ready.shift()!;
          return Promise.resolve({ value: q.lent, done: false });
        }
        if (this.failure) return Promise.reject(this.failure);
        if (q.ended) return Promise.resolve({ value: undefined, done: true });
        return new Promise((resolve, reject) => (q.waiting = { resolve, reject }));
      },
    };
  }

  /** Size and SHA-256 of every file, once the worker has read them all. */
  digests(): Promise<FileDigest[]> {
    if (this.failure) return Promise.reject(this.failure);
    if (this.digestList.every((d) => d !== undefined)) return Promise.resolve(this.digestList as FileDigest[]);
    return new Promise((resolve, reject) => (this.digestWaiter = { resolve, reject }));
  }

  /** Stops the worker (also when the run ends early). */
  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    await this.worker.terminate();
  }
}
