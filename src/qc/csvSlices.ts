/**
 * Rows spread through a plain CSV sample file for the CNR-limit pre-pass (cnrLimits.ts): the header, then `slices`
 * byte offsets evenly spaced between the end of the header and the end of the file, and from each the next whole
 * lines, up to rows / slices rows per slice. Deterministic (a function of the file and the two numbers), bounded (one
 * read buffer; the rows go to the caller), and independent of how a run later splits the file.
 *
 * Rows are parsed by the reader's careful path (io/sampleRow.ts parseRowSlow) with the file's column layout
 * (io/sampleColumns.ts resolveColumns): the same grammar, units, scale/offset and sign as the run's reader. Rows that
 * do not read are skipped (the run counts them). Compressed and NetCDF files are read from their start instead.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import type { ColumnMap } from '../campaign/schema.ts';
import { InputError } from '../errors.ts';
import { createDayCache } from '../io/fastParse.ts';
import { resolveColumns } from '../io/sampleColumns.ts';
import { parseRowSlow, type RowContext, type RowValues } from '../io/sampleRow.ts';

export interface SliceOptions {
  instrumentIndex: Map<string, number>;
  owner: number;
  columns: ColumnMap;
  sign: 'away' | 'toward';
}

const BLOCK = 1 << 18;
const MAX_LINE = 1 << 20;

/**
 * Calls onRow for up to `rows` rows taken from `slices` evenly spaced places of the file (fewer when the file is
 * short: a small file is read whole, once). Returns the rows read (good or not).
 */
export function readCsvSlices(path: string, opts: SliceOptions, rows: number, slices: number, onRow: (v: RowValues) => void): number {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    throw new InputError(path, undefined, `cannot read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  try {
    const size = fstatSync(fd).size;
    let buf = new Uint8Array(BLOCK);
    // The header: the first line.
    let got = readSync(fd, buf, 0, BLOCK, 0);
    let nl = buf.subarray(0, got).indexOf(10);
    while (nl < 0 && got === buf.length && buf.length < MAX_LINE) {
      const next = new Uint8Array(buf.length * 2);
      next.set(buf);
      got += readSync(fd, next, got, next.length - got, got);
      buf = next;
      nl = buf.subarray(0, got).indexOf(10);
    }
    if (nl < 0) nl = got;
    const headEnd = nl + 1;
    const le = nl > 0 && buf[nl - 1] === 13 ? nl - 1 : nl;
    const layout = resolveColumns(path, new TextDecoder().decode(buf.subarray(0, le)), opts.columns, opts.sign, opts.owner >= 0);
    const ctx: RowContext = { layout, instrumentIndex: opts.instrumentIndex, owner: opts.owner, days: createDayCache() };
    const out: RowValues = { time: NaN, instrument: 0, azimuth: NaN, elevation: NaN, range: NaN, radialVelocity: NaN, cnr: NaN };
    const body = size - headEnd;
    const K = Math.max(1, Math.min(slices, Math.floor(body / BLOCK) || 1));
    const perSlice = Math.ceil(rows / K);
    let total = 0;
    let readTo = headEnd; // bytes before this were read by an earlier slice (slices never overlap)
    for (let k = 0; k < K && total < rows; k++) {
      const start = Math.max(readTo, headEnd + Math.floor((k * body) / K));
      const stop = k + 1 < K ? headEnd + Math.floor(((k + 1) * body) / K) : size;
      let pos = start, taken = 0, first = start > headEnd && start !== readTo; // mid-line: skip to the next line start
      let carry = 0; // bytes of a partial line kept at buf[0, carry)
      while (pos < size && taken < perSlice && total < rows) {
        if (carry >= buf.length) break; // a line longer than the buffer: give up on this slice
        const n = readSync(fd, buf, carry, buf.length - carry, pos);
        if (n <= 0) break;
        const end = carry + n;
        pos += n;
        let s = 0;
        if (first) {
          const j = buf.subarray(0, end).indexOf(10);
          if (j < 0) { carry = 0; continue; }
          s = j + 1;
          first = false;
        }
        for (;;) {
          const e = buf.subarray(s, end).indexOf(10);
          if (e < 0) break;
          const lineEnd = s + e;
          const ee = lineEnd > s && buf[lineEnd - 1] === 13 ? lineEnd - 1 : lineEnd;
          if (ee > s && !isBlank(buf, s, ee)) {
            taken++; total++;
            if (parseRowSlow(buf, s, ee, ctx, out) === null) onRow(out);
          }
          s = lineEnd + 1;
          if (taken >= perSlice || total >= rows) break;
        }
        // Keep the partial line for the next read; stop a slice at the next slice's start (its lines are its own).
        carry = end - s;
        buf.copyWithin(0, s, end);
        if (pos - carry >= stop) break;
      }
      if (pos >= size && carry > 0 && taken < perSlice && total < rows) {
        // a last line without a line break
        const ee = buf[carry - 1] === 13 ? carry - 1 : carry;
        if (ee > 0 && !isBlank(buf, 0, ee)) {
          total++;
          if (parseRowSlow(buf, 0, ee, ctx, out) === null) onRow(out);
        }
      }
      readTo = pos - carry;
    }
    return total;
  } finally {
    closeSync(fd);
  }
}

function isBlank(b: Uint8Array, s: number, e: number): boolean {
  for (let i = s; i < e; i++) if (b[i] !== 32 && b[i] !== 9) return false;
  return true;
}
