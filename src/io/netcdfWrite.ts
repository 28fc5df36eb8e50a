/**
 * Writing NetCDF-4 on h5wasm (the writer itself is netcdfCore.mjs, plain JavaScript shared with the output worker):
 * dimensions as HDF5 dimension scales (a coordinate variable, or netCDF's marker for a dimension without a variable),
 * variables as chunked, deflate-compressed datasets attached to their dimensions, text attributes as NC_CHAR
 * (fixed-length strings, what netCDF-C writes), numeric attributes as double or as the type of the typed array
 * given (a _FillValue must match its variable), text variables as variable-length strings (NC_STRING). Link creation
 * order is tracked, so ncdump lists variables in the order written. An unlimited dimension grows by `append`. Files
 * are written as `<path>.<pid>.tmp` and renamed on close: a NetCDF output appears whole or not at all.
 *
 * Two faces: `NcWriter` writes on the calling thread (the tests' sample generator, small files); `NcWorker` hands
 * the same operations to a worker thread (the run's outputs: loading the 4 MB HDF5 library and writing then cost the
 * ingest almost nothing on a second core). Errors of the worker surface, with the file named, when it is closed.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { InputError } from '../errors.ts';
import { hdf5Message, loadHdf5 } from './hdf5.ts';
import { stopOnInterrupt } from './cleanup.ts';
import { NcFileWriter, type NcAttr, type NcData, type VariableOptions } from './netcdfCore.mjs';

export type { NcAttr, NcData, VariableOptions };

/** The operations both faces offer. */
export interface NcTarget {
  coordinate(name: string, values: NcData, attrs: Record<string, NcAttr | undefined>, opts?: { unlimited?: boolean }): void;
  dimension(name: string, size: number): void;
  variable(name: string, dims: string[], data: NcData, attrs: Record<string, NcAttr | undefined>, opts?: VariableOptions): void;
  append(name: string, values: NcData): void;
  global(attrs: Record<string, NcAttr | undefined>): void;
}

export class NcWriter implements NcTarget {
  private constructor(private readonly w: NcFileWriter) {}

  static async create(path: string): Promise<NcWriter> {
    const h5 = await loadHdf5();
    try {
      return new NcWriter(new NcFileWriter(h5, path));
    } catch (e) {
      throw new InputError(path, undefined, `cannot create NetCDF file: ${hdf5Message(e)}`);
    }
  }

  coordinate(...a: Parameters<NcTarget['coordinate']>): void { this.w.coordinate(...a); }
  dimension(...a: Parameters<NcTarget['dimension']>): void { this.w.dimension(...a); }
  variable(...a: Parameters<NcTarget['variable']>): void { this.w.variable(...a); }
  append(...a: Parameters<NcTarget['append']>): void { this.w.append(...a); }
  global(...a: Parameters<NcTarget['global']>): void { this.w.global(...a); }
  close(): void { this.w.close(); }
  abort(): void { this.w.abort(); }
}

/** The worker script beside this module: .mjs in src/io, .js in the bundle (bin/build.js). */
function workerUrl(): URL {
  const src = new URL('./netcdfWorker.mjs', import.meta.url);
  return existsSync(fileURLToPath(src)) ? src : new URL('./netcdfWorker.js', import.meta.url);
}

/** A worker thread writing NetCDF files; operations are queued in order and never block the caller. */
export class NcWorker {
  private readonly worker: Worker;
  private nextFile = 0;
  private nextReply = 0;
  private readonly waiting = new Map<number, { resolve: () => void; reject: (e: Error) => void }>();
  private dead: Error | null = null;

  constructor() {
    // The folder of the thread's warm-up files (netcdfWorker.mjs): made and removed at exit here, so that a process
    // ending while the thread still writes them (a run stopped by bad input in its first second) leaves nothing.
    let warmDir: string | undefined;
    try {
      warmDir = mkdtempSync(join(tmpdir(), 'wakeplane-nc-'));
      const dir = warmDir;
      process.once('exit', () => rmSync(dir, { recursive: true, force: true, maxRetries: 3 }));
    } catch { /* no temporary folder: the thread skips its warm-up */ }
    this.worker = new Worker(workerUrl(), { execArgv: [], workerData: { warmDir } });
    this.worker.on('message', (m: { reply?: number; error?: string | null }) => {
      if (m.reply === undefined) return;
      const w = this.waiting.get(m.reply);
      this.waiting.delete(m.reply);
      if (this.waiting.size === 0) this.worker.unref();
      if (m.error) w?.reject(new Error(m.error));
      else w?.resolve();
    });
    this.worker.on('error', (e) => this.fail(e));
    this.worker.on('exit', (code) => { if (code !== 0) this.fail(new Error(`NetCDF writer stopped (exit code ${code})`)); });
    // after the listeners (adding a 'message' listener refs the port again): an idle writer keeps no process alive
    this.worker.unref();
    // On Ctrl-C or SIGTERM the thread is stopped before the staging folder it writes into is removed.
    stopOnInterrupt(() => void this.worker.terminate());
  }

  private fail(e: Error): void {
    this.dead ??= e;
    for (const w of this.waiting.values()) w.reject(e);
    this.waiting.clear();
    this.worker.unref();
  }

  /** Arrays are copied (structured clone): the caller may reuse them. */
  private post(op: string, file: number, args: unknown[], reply?: number): void {
    if (this.dead) return;
    this.worker.postMessage({ op, file, args, reply });
  }

  get failed(): boolean {
    return this.dead !== null;
  }

  private ask(op: string, file: number): Promise<void> {
    if (this.dead) return Promise.reject(this.dead);
    const reply = this.nextReply++;
    const p = new Promise<void>((resolve, reject) => this.waiting.set(reply, { resolve, reject }));
    this.worker.ref(); // an answer is awaited: keep the process alive until it comes
    this.post(op, file, [], reply);
    return p;
  }

  /**
   * A file written by the worker. `sync()` resolves once the thread has carried out every operation posted before it
   * (a caller that posts faster than the thread writes waits on it, so that the queue, and memory, stay bounded).
   */
  create(path: string): NcTarget & { close(): Promise<void>; abort(): Promise<void>; sync(): Promise<void> } {
    const id = this.nextFile++;
    this.post('create', id, [path]);
    return {
      coordinate: (name, values, attrs, opts) => this.post('coordinate', id, [name, values, attrs, opts]),
      dimension: (name, size) => this.post('dimension', id, [name, size]),
      variable: (name, dims, data, attrs, opts) => this.post('variable', id, [name, dims, data, attrs, opts]),
      append: (name, values) => this.post('append', id, [name, values]),
      global: (attrs) => this.post('global', id, [attrs]),
      sync: () => this.ask('sync', id),
      close: () => this.ask('close', id),
      abort: () => this.ask('abort', id).catch(() => {}),
    };
  }

  async terminate(): Promise<void> {
    await this.worker.terminate();
  }
}

let shared: NcWorker | undefined;

/**
 * The process's NetCDF output worker, started on first use (it begins loading the HDF5 library at once, so call
 * this early) and replaced if it failed. It does not keep the process alive.
 */
export function ncWorker(): NcWorker {
  if (!shared || shared.failed) shared = new NcWorker();
  return shared;
}
