// How V8 compiles the HDF5 library (WebAssembly, about 4 MB), set by every thread just before it loads the library
// (io/hdf5.ts, io/netcdfWorker.mjs). Plain JavaScript so that the output worker can run it without a TypeScript
// loader; types: wasmTiering.d.mts.
//
// V8 first compiles each WebAssembly function quickly (baseline) and recompiles it optimised on a background thread
// once it has run a budget of code. With the default budget a run recompiled hundreds of the library's functions
// per thread that loads it (file opening, attributes, chunk index), work that runs once: about 0.3-0.4 CPU-s per
// NetCDF run on the compiler threads, taken from the ingest on a two-core machine. A budget 100 times larger keeps
// the optimised recompilation for the functions that run hot over a long read (decompression). Measured on the
// benchmark (2026-12-03): one field file of 70 windows written 1.0 -> 0.75 CPU-s with the library's loading; runs
// from NetCDF-4 about 0.4 CPU-s less. The flag is process-wide and only affects WebAssembly; setting it again is
// harmless.
import { setFlagsFromString } from 'node:v8';

export const WASM_TIERING_FLAG = '--wasm-tiering-budget=180000000';

export function tuneWasmTiering() {
  try {
    setFlagsFromString(WASM_TIERING_FLAG);
  } catch { /* an engine without the flag: its own default */ }
}
