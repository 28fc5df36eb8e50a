// The output worker: writes NetCDF-4 files off the main thread, so that loading the HDF5 library (WebAssembly) and
// writing cost the ingest nothing on a machine with a second core. Messages: {op, file, args}; ops are the methods
// of NcFileWriter plus 'create'. The first error is reported back once ({error}); 'close' and 'abort' are answered.
import { readlinkSync, rmSync } from 'node:fs';
import { setPriority } from 'node:os';
import { join } from 'node:path';
import { parentPort, workerData } from 'node:worker_threads';
import { NcFileWriter } from './netcdfCore.mjs';
import { tuneWasmTiering } from './wasmTiering.mjs';

// Below the main thread in the scheduler (Linux: a thread's own nice value): the ingest comes first on a busy
// machine, this thread's work fills the gaps. Elsewhere, or without the right, nothing changes.
try {
  const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
  if (tid > 0) setPriority(tid, 10);
} catch { /* not Linux: same priority */ }

tuneWasmTiering();
const h5 = await import('h5wasm/node');
const M = await h5.ready;
M.activate_throwing_error_handler();
const files = new Map();
let failed = null;

// Warm-up: the first files written with a freshly loaded HDF5 library run its WebAssembly code unoptimised, about
// three times slower than later ones (measured: 60 variables of a field file, 180 ms cold, 50 ms warm). Two
// throwaway files in a temporary folder the starting thread made (and removes at its exit: netcdfWrite.ts), written
// now while the main thread reads the samples, take that cost off the end of the run. Any failure here is ignored:
// the real files report their own errors.
const { warmDir } = workerData ?? {};
if (warmDir) {
  try {
    for (let round = 0; round < 2; round++) {
      const w = new NcFileWriter(h5, join(warmDir, `warm-${round}.nc`));
      w.coordinate('t', new Float64Array(0), { units: 's' }, { unlimited: true });
      w.coordinate('z', new Float64Array(8), { units: 'm' });
      w.coordinate('y', new Float64Array(8), { units: 'm' });
      for (let k = 0; k < 40; k++) w.variable(`v${k}`, ['t', 'z', 'y'], new Float32Array(0), { units: 'm s-1', long_name: 'warm-up', _FillValue: new Float32Array([NaN]) });
      for (let k = 0; k < 40; k++) w.append(`v${k}`, new Float32Array(64));
      w.close();
    }
  } catch { /* not needed for correctness */ }
  try { rmSync(warmDir, { recursive: true, force: true }); } catch { /* removed at the process's exit */ }
}

function message(e) {
  const text = e instanceof Error ? e.message : String(e);
  const lines = text.split('\n').map((l) => l.match(/#\d+: .* in [\w.]+\(\): (.*)$/)?.[1]).filter(Boolean);
  return (lines.at(-1) ?? text.split('\n')[0]).trim();
}

parentPort.on('message', ({ op, file, args, reply }) => {
  const w = files.get(file);
  try {
    if (op === 'create') { if (!failed) files.set(file, new NcFileWriter(h5, args[0])); }
    else if (op === 'sync') { /* answered below, after every operation posted before it */ }
    else if (op === 'abort' || (op === 'close' && failed)) { w?.abort(); files.delete(file); }
    else if (!failed && w) { w[op](...args); if (op === 'close') files.delete(file); }
  } catch (e) {
    failed ??= `${w?.path ?? args?.[0] ?? file}: ${message(e)}`;
    w?.abort();
    files.delete(file);
  }
  if (reply !== undefined && reply !== null) parentPort.postMessage({ reply, error: failed });
});
parentPort.postMessage({ ready: true });
