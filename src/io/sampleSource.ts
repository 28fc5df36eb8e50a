/**
 * One door to every sample file: CSV, gzip-compressed CSV (streamed through node:zlib into the same byte-level
 * parser) or NetCDF-4/HDF5 (netcdfSamples.ts), chosen by the file's first bytes (gzip and HDF5 signatures) and, for
 * a file that claims to be NetCDF by its extension (.nc, .nc4, .h5, .hdf5, .cdf) but is not, a clear error. All
 * yield the same SampleChunk batches with the same rejection reasons; nothing downstream knows the format.
 */
import { extname } from 'node:path';
import { InputError } from '../errors.ts';
import { statSync } from 'node:fs';
import { checkHeader, readSamples, type HeaderInfo, type SampleChunk, type SampleReaderOptions } from './csvSamples.ts';
import { sniffFormat } from './hdf5.ts';

export type SampleFormat = 'csv' | 'csv.gz' | 'netcdf';

const NETCDF_EXT = new Set(['.nc', '.nc4', '.h5', '.hdf5', '.he5', '.cdf']);

/** The format of a sample file, from its content (and its extension, only to reject impostors). */
export function sampleFormat(path: string): SampleFormat {
  let kind: ReturnType<typeof sniffFormat>;
  try {
    kind = sniffFormat(path);
  } catch (e) {
    throw new InputError(path, undefined, `cannot read: ${(e as Error).message}`);
  }
  if (kind === 'hdf5') return 'netcdf';
  if (kind === 'netcdf-classic') {
    throw new InputError(path, undefined, 'classic NetCDF (CDF-1/2/5) is not read, only NetCDF-4 (HDF5): convert with `nccopy -k nc4`');
  }
  if (NETCDF_EXT.has(extname(path).toLowerCase())) throw new InputError(path, undefined, 'not a NetCDF-4/HDF5 file (no HDF5 signature)');
  return kind === 'gzip' ? 'csv.gz' : 'csv';
}

/**
 * Checks a file's structure (header row, or NetCDF variables, dimensions and units) before any output is written.
 * For NetCDF, `header` lists the variables used, a "data line" is any sample, and bytesPerLine is the file's bytes
 * per sample (for progress estimates); for CSV.gz, bytesPerLine is per decompressed line.
 */
export async function checkSamples(path: string, opts: SampleReaderOptions): Promise<HeaderInfo & { format: SampleFormat }> {
  const format = sampleFormat(path);
  if (format === 'netcdf' && opts.thread) {
    // on the reader thread, which will read the file too: the HDF5 library need not load on this one
    const { checkThreaded } = await import('./readerThread.ts');
    return (await checkThreaded(path, opts)) as HeaderInfo & { format: SampleFormat };
  }
  if (format === 'netcdf') {
    const { checkNetcdf } = await import('./netcdfSamples.ts');
    const { rays, gates } = await checkNetcdf(path, opts);
    const n = rays * gates;
    return { format, header: [], hasDataLine: n > 0, bytesPerLine: n > 0 ? statSync(path).size / n : NaN };
  }
  return { format, ...(await checkHeader(path, { ...opts, gzip: format === 'csv.gz' })) };
}

/** Streams the samples of any supported file (see SampleReaderOptions and the readers' docblocks). */
export async function* openSamples(path: string, opts: SampleReaderOptions): AsyncGenerator<SampleChunk> {
  const format = sampleFormat(path);
  // The reader thread for NetCDF: there the HDF5 library's decompression moves off the caller (main thread 4.0 ->
  // 2.7 CPU-s on the benchmark). Text files only when asked (textThread): on the benchmark's scanning rays, whose
  // gates the ingest mostly rejects by the ray's reach, parsing there did not pay on two cores (caller -0.6 CPU-s, the
  // thread +1.2, the run longer in 2 of 3 pairs); without ray structure, where every sample costs the caller its geometry
  // and accumulation, the run was 0.3 s shorter (caller -0.6 CPU-s).
  if (opts.thread && (format === 'netcdf' || opts.textThread)) {
    const { readThreaded } = await import('./readerThread.ts');
    yield* readThreaded(path, opts);
  } else if (format === 'netcdf') {
    const { readNetcdfSamples } = await import('./netcdfSamples.ts');
    yield* readNetcdfSamples(path, opts);
  } else yield* readSamples(path, { ...opts, gzip: format === 'csv.gz' });
}

/**
 * Files whose first batches a run keeps open while it starts (about 1 MB each, more ahead on the reader thread); with
 * more files, one per instrument (pipeline/ingest.ts, qc/cnrLimits.ts readPrepass), so that memory and open files do
 * not grow with the number of files.
 */
export const KEEP_PRIMED = 8;

/**
 * Files opened once and read up to their first chunk, shared by the steps of a run that begin with the head of every
 * file: the CNR pre-pass (qc/cnrLimits.ts) looks at the first chunk of the NetCDF and compressed files, then the
 * ingest takes over each opened stream where it stands, with that chunk as its first, instead of opening and
 * reading the file's head a second time (on the benchmark from NetCDF-4: six opens and block reads, about 0.25 s
 * before the ingest could start). Keyed by path and owning instrument; a stream nobody takes is closed by close().
 * The chunk stays valid until the stream is pulled again (the readers' reuse contract), so it is handed over once.
 */
/** A stream opened by PrimedFiles, its first pull, and whether it parses text on the reader thread (opts.textThread). */
export interface PrimedStream {
  it: AsyncIterator<SampleChunk>;
  first: Promise<IteratorResult<SampleChunk>>;
  textThread: boolean;
}

export class PrimedFiles {
  private readonly open = new Map<string, PrimedStream>();

  constructor(
    /** Rows per batch of every stream (the ingest's). */
    readonly batchSize: number,
    /** Read NetCDF files on the reader thread (SampleReaderOptions.thread). */
    readonly thread: boolean,
  ) {}

  private key(path: string, owner: number): string {
    return `${owner}\u0000${path}`;
  }

  /** The first chunk of the file (opening and reading it on first call); rejects as the reader would on its first pull. */
  head(path: string, opts: SampleReaderOptions): Promise<IteratorResult<SampleChunk>> {
    const k = this.key(path, opts.owner);
    let e = this.open.get(k);
    if (!e) {
      const it = openSamples(path, { ...opts, batchSize: this.batchSize, thread: this.thread })[Symbol.asyncIterator]();
      e = { it, first: it.next(), textThread: this.thread && opts.textThread === true };
      e.first.catch(() => {}); // a failure is reported to whoever awaits it, not as an unhandled rejection
      this.open.set(k, e);
    }
    return e.first;
  }

  /** Hands over an opened stream and its first chunk (once), or undefined when the file was not opened here. */
  take(path: string, owner: number): PrimedStream | undefined {
    const k = this.key(path, owner);
    const e = this.open.get(k);
    this.open.delete(k);
    return e;
  }

  /** Closes every stream not taken. */
  async close(): Promise<void> {
    const left = [...this.open.values()];
    this.open.clear();
    for (const e of left) {
      await e.first.catch(() => undefined);
      await e.it.return?.(undefined).catch(() => undefined);
    }
  }
}
