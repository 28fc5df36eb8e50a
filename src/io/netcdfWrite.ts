/**
 * A small NetCDF-4 writer on h5wasm: dimensions as HDF5 dimension scales (a coordinate variable, or netCDF's
 * marker for a dimension without a variable), variables as chunked, deflate-compressed datasets attached to their
 * dimensions, text attributes as NC_CHAR (fixed-length ASCII/UTF-8 strings, what netCDF-C writes), numeric
 * attributes as double or as the type of the typed array given (a _FillValue must match its variable), text
 * variables as variable-length strings (NC_STRING). Link creation order is tracked, so ncdump lists variables in
 * the order written. An unlimited dimension grows by `append`.
 *
 * Used for the run's NetCDF outputs and by the tests' sample-file generator. Writes to `<path>.<pid>.tmp` and
 * renames on close, so a NetCDF output appears whole or not at all.
 */
import { renameSync, rmSync } from 'node:fs';
import { InputError } from '../errors.ts';
import { hdf5Message, loadHdf5, type H5Module } from './hdf5.ts';

type H5File = InstanceType<H5Module['File']>;
type H5Dataset = InstanceType<H5Module['Dataset']>;
export type NcData = Float64Array | Float32Array | Int32Array | Int16Array | Int8Array | Uint8Array | string[];
export type NcAttr = string | number | number[] | Float64Array | Float32Array | Int32Array | Int16Array | Int8Array | Uint8Array;

const DIM_WITHOUT_VARIABLE = 'This is a netCDF dimension but not a netCDF variable.';

function dtypeOf(d: NcData): string {
  if (Array.isArray(d)) return 'S';
  if (d instanceof Float64Array) return '<d';
  if (d instanceof Float32Array) return '<f';
  if (d instanceof Int32Array) return '<i';
  if (d instanceof Int16Array) return '<h';
  if (d instanceof Int8Array) return '<b';
  return '<B';
}

export function setAttributes(obj: { create_attribute: H5Dataset['create_attribute'] }, attrs: Record<string, NcAttr | undefined>): void {
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

export interface VariableOptions {
  /** Chunk shape (default: the whole variable, or 1 along an unlimited first dimension). */
  chunks?: number[];
  /** Deflate level 0-9. @default 4 */
  deflate?: number;
}

export class NcWriter {
  private readonly sizes = new Map<string, number>();
  private readonly unlimited = new Set<string>();
  private readonly vars = new Map<string, { ds: H5Dataset; dims: string[] }>();
  private constructor(
    private readonly f: H5File,
    readonly path: string,
    private readonly tmp: string,
  ) {}

  static async create(path: string): Promise<NcWriter> {
    const h5 = await loadHdf5();
    const tmp = `${path}.${process.pid}.tmp`;
    try {
      return new NcWriter(new h5.File(tmp, 'w', { track_order: true }), path, tmp);
    } catch (e) {
      throw new InputError(path, undefined, `cannot create NetCDF file: ${hdf5Message(e)}`);
    }
  }

  /** A dimension with its coordinate variable (a 1-D variable of the same name). `size` 0 + unlimited: grows by append. */
  coordinate(name: string, values: NcData, attrs: Record<string, NcAttr | undefined>, opts: { unlimited?: boolean } = {}): void {
    this.sizes.set(name, values.length);
    if (opts.unlimited) this.unlimited.add(name);
    const ds = this.f.create_dataset({
      name, data: values, shape: [values.length], dtype: dtypeOf(values),
      ...(opts.unlimited ? { maxshape: [null], chunks: [Math.max(1, Math.min(1024, values.length || 1))] } : {}),
    });
    ds.make_scale(name);
    setAttributes(ds, attrs);
    this.vars.set(name, { ds, dims: [name] });
  }

  /** A dimension without a coordinate variable (for example the two bounds of an interval). */
  dimension(name: string, size: number): void {
    this.sizes.set(name, size);
    const ds = this.f.create_dataset({ name, data: new Float32Array(size), shape: [size], dtype: '<f' });
    ds.make_scale(`${DIM_WITHOUT_VARIABLE}${String(size).padStart(10)}`);
  }

  variable(name: string, dims: string[], data: NcData, attrs: Record<string, NcAttr | undefined>, opts: VariableOptions = {}): void {
    const shape = dims.map((d) => {
      const n = this.sizes.get(d);
      if (n === undefined) throw new Error(`NetCDF variable ${name}: unknown dimension ${d}`);
      return n;
    });
    const total = shape.reduce((a, b) => a * b, 1);
    if (data.length !== total) throw new Error(`NetCDF variable ${name}: ${data.length} values for shape [${shape}]`);
    const grows = dims.length > 0 && this.unlimited.has(dims[0]);
    const text = Array.isArray(data);
    const chunks = opts.chunks ?? (grows ? [1, ...shape.slice(1)] : shape.map((n) => Math.max(1, n)));
    const ds = this.f.create_dataset({
      name, data, shape, dtype: dtypeOf(data),
      ...(grows ? { maxshape: [null, ...shape.slice(1)] } : {}),
      ...(text || total === 0 ? {} : { chunks, compression: opts.deflate ?? 4 }),
      ...(grows && !text ? { chunks } : {}),
    });
    dims.forEach((d, k) => ds.attach_scale(k, `/${d}`));
    setAttributes(ds, attrs);
    this.vars.set(name, { ds, dims });
  }

  /** Appends values along the unlimited dimension of `name` (its first), growing it. */
  append(name: string, values: NcData): void {
    const v = this.vars.get(name);
    if (!v) throw new Error(`NetCDF variable ${name} not defined`);
    const shape = v.ds.shape ?? [];
    const per = shape.slice(1).reduce((a, b) => a * b, 1);
    const rows = values.length / per;
    const at = shape[0];
    v.ds.resize([at + rows, ...shape.slice(1)]);
    v.ds.write_slice([[at, at + rows], ...shape.slice(1).map((n) => [0, n] as [number, number])], values);
  }

  global(attrs: Record<string, NcAttr | undefined>): void {
    setAttributes(this.f, attrs);
  }

  close(): void {
    this.f.close();
    renameSync(this.tmp, this.path);
  }

  abort(): void {
    try { this.f.close(); } catch { /* already closed */ }
    rmSync(this.tmp, { force: true });
  }
}
