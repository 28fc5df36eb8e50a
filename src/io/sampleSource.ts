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
  // The reader thread for NetCDF only: there the HDF5 library's decompression moves off the caller (main thread
  // 4.0 -> 2.7 CPU-s on the benchmark); CSV parsing moved there measured no gain on two cores (caller -0.5 CPU-s,
  // the thread +1.6, and the batches' round trips).
  if (opts.thread && format === 'netcdf') {
    const { readThreaded } = await import('./readerThread.ts');
    yield* readThreaded(path, opts);
  } else if (format === 'netcdf') {
    const { readNetcdfSamples } = await import('./netcdfSamples.ts');
    yield* readNetcdfSamples(path, opts);
  } else yield* readSamples(path, { ...opts, gzip: format === 'csv.gz' });
}
