/**
 * Rows spread through a plain CSV sample file for the CNR-limit pre-pass (qc/cnrLimits.ts): the header, then `slices`
 * byte offsets evenly spaced between the end of the header and the end of the file, and from each the next whole
 * lines, up to rows / slices rows per slice. Deterministic (a function of the file and the two numbers), bounded (one
 * read buffer; the rows go to the caller), and independent of how a run later splits the file.
 *
 * Rows are parsed with the file's column layout (sampleColumns.ts resolveColumns) and the reader's field parsers
 * (sampleRow.ts): plain rows by a short loop here, every other row (quotes, empty or bad fields) by the reader's
 * careful path parseRowSlow: the same grammar, units, scale/offset and sign as the run's reader. Rows that do not
 * read are skipped (the run counts them). Compressed and NetCDF files are read from their start instead.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import type { ColumnMap } from '../campaign/schema.ts';
import { InputError } from '../errors.ts';
import { createDayCache } from './fastParse.ts';
import { resolveColumns } from './sampleColumns.ts';
import { R_AZ, R_CNR, R_EL, R_INST, R_RANGE, R_TIME, R_VR } from './sampleColumns.ts';
import { parseNumberField, parseRowSlow, parseTimeField, wrap360, type RowContext, type RowValues } from './sampleRow.ts';

export interface SliceOptions {
  instrumentIndex: Map<string, number>;
  owner: number;
  columns: ColumnMap;
  sign: 'away' | 'toward';
}

const BLOCK = 1 << 18;
/** Bytes per read: a slice needs a few tens of kB. */
const READ = 1 << 16;
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
    const quick = new QuickRow(ctx);
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
        const n = readSync(fd, buf, carry, Math.min(buf.length - carry, READ), pos);
        if (n <= 0) break;
        const end = carry + n;
        pos += n;
        let s = 0;
        if (first) {
          const j = nextNewline(buf, 0, end);
          if (j < 0) { carry = 0; continue; }
          s = j + 1;
          first = false;
        }
        for (;;) {
          const lineEnd = nextNewline(buf, s, end);
          if (lineEnd < 0) break;
          const ee = lineEnd > s && buf[lineEnd - 1] === 13 ? lineEnd - 1 : lineEnd;
          if (ee > s && !isBlank(buf, s, ee)) {
            taken++; total++;
            if (quick.row(buf, s, ee, out) || parseRowSlow(buf, s, ee, ctx, out) === null) onRow(out);
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

/** Index of the first line feed in b[s, e), or -1. */
function nextNewline(b: Uint8Array, s: number, e: number): number {
  for (let i = s; i < e; i++) if (b[i] === 10) return i;
  return -1;
}

function isBlank(b: Uint8Array, s: number, e: number): boolean {
  for (let i = s; i < e; i++) if (b[i] !== 32 && b[i] !== 9) return false;
  return true;
}

/**
 * A plain row (no quotes; every used field present and numeric; the instrument known) parsed without allocation:
 * fields split at commas and trimmed, then the reader's field parsers and checks. false: let the careful path decide.
 */
class QuickRow {
  private readonly fs = new Int32Array(64);
  private readonly fe = new Int32Array(64);
  private idBytes = new Uint8Array(0);
  private idIndex = -1;
  constructor(private readonly ctx: RowContext) {}

  row(b: Uint8Array, s: number, e: number, out: RowValues): boolean {
    const L = this.ctx.layout, fs = this.fs, fe = this.fe;
    let n = 0, a = s;
    for (let i = s; i <= e; i++) {
      if (i === e || b[i] === 44) {
        if (n === 64) return false;
        let x = a, y = i;
        while (x < y && (b[x] === 32 || b[x] === 9)) x++;
        while (y > x && (b[y - 1] === 32 || b[y - 1] === 9)) y--;
        fs[n] = x; fe[n] = y; n++;
        a = i + 1;
      } else if (b[i] === 34) return false; // quoted fields: the careful path
    }
    if (n < L.needed) return false;
    const ct = L.colOf[R_TIME];
    const iso = fe[ct] - fs[ct] >= 16 && b[fs[ct] + 4] === 45;
    const t = parseTimeField(b, fs[ct], fe[ct], this.ctx.days);
    if (!Number.isFinite(t)) return false;
    out.time = iso ? t + L.offset[R_TIME] : t * L.scale[R_TIME] + L.offset[R_TIME];
    const ci = L.colOf[R_INST];
    if (ci >= 0) {
      const x = fs[ci], y = fe[ci];
      if (!this.sameId(b, x, y)) {
        const k = this.ctx.instrumentIndex.get(new TextDecoder().decode(b.subarray(x, y)));
        if (k === undefined) return false;
        this.idBytes = b.slice(x, y);
        this.idIndex = k;
      }
      out.instrument = this.idIndex;
    } else out.instrument = this.ctx.owner;
    const az = this.num(b, R_AZ), el = this.num(b, R_EL), rg = this.num(b, R_RANGE), vr = this.num(b, R_VR), cnr = this.num(b, R_CNR);
    if (!(az >= -360 && az <= 720) || !(el >= -90 && el <= 90) || !(rg > 0 && rg < Infinity) || !Number.isFinite(vr) || cnr === Infinity) return false;
    out.azimuth = wrap360(az);
    out.elevation = el;
    out.range = rg;
    out.radialVelocity = vr;
    out.cnr = cnr;
    return true;
  }

  /** The SI value of a role's field; NaN for an absent column or an empty CNR; Infinity for anything else unusable. */
  private num(b: Uint8Array, r: number): number {
    const L = this.ctx.layout, c = L.colOf[r];
    if (c < 0) return NaN;
    if (this.fs[c] === this.fe[c]) return r === R_CNR ? NaN : Infinity;
    const v = parseNumberField(b, this.fs[c], this.fe[c]);
    return v === v ? v * L.scale[r] + L.offset[r] : Infinity;
  }

  private sameId(b: Uint8Array, x: number, y: number): boolean {
    const id = this.idBytes;
    if (this.idIndex < 0 || y - x !== id.length) return false;
    for (let i = 0; i < id.length; i++) if (b[x + i] !== id[i]) return false;
    return true;
  }
}
