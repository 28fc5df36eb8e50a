// The NetCDF-4 file writer on h5wasm, in plain JavaScript so that the output worker (netcdfWorker.mjs) can run it
// without a TypeScript loader; netcdfWrite.ts wraps it for the main thread and documents the format choices.
// Types: netcdfCore.d.mts.
import { renameSync, rmSync } from 'node:fs';

const DIM_WITHOUT_VARIABLE = 'This is a netCDF dimension but not a netCDF variable.';
/** Rows (steps of the unlimited dimension) per chunk of a growing variable at most: the windows a run writes at once. */
export const GROW_CHUNK_ROWS = 64;
/** Bytes per chunk of a growing variable at most, unless one row is larger (a chunk holds at least one row). */
export const GROW_CHUNK_BYTES = 1 << 20;

function dtypeOf(d) {
  if (Array.isArray(d)) return 'S';
  if (d instanceof Float64Array) return '<d';
  if (d instanceof Float32Array) return '<f';
  if (d instanceof Int32Array) return '<i';
  if (d instanceof Int16Array) return '<h';
  if (d instanceof Int8Array) return '<b';
  return '<B';
}

export function setAttributes(obj, attrs) {
  for (const [name, v] of Object.entries(attrs)) {
    if (v === undefined) continue;
    if (typeof v === 'string') {
      const text = v === '' ? ' ' : v;
      obj.create_attribute(name, text, null, `A${Buffer.byteLength(text)}`);
    } else if (typeof v === 'number') obj.create_attribute(name, new Float64Array([v]));
    else if (Array.isArray(v)) obj.create_attribute(name, Float64Array.from(v));
    else obj.create_attribute(name, v);
  }
}

export class NcFileWriter {
  constructor(h5, path) {
    this.path = path;
    this.tmp = `${path}.${process.pid}.tmp`;
    this.sizes = new Map();
    this.unlimited = new Set();
    this.vars = new Map();
    this.f = new h5.File(this.tmp, 'w', { track_order: true });
  }

  coordinate(name, values, attrs, opts = {}) {
    this.sizes.set(name, values.length);
    if (opts.unlimited) this.unlimited.add(name);
    const ds = this.f.create_dataset({
      name, data: values, shape: [values.length], dtype: dtypeOf(values),
      ...(opts.unlimited ? { maxshape: [null], chunks: [Math.max(1, Math.min(1024, values.length || 1))] } : {}),
    });
    ds.make_scale(name);
    setAttributes(ds, attrs);
    this.vars.set(name, ds);
  }

  dimension(name, size) {
    this.sizes.set(name, size);
    const ds = this.f.create_dataset({ name, data: new Float32Array(size), shape: [size], dtype: '<f' });
    ds.make_scale(`${DIM_WITHOUT_VARIABLE}${String(size).padStart(10)}`);
  }

  variable(name, dims, data, attrs, opts = {}) {
    const shape = dims.map((d) => {
      const n = this.sizes.get(d);
      if (n === undefined) throw new Error(`NetCDF variable ${name}: unknown dimension ${d}`);
      return n;
    });
    const total = shape.reduce((a, b) => a * b, 1);
    if (data.length !== total) throw new Error(`NetCDF variable ${name}: ${data.length} values for shape [${shape}]`);
    const text = Array.isArray(data);
    // Text is written whole (a variable on an unlimited dimension defined once its rows are in, as bin labels at
    // the close), numbers may grow by append.
    const grows = dims.length > 0 && this.unlimited.has(dims[0]) && !text;
    // A growing variable is chunked by up to GROW_CHUNK_ROWS rows (windows) of about GROW_CHUNK_BYTES at most: one
    // chunk per row made thousands of tiny chunks in a long campaign (each compressed and indexed on its own).
    const rowBytes = Math.max(1, shape.slice(1).reduce((a, b) => a * b, 1) * (data.BYTES_PER_ELEMENT ?? 8));
    const chunks = opts.chunks ?? (grows ? [Math.max(1, Math.min(GROW_CHUNK_ROWS, Math.floor(GROW_CHUNK_BYTES / rowBytes))), ...shape.slice(1)] : shape.map((n) => Math.max(1, n)));
    const ds = this.f.create_dataset({
      name, data, shape, dtype: dtypeOf(data),
      ...(grows ? { maxshape: [null, ...shape.slice(1)] } : {}),
      // Small fixed-size variables are stored contiguously: chunking and deflate cost more than they save there.
      ...(text || total === 0 || (!grows && total < 4096 && opts.deflate === undefined) ? {} : { chunks, compression: opts.deflate ?? 4 }),
      ...(grows && !text ? { chunks } : {}),
    });
    dims.forEach((d, k) => ds.attach_scale(k, `/${d}`));
    setAttributes(ds, attrs);
    this.vars.set(name, ds);
  }

  append(name, values) {
    const ds = this.vars.get(name);
    if (!ds) throw new Error(`NetCDF variable ${name} not defined`);
    const shape = ds.shape ?? [];
    const rest = shape.slice(1);
    const per = rest.reduce((a, b) => a * b, 1);
    const rows = values.length / per;
    const at = shape[0];
    ds.resize([at + rows, ...rest]);
    ds.write_slice([[at, at + rows], ...rest.map((n) => [0, n])], values);
    // an unlimited dimension's coordinate: its current length is the dimension's size for variables defined later
    if (this.unlimited.has(name)) this.sizes.set(name, at + rows);
  }

  global(attrs) {
    setAttributes(this.f, attrs);
  }

  close() {
    this.f.close();
    renameSync(this.tmp, this.path);
  }

  abort() {
    try { this.f.close(); } catch { /* already closed */ }
    rmSync(this.tmp, { force: true });
  }
}
