/**
 * Work begun before the command's modules load (bin/wakeplane.js calls this first; loading them takes about 0.2 s):
 * for `run` on a campaign naming NetCDF-4/HDF5 files, the sample reader thread starts and loads the HDF5 library
 * (about 0.3 s of WebAssembly set-up) meanwhile, instead of after the campaign has been read. A guess from the
 * campaign's text only: a wrong guess costs that set-up on the other core, or nothing (the thread starts later as
 * before); never a different result.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { readerThreadWanted, warmReaderThread } from '../io/readerThread.ts';

/** File names a campaign gives NetCDF-4/HDF5 sample files (io/sampleSource.ts reads them by content). */
const NETCDF_NAME = /\.(nc|nc4|h5|hdf5|he5|cdf)\b/i;

/**
 * Whether `argv` is a run in this process on a campaign that names NetCDF files: `run CAMPAIGN` with one core
 * (`--cores 1`, or the default on machines under 4 cores: pipeline/run.ts defaultCores), its text read by `read`.
 */
export function earlyReaderWanted(argv: string[], read: (path: string) => string, parallelism: number): boolean {
  const words = argv.filter((a) => !a.startsWith('-'));
  if (words[0] !== 'run' || words.length < 2) return false;
  const cores = argv.indexOf('--cores');
  if (cores >= 0 ? argv[cores + 1] !== '1' : parallelism >= 4) return false;
  try {
    return NETCDF_NAME.test(read(words[1]));
  } catch {
    return false; // not a readable file: the command says so
  }
}

export function startEarly(argv: string[]): void {
  if (readerThreadWanted() && earlyReaderWanted(argv, (p) => readFileSync(p, 'utf8'), availableParallelism())) warmReaderThread();
}
