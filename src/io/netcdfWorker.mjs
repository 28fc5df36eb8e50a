// The output worker: writes NetCDF-4 files off the main thread, so that loading the HDF5 library (WebAssembly) and
// writing cost the ingest nothing on a machine with a second core. Messages: {op, file, args}; ops are the methods
// of NcFileWriter plus 'create'. The first error is reported back once ({error}); 'close' and 'abort' are answered.
import { parentPort } from 'node:worker_threads';
import { NcFileWriter } from './netcdfCore.mjs';

const h5 = await import('h5wasm/node');
const M = await h5.ready;
M.activate_throwing_error_handler();
const files = new Map();
let failed = null;

function message(e) {
  const text = e instanceof Error ? e.message : String(e);
  const lines = text.split('\n').map((l) => l.match(/#\d+: .* in [\w.]+\(\): (.*)$/)?.[1]).filter(Boolean);
  return (lines.at(-1) ?? text.split('\n')[0]).trim();
}

parentPort.on('message', ({ op, file, args, reply }) => {
  const w = files.get(file);
  try {
    if (op === 'create') { if (!failed) files.set(file, new NcFileWriter(h5, args[0])); }
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
