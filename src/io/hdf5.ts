/**
 * HDF5 access for NetCDF-4 files through h5wasm (the HDF5 C library compiled to WebAssembly; no native build).
 * Loaded on first use only, so runs on text files never pay for it. HDF5's own error stack is turned into thrown
 * errors (h5wasm's throwing handler) instead of being printed, and shortened to its last, most specific line.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import type * as H5 from 'h5wasm';

export type H5Module = typeof H5;
let loaded: Promise<H5Module> | undefined;

export function loadHdf5(): Promise<H5Module> {
  loaded ??= (async () => {
    const h5 = (await import('h5wasm/node')) as unknown as H5Module;
    const M = await h5.ready;
    M.activate_throwing_error_handler();
    return h5;
  })();
  return loaded;
}

/** The most specific message of an HDF5 error stack ("truncated file: eof = ...", "object 'x' doesn't exist"). */
export function hdf5Message(e: unknown): string {
  const text = e instanceof Error ? e.message : String(e);
  const lines = text.split('\n').map((l) => l.match(/#\d+: .* in [\w.]+\(\): (.*)$/)?.[1]).filter((l): l is string => !!l);
  return (lines.at(-1) ?? text.split('\n')[0]).trim();
}

const HDF5_SIGNATURE = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];

/** What a file's first bytes say it is. HDF5 may sit behind a user block of 512, 1024, 2048, ... bytes. */
export function sniffFormat(path: string): 'hdf5' | 'netcdf-classic' | 'gzip' | 'other' {
  const fd = openSync(path, 'r');
  try {
    const head = Buffer.alloc(8);
    const n = readSync(fd, head, 0, 8, 0);
    if (n >= 2 && head[0] === 0x1f && head[1] === 0x8b) return 'gzip';
    if (n >= 4 && head[0] === 0x43 && head[1] === 0x44 && head[2] === 0x46 && (head[3] === 1 || head[3] === 2 || head[3] === 5)) return 'netcdf-classic';
    for (let at = 0; at <= 1 << 16; at = at === 0 ? 512 : at * 2) {
      if (readSync(fd, head, 0, 8, at) < 8) break;
      if (HDF5_SIGNATURE.every((b, k) => head[k] === b)) return 'hdf5';
    }
    return 'other';
  } finally {
    closeSync(fd);
  }
}
