/**
 * Streaming reader of line-of-sight sample files (CSV with a header row). Reads 1 MiB at a time into one reused
 * buffer (lineBlocks.ts: partial lines carried to the next read), parses bytes straight from it (no per-line strings
 * on the fast path), and yields columnar batches plus the rows it could not read. Holds one read buffer and two
 * batches per open file, never the file.
 *
 * Columns (header names by default; `columns` renames them and sets scale/offset to SI):
 *   time                 ISO 8601 (UTC, or with an offset, converted to UTC; no zone = UTC) or Unix seconds
 *   instrument           instrument id; optional when the file has an owning instrument
 *   azimuth_deg          degrees clockwise from north, accepted in [-360, 720], normalised into [0, 360)
 *   elevation_deg        degrees above horizontal, [-90, 90]
 *   range_m              metres along the beam, > 0
 *   radial_velocity_ms   m/s; the result is positive away from the instrument (a 'toward' file is flipped)
 *   cnr_db               dB, optional (NaN when the column is absent or the cell empty)
 * Scale/offset apply to numeric values (SI = stored * scale + offset); for ISO times only the offset applies.
 *
 * Rows: CRLF and LF line breaks, a UTF-8 BOM, blank lines (skipped, not rows, but line numbers stay physical),
 * quoted fields (without line breaks inside), spaces around values, fields beyond the last used column ignored.
 * Every data row ends up either in a batch or in `rejected` (file, 1-based line, reason, detail, raw text), so
 * rows read = batch rows + rejected rows exactly. The reason of a bad row is decided by sampleRow.ts.
 *
 * Batch lifetime: a yielded batch is valid until the consumer pulls the next chunk of the same file; after that
 * its arrays are reused (copy what must outlive it). With `reuseBatches: false` every batch is fresh and may be kept.
 */
import type { ColumnMap } from '../campaign/schema.ts';
import { InputError } from '../errors.ts';
import { fileProblem } from './fileKind.ts';
import type { RejectReason } from '../qc/reasons.ts';
import type { RejectedRow, SampleBatch } from './batch.ts';
import { LineBlocks, type LineBlock } from './lineBlocks.ts';
import { NAN, POW10, createDayCache, parseDecimal, parseIsoBytes, parsedTo } from './fastParse.ts';
import { R_AZ, R_CNR, R_EL, R_IGNORE, R_INST, R_RANGE, R_TIME, R_VR, resolveColumns, type ColumnLayout } from './sampleColumns.ts';
import { parseRowSlow, wrap360, type RowContext, type RowValues } from './sampleRow.ts';

export interface SampleReaderOptions {
  /** Instrument id -> index (Campaign.instruments[i].index); rows naming another id are rejected 'unknown_instrument'. */
  instrumentIndex: Map<string, number>;
  /** Index of the instrument owning the file, used for rows when the file has no instrument column; -1 for none. */
  owner: number;
  /** Column mapping (campaign `instruments[].columns`): each entry a header name or {name, scale, offset}. */
  columns: ColumnMap;
  /** 'toward': the file's radial velocities are positive toward the instrument; the reader flips them to 'away'. */
  sign: 'away' | 'toward';
  /** The file is gzip-compressed (.csv.gz): decompressed as a stream. @default false */
  gzip?: boolean;
  /** Rows per batch. @default 65536 */
  batchSize?: number;
  /** Bytes per read (tests use tiny values to exercise chunk boundaries). @default 1048576 */
  highWaterMark?: number;
  /**
   * Recycle batch arrays: a yielded batch stays valid until the consumer pulls the next chunk, and its arrays are
   * refilled after that (two batches per file in all; far less allocation and garbage collection). false: every
   * batch is a fresh allocation the consumer may keep. @default true
   */
  reuseBatches?: boolean;
  /**
   * NetCDF-4 files: read on the shared reader thread (readerThread.ts), decompression and conversion beside the
   * caller's work (other formats read here: sampleSource.ts says why). Batches arrive from the thread and go back to
   * it when the consumer pulls the next chunk (the reuseBatches contract). @default false
   */
  thread?: boolean;
  /**
   * With `thread`: text files (CSV, CSV.gz) too go to the reader thread. The ingest asks for it for files without ray
   * structure (io/batch.ts gatesPerRay), whose per-sample work on the caller outweighs the parsing (sampleSource.ts).
   * @default false
   */
  textThread?: boolean;
  /** Spare batches to fill instead of allocating (the reader thread's recycled ones). */
  batchPool?: SampleBatch[];
}

export interface SampleChunk {
  batch: SampleBatch;
  rejected: RejectedRow[];
}

/** Longest line accepted, bytes; a longer line is rejected without being held whole. */
const MAX_LINE = 1 << 20;
const MAX_TEXT = 500;

/** An empty batch of at least n rows from `pool` (batches handed back by a consumer on another thread), if any. */
export function pooledBatch(pool: SampleBatch[] | undefined, file: string, n: number): SampleBatch | undefined {
  while (pool?.length) {
    const b = pool.pop()!;
    // A new object over the same arrays, in createBatch's shape: a batch back from another thread was rebuilt by the
    // message deserialiser with another layout, which sent the parser's optimised code back to the interpreter on
    // every batch (about 50 deoptimisations of fillCanonical per run on the benchmark without ray structure).
    if (b.time.length >= n) return { length: 0, file, line: b.line, time: b.time, instrument: b.instrument, azimuth: b.azimuth, elevation: b.elevation, range: b.range, radialVelocity: b.radialVelocity, cnr: b.cnr };
  }
  return undefined;
}

function createBatch(file: string, n: number): SampleBatch {
  return {
    length: 0,
    file,
    line: new Float64Array(n),
    time: new Float64Array(n),
    instrument: new Uint8Array(n),
    azimuth: new Float64Array(n),
    elevation: new Float64Array(n),
    range: new Float64Array(n),
    radialVelocity: new Float64Array(n),
    cnr: new Float64Array(n),
  };
}

interface ReaderState {
  ctx: RowContext;
  batch: SampleBatch;
  rejected: RejectedRow[];
  /** Physical line number of the last line consumed. */
  line: number;
  scratch: RowValues;
  /** Last instrument id bytes seen in the instrument column and its index. */
  idBytes: Uint8Array;
  idLen: number;
  idIndex: number;
  /** Field values of the row being parsed, by role (fillCanonical). */
  values: Float64Array;
}

const dec = new TextDecoder();

function reject(st: ReaderState, buf: Uint8Array, s: number, e: number, reason: RejectReason, detail: string, instrument?: number): void {
  const row: RejectedRow = {
    file: st.ctx.layout.file,
    line: st.line,
    reason,
    detail,
    text: dec.decode(buf.subarray(s, Math.min(e, s + MAX_TEXT))),
  };
  if (instrument !== undefined) row.instrument = instrument;
  st.rejected.push(row);
}

/** Careful path for one line [s, e): stores the row or records its rejection. Returns true when stored. */
function slowRow(st: ReaderState, buf: Uint8Array, s: number, e: number): boolean {
  // a line of only spaces/tabs is blank
  let k = s;
  while (k < e && (buf[k] === 32 || buf[k] === 9)) k++;
  if (k === e) return false;
  const v = st.scratch;
  const p = parseRowSlow(buf, s, e, st.ctx, v);
  if (p !== null) {
    reject(st, buf, s, e, p.reason, p.detail, p.instrument);
    return false;
  }
  const b = st.batch, n = b.length++;
  b.line[n] = st.line;
  b.time[n] = v.time;
  b.instrument[n] = v.instrument;
  b.azimuth[n] = v.azimuth;
  b.elevation[n] = v.elevation;
  b.range[n] = v.range;
  b.radialVelocity[n] = v.radialVelocity;
  b.cnr[n] = v.cnr;
  return true;
}

/**
 * The fast path declined the line [pos, nl): hand it to the careful path (kept out of fillBatch to keep the hot
 * loop small). Returns the batch length after it.
 */
function carefulLine(st: ReaderState, buf: Buffer, pos: number, nl: number, n: number, line: number): number {
  const le = nl > pos && buf[nl - 1] === 13 ? nl - 1 : nl;
  st.batch.length = n;
  st.line = line;
  if (le - pos > MAX_LINE) reject(st, buf, pos, le, 'missing_field', `line longer than ${MAX_LINE} bytes`);
  else slowRow(st, buf, pos, le);
  return st.batch.length;
}

/** Instrument id field [s, e) against the cached id; -1 on a miss that is not a known id (slow path decides). */
function instrumentOf(st: ReaderState, buf: Uint8Array, s: number, e: number): number {
  const len = e - s;
  if (len === st.idLen) {
    const ib = st.idBytes;
    let k = 0;
    while (k < len && ib[k] === buf[s + k]) k++;
    if (k === len) return st.idIndex;
  }
  if (len === 0 || len > 64) return -1;
  const idx = st.ctx.instrumentIndex.get(dec.decode(buf.subarray(s, e)));
  if (idx === undefined) return -1;
  st.idBytes.set(buf.subarray(s, e));
  st.idLen = len;
  st.idIndex = idx;
  return idx;
}

/** True when the columns are exactly time, instrument, azimuth, elevation, range, radial velocity, cnr, in that order. */
function isCanonicalLayout(L: ColumnLayout): boolean {
  if (L.needed !== 7) return false;
  for (let c = 0; c < 7; c++) if (L.roleOf[c] !== c) return false;
  return true;
}

/**
 * fillBatch for the canonical column order (what the simulator writes and most files hold): the same grammar and
 * checks as fillBatch with parseDecimal (plain decimals of at most 15 digits, no exponent), written as one small
 * loop over the numeric fields inside this function so that the optimiser keeps it whole; measured about 1.25x
 * the rows per second of the role dispatch. Any line it cannot take whole goes to the careful path.
 * Scanning may run to the block's last byte only: a block always ends with a line feed, where every field stops.
 *
 * Scanning instruments write one row per range gate with the ray's time and angles repeated: when a row starts
 * with exactly the bytes of the previous stored row's time, instrument, azimuth and elevation fields (commas
 * included), their values are taken over instead of parsed again (equal text, equal values).
 */
function fillCanonical(st: ReaderState, buf: Buffer, pos: number, end: number): number {
  const L: ColumnLayout = st.ctx.layout;
  const days = st.ctx.days;
  const b = st.batch, cap = b.time.length;
  const LN = b.line, T = b.time, I = b.instrument, AZ = b.azimuth, EL = b.elevation, RG = b.range, VR = b.radialVelocity, CN = b.cnr;
  const sc = L.scale, of = L.offset, V = st.values;
  let n = b.length;
  let line = st.line;
  // the previous stored row's first four fields: bytes [pStart, pStart + pLen) of buf, values in V[0], inst, V[2], V[3]
  let pStart = 0, pLen = 0, inst = -1;
  while (pos < end && n < cap) {
    line++;
    const first = buf[pos];
    if (first === 10 || (first === 13 && buf[pos + 1] === 10)) { pos += first === 10 ? 1 : 2; continue; } // blank
    let i = pos, ok = true, r0 = 0, head = 0;
    if (pLen > 0) {
      // From the end: where the prefix differs (a new ray), its last digits (elevation) usually differ first.
      let k = pLen - 1;
      while (k >= 0 && buf[pos + k] === buf[pStart + k]) k--;
      if (k < 0) { i = pos + pLen; r0 = 4; }
    }
    // fields in order: time (0), instrument (1), azimuth .. cnr (2 .. 6); V[r] = SI value of role r
    for (let r = r0; r < 7; r++) {
      if (r === 1) {
        const s0 = i;
        let ch = buf[i];
        while (ch !== 44 && ch !== 10 && ch !== 13 && ch !== 34) ch = buf[++i];
        if (ch !== 44) { ok = false; break; }
        inst = instrumentOf(st, buf, s0, i);
        if (inst < 0) { ok = false; break; }
        i++;
        continue;
      }
      if (r === 0 && buf[i + 4] === 45) {
        const t = parseIsoBytes(buf, i, end, days);
        if (t !== t) { ok = false; break; }
        V[0] = t + of[0];
        i = parsedTo();
      } else {
        const f0 = i;
        let c = buf[i], neg = false;
        if (c === 45) { neg = true; c = buf[++i]; }
        else if (c === 43) c = buf[++i];
        let m = 0, nd = 0, fd = 0;
        while (c >= 48 && c <= 57) { m = m * 10 + (c - 48); nd++; c = buf[++i]; }
        if (c === 46) {
          c = buf[++i];
          while (c >= 48 && c <= 57) { m = m * 10 + (c - 48); fd++; c = buf[++i]; }
        }
        nd += fd;
        if (nd === 0 || nd > 15) {
          // an empty cnr cell is allowed (NaN); anything else goes to the careful path
          if (r === 6 && i === f0 && (c === 44 || c === 10 || c === 13)) V[6] = NAN[0];
          else { ok = false; break; }
        } else {
          const v = fd === 0 ? m : m / POW10[fd];
          V[r] = (neg ? -v : v) * sc[r] + of[r];
        }
      }
      if (r < 6) {
        if (buf[i] !== 44) { ok = false; break; }
        i++;
        if (r === 3) head = i - pos;
      }
    }
    let nl: number;
    const ch = buf[i];
    if (ok && ch === 10) nl = i;
    else if (ok && ch === 13 && buf[i + 1] === 10) nl = i + 1;
    else {
      if (ok && ch !== 44) ok = false; // 44: ignored trailing fields
      nl = buf.indexOf(10, i);
    }
    const az = V[2], el = V[3], rg = V[4];
    if (ok && az >= -360 && az <= 720 && el >= -90 && el <= 90 && rg > 0 && rg < Infinity) {
      LN[n] = line;
      T[n] = V[0];
      I[n] = inst;
      AZ[n] = az > 0 && az < 360 ? az : wrap360(az);
      EL[n] = el;
      RG[n] = rg;
      VR[n] = V[5];
      CN[n] = V[6];
      n++;
      if (r0 === 0) { pStart = pos; pLen = head; }
    } else {
      n = carefulLine(st, buf, pos, nl, n, line);
      pLen = 0;
    }
    pos = nl + 1;
  }
  st.line = line;
  b.length = n;
  return pos;
}

/**
 * Parses complete lines of `buf` from `pos` up to `end` (just after a line break) into the current batch until it
 * is full. Returns the position reached.
 */
function fillBatch(st: ReaderState, buf: Buffer, pos: number, end: number): number {
  const L: ColumnLayout = st.ctx.layout;
  const roles = L.roleOf, needed = L.needed, days = st.ctx.days, owner = st.ctx.owner;
  const b = st.batch, cap = b.time.length;
  const LN = b.line, T = b.time, I = b.instrument, AZ = b.azimuth, EL = b.elevation, RG = b.range, VR = b.radialVelocity, CN = b.cnr;
  const sc = L.scale, of = L.offset;
  const sT = sc[R_TIME], oT = of[R_TIME], sAz = sc[R_AZ], oAz = of[R_AZ], sEl = sc[R_EL], oEl = of[R_EL];
  const sRg = sc[R_RANGE], oRg = of[R_RANGE], sVr = sc[R_VR], oVr = of[R_VR], sCn = sc[R_CNR], oCn = of[R_CNR];
  let n = b.length;
  let line = st.line;
  while (pos < end && n < cap) {
    // fields are parsed up to the block end: every parser stops at ',', '\r' or '\n', which no grammar accepts
    line++;
    let i = pos, ok = true;
    let t = NaN, inst = owner, az = NaN, el = NaN, rg = NaN, vr = NaN, cn = NaN;
    const first = buf[pos];
    if (first === 10 || (first === 13 && buf[pos + 1] === 10)) { pos += first === 10 ? 1 : 2; continue; } // blank
    for (let c = 0; c < needed; c++) {
      const r = roles[c];
      if (r === R_TIME) {
        if (buf[i + 4] === 45) t = parseIsoBytes(buf, i, end, days) + oT;
        else t = parseDecimal(buf, i, end) * sT + oT;
        if (t !== t) { ok = false; break; }
        i = parsedTo();
      } else if (r === R_IGNORE || r === R_INST) {
        const s0 = i;
        for (;;) {
          const ch = buf[i];
          if (ch === 44 || ch === 10 || ch === 13) break;
          if (ch === 34) { ok = false; break; }
          i++;
        }
        if (!ok) break;
        if (r === R_INST) {
          inst = instrumentOf(st, buf, s0, i);
          if (inst < 0) { ok = false; break; }
        }
      } else {
        const v = parseDecimal(buf, i, end);
        if (v !== v) {
          const ch = buf[i];
          if (r === R_CNR && (ch === 44 || ch === 10 || ch === 13)) cn = NaN; // empty optional cell
          else { ok = false; break; }
        } else {
          i = parsedTo();
          if (r === R_AZ) az = v * sAz + oAz;
          else if (r === R_EL) el = v * sEl + oEl;
          else if (r === R_RANGE) rg = v * sRg + oRg;
          else if (r === R_VR) vr = v * sVr + oVr;
          else cn = v * sCn + oCn;
        }
      }
      if (c < needed - 1) {
        if (buf[i] !== 44) { ok = false; break; }
        i++;
      }
    }
    // the line break: right after the last used field, or further on (ignored trailing fields, or a bad row)
    let nl: number;
    const ch = buf[i];
    if (ok && ch === 10) nl = i;
    else if (ok && ch === 13 && buf[i + 1] === 10) nl = i + 1;
    else {
      if (ok && ch !== 44) ok = false;
      nl = buf.indexOf(10, i);
    }
    if (ok && az >= -360 && az <= 720 && el >= -90 && el <= 90 && rg > 0 && rg < Infinity) {
      LN[n] = line;
      T[n] = t;
      I[n] = inst;
      AZ[n] = az > 0 && az < 360 ? az : wrap360(az);
      EL[n] = el;
      RG[n] = rg;
      VR[n] = vr;
      CN[n] = cn;
      n++;
    } else n = carefulLine(st, buf, pos, nl, n, line);
    pos = nl + 1;
  }
  st.line = line;
  b.length = n;
  return pos;
}

/** Reads the header line; returns its layout, the first block and where the data start in it. */
async function readHeader(path: string, opts: SampleReaderOptions, blocks: LineBlocks): Promise<{ layout: ColumnLayout; block: LineBlock | null; pos: number }> {
  const block = await blocks.next();
  if (block === null) throw new InputError(path, 1, 'empty file: no header row');
  if (block.long) throw new InputError(path, 1, `header line longer than ${MAX_LINE} bytes`);
  const nl = block.buf.indexOf(10);
  const le = nl > 0 && block.buf[nl - 1] === 13 ? nl - 1 : nl;
  const layout = resolveColumns(path, dec.decode(block.buf.subarray(0, le)), opts.columns, opts.sign, opts.owner >= 0);
  return { layout, block, pos: nl + 1 };
}

async function openBlocks(path: string, readSize: number, gzip = false): Promise<LineBlocks> {
  const bad = fileProblem(path);
  if (bad) throw new InputError(path, undefined, `data file ${bad.reason}`);
  try {
    return await LineBlocks.open(path, readSize, MAX_LINE, gzip);
  } catch (e) {
    throw new InputError(path, undefined, `cannot read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
}

async function nextBlock(blocks: LineBlocks, path: string, line: number): Promise<LineBlock | null> {
  try {
    return await blocks.next();
  } catch (e) {
    throw new InputError(path, line, `read failed: ${(e as Error).message}`);
  }
}

/** What checkHeader saw at the start of a file. */
export interface HeaderInfo {
  /** Header names as read. */
  header: string[];
  /** A non-blank line follows the header (within the first MiB; beyond that assumed). */
  hasDataLine: boolean;
  /** Mean bytes per line after the header in the first block (NaN when none): for progress estimates. */
  bytesPerLine: number;
}

/**
 * Reads only the start of a file: the header (throws InputError(file, 1, 'missing required column "x" ...') before
 * any data is read) and whether a data line follows. Throws InputError naming the file for a path that is not a
 * readable regular file (see fileKind.ts).
 */
export async function checkHeader(path: string, opts: SampleReaderOptions): Promise<HeaderInfo> {
  const blocks = await openBlocks(path, Math.min(opts.highWaterMark ?? 65536, 65536), opts.gzip);
  try {
    const head = await readHeader(path, opts, blocks);
    let block = head.block, pos = head.pos, seen = 0, bytesPerLine = NaN;
    while (block !== null && seen < 1 << 20) {
      const { buf, end } = block;
      if (!block.long) {
        let lines = 0;
        for (let i = pos; i < end; i++) if (buf[i] === 10) lines++;
        if (lines > 0 && bytesPerLine !== bytesPerLine) bytesPerLine = (end - pos) / lines;
        for (let i = pos; i < end; i++) {
          const c = buf[i];
          if (c !== 10 && c !== 13 && c !== 32 && c !== 9) return { header: head.layout.header, hasDataLine: true, bytesPerLine };
        }
      } else return { header: head.layout.header, hasDataLine: true, bytesPerLine };
      seen += end;
      block = await nextBlock(blocks, path, 2);
      pos = 0;
    }
    return { header: head.layout.header, hasDataLine: block !== null, bytesPerLine };
  } finally {
    await blocks.close();
  }
}

/**
 * Streams the samples of one file as batches of at most `batchSize` rows plus the rows rejected meanwhile. Throws
 * InputError on a header problem before the first yield. A batch is valid until the next pull (see reuseBatches).
 */
export async function* readSamples(path: string, opts: SampleReaderOptions): AsyncGenerator<SampleChunk> {
  const batchSize = opts.batchSize ?? 65536;
  const blocks = await openBlocks(path, opts.highWaterMark ?? 1 << 20, opts.gzip);
  const reuse = opts.reuseBatches ?? true;
  let st: ReaderState | undefined;
  let spare: SampleBatch | null = null;
  try {
    const head = await readHeader(path, opts, blocks);
    st = {
      ctx: { layout: head.layout, instrumentIndex: opts.instrumentIndex, owner: opts.owner, days: createDayCache() },
      batch: pooledBatch(opts.batchPool, path, batchSize) ?? createBatch(path, batchSize),
      rejected: [],
      line: 1,
      scratch: { time: NaN, instrument: 0, azimuth: NaN, elevation: NaN, range: NaN, radialVelocity: NaN, cnr: NaN },
      idBytes: new Uint8Array(64),
      idLen: -1,
      idIndex: -1,
      values: new Float64Array(7),
    };
    const canonical = isCanonicalLayout(head.layout);
    let block = head.block;
    let pos = head.pos;
    while (block !== null) {
      if (block.long) {
        st.line++;
        reject(st, block.buf, 0, block.end, 'missing_field', `line longer than ${MAX_LINE} bytes`);
      }
      const { buf, end } = block;
      while (!block.long && pos < end) {
        pos = canonical ? fillCanonical(st, buf, pos, end) : fillBatch(st, buf, pos, end);
        if (st.batch.length === batchSize) {
          const out: SampleChunk = { batch: st.batch, rejected: st.rejected };
          if (spare) {
            spare.length = 0;
            st.batch = spare;
            spare = null;
          } else st.batch = pooledBatch(opts.batchPool, path, batchSize) ?? createBatch(path, batchSize);
          st.rejected = [];
          yield out;
          // the consumer pulled again: out.batch is free to be filled after the batch now being filled
          if (reuse) spare = out.batch;
        }
      }
      block = await nextBlock(blocks, path, st.line + 1);
      pos = 0;
    }
    if (st.batch.length > 0 || st.rejected.length > 0) yield { batch: st.batch, rejected: st.rejected };
  } finally {
    // The consumer pulled after the last chunk, or ended the stream: by the reuseBatches contract every batch of this
    // stream is free. With a pool (a run reading many files one after the other), the next file fills them instead
    // of allocating its own.
    if (st && reuse && opts.batchPool) {
      opts.batchPool.push(st.batch);
      if (spare) opts.batchPool.push(spare);
    }
    await blocks.close();
  }
}
