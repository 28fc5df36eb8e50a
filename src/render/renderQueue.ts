/**
 * Figures written in parallel. The SVG text is built on the main thread (a few milliseconds a figure); turning it
 * into a PNG (librsvg inside sharp) is most of the work and runs on sharp's native worker threads, outside the
 * JavaScript thread. The queue keeps up to `concurrency` conversions in flight (default: the machine's cores) and
 * makes callers wait when that many are pending, so a campaign of thousands of figures never holds more than a
 * few SVG texts in memory. Output records come back in the order the figures were added.
 *
 * libuv runs sharp's work on its thread pool (4 threads unless UV_THREADPOOL_SIZE says otherwise); with more
 * cores than that, set UV_THREADPOOL_SIZE before starting Node for the extra ones to be used.
 */
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import type { OutputRecord } from '../pipeline/manifest.ts';
import { writeSvgAndPng } from './write.ts';

export interface FigureMeta {
  plane?: string;
  window?: number;
  /** Condition bin of an ensemble figure. */
  bin?: number;
  description: string;
}

export class RenderQueue {
  private readonly pending = new Set<Promise<void>>();
  private readonly records: OutputRecord[][] = [];
  private failure: unknown;
  readonly concurrency: number;
  /** Figures added and written so far. */
  added = 0;
  written = 0;

  /**
   * @param runDir the run folder; figures go to `<runDir>/<name>.svg|png` with records relative to it
   * @param density PNG dots per inch (default 300)
   * @param concurrency conversions in flight (default: availableParallelism(), at least 1)
   * @param onWritten called after each figure is written, with the counts so far
   */
  constructor(
    private readonly runDir: string,
    private readonly density = 300,
    concurrency?: number,
    private readonly onWritten?: (written: number, added: number) => void,
  ) {
    this.concurrency = Math.max(1, Math.floor(concurrency ?? availableParallelism()));
  }

  /** Queues one figure (`name` relative to the run folder, no extension); waits while the queue is full. */
  async add(svg: string, name: string, meta: FigureMeta): Promise<void> {
    if (this.failure) throw this.failure;
    while (this.pending.size >= this.concurrency) await Promise.race(this.pending);
    if (this.failure) throw this.failure;
    const slot = this.records.length;
    this.records.push([]);
    this.added++;
    const job = writeSvgAndPng(svg, join(this.runDir, name), { density: this.density })
      .then((paths) => {
        this.records[slot] = paths.map((p) => ({
          kind: 'image',
          path: `${name.slice(0, name.lastIndexOf('/') + 1)}${p.slice(p.lastIndexOf('/') + 1)}`,
          ...(meta.plane !== undefined ? { plane: meta.plane } : {}),
          ...(meta.window !== undefined ? { window: meta.window } : {}),
          ...(meta.bin !== undefined ? { bin: meta.bin } : {}),
          description: meta.description,
        }));
        this.written++;
        this.onWritten?.(this.written, this.added);
      })
      .catch((e) => {
        this.failure ??= e;
      })
      .finally(() => this.pending.delete(job));
    this.pending.add(job);
  }

  /** Waits for every queued figure; returns their records in the order added (throws the first failure). */
  async done(): Promise<OutputRecord[]> {
    await Promise.all(this.pending);
    if (this.failure) throw this.failure;
    return this.records.flat();
  }
}
