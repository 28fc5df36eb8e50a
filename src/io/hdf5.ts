/**
 * HDF5 access for NetCDF-4 files through h5wasm (the HDF5 C library compiled to WebAssembly; no native build).
 * Loaded on first use only, so runs on text files never pay for it. HDF5's own error stack is turned into thrown
 * errors (h5wasm's throwing handler) instead of being printed, and shortened to its last, most specific line.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import type * as H5 from 'h5wasm';
import { tuneWasmTiering } from './wasmTiering.mjs';

export type H5Module = typeof H5;
let loaded: Promise<H5Module> | undefined;
/** The compiled library (what `h5.ready` resolves to), for SliceReader. */
let wasm: Hdf5Wasm | undefined;

/** The few functions of the compiled library SliceReader calls (h5wasm's own slice() calls the same). */
interface Hdf5Wasm {
  HEAPU8: Uint8Array;
  _malloc(n: number): number;
  _free(p: number): void;
  get_dataset_data(fileId: bigint, path: string, count: bigint[], offset: bigint[], strides: bigint[], ptr: bigint): number;
}

export function loadHdf5(): Promise<H5Module> {
  loaded ??= (async () => {
    tuneWasmTiering();
    const h5 = (await import('h5wasm/node')) as unknown as H5Module;
    const M = await h5.ready;
    M.activate_throwing_error_handler();
    wasm = M as unknown as Hdf5Wasm;
    return h5;
  })();
  return loaded;
}

type Dataset = InstanceType<H5Module['Dataset']>;

/**
 * Reads hyperslabs of numeric datasets as float64 into arrays it keeps, through one buffer in the library's memory
 * that it keeps too: h5wasm's slice() allocates, copies out and frees per call (new arrays for the collector each
 * time, and element types that vary per variable downstream). Same library call, same values: integers and floats
 * of 1 to 8 bytes (8-byte integers through Number, as the reader did before). Other types: `null` (the caller
 * falls back to slice()). Call `free()` when done. An array returned is valid until the next read of the same slot.
 */
export class SliceReader {
  private ptr = 0;
  private bytes = 0;
  private readonly out: Float64Array[] = [];

  /** Values of `ds` over `ranges` ([start, stop) per dimension) into slot `slot`'s array; null if not numeric. */
  read(ds: Dataset, ranges: [number, number][], slot: number): Float64Array | null {
    const M = wasm;
    const meta = ds.metadata as { type: number; size: number; signed: boolean; shape?: number[]; vlen?: boolean };
    if (!M || meta.vlen || (meta.type !== 0 && meta.type !== 1) || !meta.shape || (meta.type === 1 && meta.size !== 4 && meta.size !== 8)) return null;
    let n = 1;
    const count: bigint[] = [], offset: bigint[] = [], strides: bigint[] = [];
    for (const [a, b] of ranges) { n *= b - a; count.push(BigInt(b - a)); offset.push(BigInt(a)); strides.push(1n); }
    const nbytes = n * meta.size;
    if (nbytes > this.bytes) {
      if (this.ptr) M._free(this.ptr);
      this.bytes = Math.max(nbytes, 2 * this.bytes);
      this.ptr = M._malloc(this.bytes);
      if (this.ptr === 0) { this.bytes = 0; throw new Error(`memory allocation of ${nbytes} bytes failed`); }
    }
    M.get_dataset_data((ds as unknown as { file_id: bigint }).file_id, (ds as unknown as { path: string }).path, count, offset, strides, BigInt(this.ptr));
    let out = this.out[slot];
    if (!out || out.length < n) out = this.out[slot] = new Float64Array(Math.max(n, out ? 2 * out.length : 0));
    const buf = M.HEAPU8.buffer, p = this.ptr; // the memory may have grown during the read: view it now
    const { type, size, signed } = meta;
    if (type === 1) out.set(size === 8 ? new Float64Array(buf, p, n) : new Float32Array(buf, p, n));
    else if (size === 8) {
      const v = signed ? new BigInt64Array(buf, p, n) : new BigUint64Array(buf, p, n);
      for (let i = 0; i < n; i++) out[i] = Number(v[i]);
    } else if (size === 4) out.set(signed ? new Int32Array(buf, p, n) : new Uint32Array(buf, p, n));
    else if (size === 2) out.set(signed ? new Int16Array(buf, p, n) : new Uint16Array(buf, p, n));
    else out.set(signed ? new Int8Array(buf, p, n) : new Uint8Array(buf, p, n));
    return out.length === n ? out : out.subarray(0, n);
  }

  free(): void {
    if (this.ptr && wasm) wasm._free(this.ptr);
    this.ptr = 0;
    this.bytes = 0;
  }
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
