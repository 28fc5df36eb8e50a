export type NcData = Float64Array | Float32Array | Int32Array | Int16Array | Int8Array | Uint8Array | string[];
export type NcAttr = string | number | number[] | Float64Array | Float32Array | Int32Array | Int16Array | Int8Array | Uint8Array;
export interface VariableOptions {
  chunks?: number[];
  deflate?: number;
}
export declare const GROW_CHUNK_ROWS: number;
export declare const GROW_CHUNK_BYTES: number;
export declare function setAttributes(obj: unknown, attrs: Record<string, NcAttr | undefined>): void;
export declare class NcFileWriter {
  constructor(h5: unknown, path: string);
  readonly path: string;
  coordinate(name: string, values: NcData, attrs: Record<string, NcAttr | undefined>, opts?: { unlimited?: boolean }): void;
  dimension(name: string, size: number): void;
  variable(name: string, dims: string[], data: NcData, attrs: Record<string, NcAttr | undefined>, opts?: VariableOptions): void;
  append(name: string, values: NcData): void;
  global(attrs: Record<string, NcAttr | undefined>): void;
  close(): void;
  abort(): void;
}
