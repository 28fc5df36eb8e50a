/**
 * Work begun before the command's modules load (bin/wakeplane.js calls this first; loading them takes about 0.2 s):
 * for `run` on a campaign naming NetCDF-4/HDF5 files, the sample reader thread starts and loads the HDF5 library
 * (about 0.3 s of WebAssembly set-up) meanwhile, instead of after the campaign has been read; for `run` on a
 * campaign that writes NetCDF outputs (the default), the output thread does the same, while the second core is
 * otherwise idle (the command's start is one thread's work), instead of during the ingest. Guesses from the
 * campaign's text only: a wrong guess costs that set-up on the other core, or nothing (the thread starts later as
 * before); never a different result.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { ncWorker } from '../io/netcdfWrite.ts';
import { readerThreadWanted, warmReaderThread } from '../io/readerThread.ts';

/** File names a campaign gives NetCDF-4/HDF5 sample files (io/sampleSource.ts reads them by content). */
const NETCDF_NAME = /\.(nc|nc4|h5|hdf5|he5|cdf)\b/i;

/**
 * Whether `argv` is a run in this process on a campaign that names NetCDF files: `run CAMPAIGN` with one core
 * (`--cores 1`, or the default on machines under 4 cores: pipeline/run.ts defaultCores), its text read by `read`.
 */
export function earlyReaderWanted(argv: string[], read: (path: string) => string, parallelism: number): boolean {
  const text = singleProcessRun(argv, read, parallelism);
  return text !== undefined && NETCDF_NAME.test(text);
}

/** `output: {netcdf: false}` (or no/off) in YAML or JSON text: the campaign writes no NetCDF. */
const NETCDF_OFF = /["']?netcdf["']?\s*:\s*(false|no|off)\b/i;

/**
 * Whether `argv` is a run in this process on a campaign that writes NetCDF outputs (campaign `output.netcdf`,
 * default true: its text does not turn them off).
 */
export function earlyWriterWanted(argv: string[], read: (path: string) => string, parallelism: number): boolean {
  const text = singleProcessRun(argv, read, parallelism);
  return text !== undefined && !NETCDF_OFF.test(text);
}

/** The campaign's text when `argv` is `run CAMPAIGN` in this process (see earlyReaderWanted), else undefined. */
function singleProcessRun(argv: string[], read: (path: string) => string, parallelism: number): string | undefined {
  const words = argv.filter((a) => !a.startsWith('-'));
  if (words[0] !== 'run' || words.length < 2) return undefined;
  const cores = argv.indexOf('--cores');
  if (cores >= 0 ? argv[cores + 1] !== '1' : parallelism >= 4) return undefined;
  try {
    return read(words[1]);
  } catch {
    return undefined; // not a readable file: the command says so
  }
}

export function startEarly(argv: string[]): void {
  const read = (p: string) => readFileSync(p, 'utf8');
  if (readerThreadWanted() && earlyReaderWanted(argv, read, availableParallelism())) warmReaderThread();
  if (availableParallelism() >= 2 && earlyWriterWanted(argv, read, availableParallelism())) ncWorker();
}
