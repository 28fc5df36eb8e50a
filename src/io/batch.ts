/**
 * A columnar batch of line-of-sight samples as the readers yield them. SI units and the conventions of the campaign
 * schema: time in Unix seconds (UTC), azimuth degrees clockwise from north and elevation degrees above horizontal as
 * the instrument reported them (calibration not yet applied), range in metres as reported, radial velocity in m/s
 * positive away from the instrument, CNR in dB (NaN when the file has no CNR column).
 */
export interface SampleBatch {
  /** Number of valid rows (the arrays may be longer). */
  length: number;
  /** Source file (absolute path) and the 1-based line number of each row, for rejection reports. */
  file: string;
  line: Float64Array;
  time: Float64Array;
  instrument: Uint8Array;
  azimuth: Float64Array;
  elevation: Float64Array;
  range: Float64Array;
  radialVelocity: Float64Array;
  cnr: Float64Array;
}

/**
 * A row (text file) or sample (NetCDF) that could not be read: where, why, and its raw text. Text files name the
 * line; NetCDF files name the variable, ray and gate instead (line NaN).
 */
export interface RejectedRow {
  file: string;
  /** 1-based line of a text file; NaN for NetCDF. */
  line: number;
  /** NetCDF: the variable at fault and the 0-based ray (time) and gate (range) indices. */
  variable?: string;
  ray?: number;
  gate?: number;
  /** A RejectReason code (src/qc/reasons.ts). */
  reason: string;
  /** Human explanation naming the column and the value, e.g. 'column "range_m": not a number: "12,5"'. */
  detail: string;
  /** Raw text of the line (without its line break), truncated to 500 characters. */
  text: string;
  /** Index of the instrument the row names, when its instrument field could be read; else the file's owner is charged. */
  instrument?: number;
}

/** The memory of a batch's arrays, each buffer once: what is transferred when a batch crosses between threads. */
export function batchBuffers(b: SampleBatch): ArrayBuffer[] {
  const all = [b.line, b.time, b.instrument, b.azimuth, b.elevation, b.range, b.radialVelocity, b.cnr].map((a) => a.buffer as ArrayBuffer);
  return [...new Set(all)];
}

/**
 * Rows per ray in the first `length` rows of a batch: rows over the number of times (instrument, time, azimuth,
 * elevation) changes from one row to the next (a scanning instrument writes a ray's range gates one after the other;
 * instruments that focus or gate at the target write one row per beam). NaN for an empty batch.
 */
export function gatesPerRay(b: SampleBatch): number {
  const n = b.length;
  if (n === 0) return NaN;
  let rays = 1;
  for (let i = 1; i < n; i++) {
    if (b.time[i] !== b.time[i - 1] || b.azimuth[i] !== b.azimuth[i - 1] || b.elevation[i] !== b.elevation[i - 1] || b.instrument[i] !== b.instrument[i - 1]) rays++;
  }
  return n / rays;
}
