/**
 * Suspicious input: evidence of unit, order and duplication faults gathered while the samples stream past, turned
 * into warnings (instrument, file and evidence) and errors at the end. Pure: no printing, no files.
 *
 * HOOK (how the ingest uses it; carry these lines into any new ingest):
 *   const inspector = new SuspicionInspector(campaign, settingsFor(campaign, scheme));   // once per run
 *   // per chunk read from a file, before quality control:
 *   const drop = inspector.batch(chunk.batch, chunk.rejected);   // Uint8Array (1 = drop as 'duplicate') or undefined
 *   //   in the per-row loop, right after counting the row as read:
 *   //   if (drop !== undefined && drop[i] === 1) { count 'duplicate' for the row's instrument; continue; }
 *   // the in-step reader's time mark of a file after a batch: batchEndTime(batch) instead of its last row's time
 *   const report = inspector.finish(perInstrumentAccounts);      // after the last sample and the robust filter
 *
 * Detectors (all per file and instrument, "stream" below, in bounded memory):
 * - Angles in radians: every azimuth within 2*pi of north and every |elevation| within pi/2, over at least
 *   MIN_ROWS_RADIANS rows with some spread: degrees that small are implausible for a scanning instrument, radians
 *   are not (the reader has already wrapped negative azimuths into [0, 360), hence "within 2*pi of north").
 * - Time order: a row earlier than the stream's previous row by more than qc.timeOrderTolerance_s is a step back;
 *   counted with the first lines and the largest step. A step back to a repeat of the stream's first row is named as
 *   the file repeating itself.
 * - Duplicates: a row repeating an earlier row of the same instrument (from any of its files) in time, azimuth,
 *   elevation and range (ranges equal within RANGE_EPS_M). Rays are kept, not rows: a ray (time, azimuth,
 *   elevation) holds its ranges as an arithmetic sequence (first, step, count) or, when irregular, as a list, so the
 *   history costs about 60 bytes per ray in typed arrays, and a ray later than every kept ray is appended without a
 *   search (RayHistory). History reaches back `horizon_s` (at most MAX_RAYS_KEPT rays per instrument, so memory stays
 *   bounded; a duplicate further back than that is found as a step back in time instead). With qc.dropDuplicates the repeats are dropped (reason 'duplicate'),
 *   else kept and reported.
 * - Files without usable rows: an error (the run stops, no result), naming the file and what its lines were.
 * - At the end, per instrument: no sample read at all; an accepted share that collapsed against the other
 *   instruments (below SHARE_COLLAPSE of their median share, or under 1 % of at least 100 samples), with the reasons.
 */
import type { Campaign } from '../campaign/types.ts';
import { InputError } from '../errors.ts';
import type { RejectedRow, SampleBatch } from '../io/batch.ts';
import type { RejectReason, SampleAccount } from './reasons.ts';
import { pushTo } from '../math/group.ts';

/**
 * Constants of the per-row paths as a const enum, written into the code by the build (module-level constants are
 * loaded and checked at every use in optimised code); exported one by one below under their documented names.
 * NOT_FOUND: what find() returns for no ray (no handle takes it: handles are >= 0, or -1 - k for out-of-order rays).
 */
const enum Q { RANGE_EPS_M = 1e-6, MAX_RAYS_KEPT = 1048576, NOT_FOUND = -4503599627370496 }

/** Fewest rows of a stream before its angles are judged. */
export const MIN_ROWS_RADIANS = 20;
/** An instrument's accepted share below this fraction of the other instruments' median share is a collapse. */
export const SHARE_COLLAPSE = 0.2;
/** Ranges equal within this many metres are the same range gate. */
export const RANGE_EPS_M: number = Q.RANGE_EPS_M;
/** Lines listed as evidence per finding. */
const MAX_LINES = 3;

export interface SuspicionSettings {
  /** Drop duplicate rows (mask returned by batch()). */
  dropDuplicates: boolean;
  /** Time steps back up to this are normal jitter, s. */
  timeOrderTolerance_s: number;
  /** How far back in time duplicates are searched, s (Infinity: the whole record). */
  horizon_s: number;
  /** File names as shown in messages (e.g. relative to the campaign folder). */
  show?: (file: string) => string;
}

/** The settings of a campaign: qc keys, and a horizon of two window lengths (1200 s for other window kinds). */
export function suspicionSettings(c: Campaign, show?: (file: string) => string): SuspicionSettings {
  const horizon = c.windows.kind === 'fixed' ? Math.max(2 * c.windows.length_s, 600) : 1200;
  return { dropDuplicates: c.qc.dropDuplicates, timeOrderTolerance_s: c.qc.timeOrderTolerance_s, horizon_s: horizon, show };
}

/**
 * The time up to which a file has surely been read after `b`: the least of its last three rows' times, so that one
 * or two damaged time stamps at a batch end (a digit turned into a later year) cannot make the in-step reader
 * finish windows that the file's next rows still fall in. Costs a lag of two rows on ordered files.
 */
export function batchEndTime(b: SampleBatch): number {
  const n = b.length;
  let t = b.time[n - 1];
  for (let k = n - 2; k >= 0 && k >= n - 3; k--) if (b.time[k] < t) t = b.time[k];
  return t;
}

/** Rays kept per instrument at most (the time log and the out-of-order table each). */
export const MAX_RAYS_KEPT: number = Q.MAX_RAYS_KEPT;

/**
 * The recent rays of one instrument, for finding repeated rows, in typed arrays (no object per ray) and bounded
 * memory. Instruments write rays in time order, so the history is mostly a log in ascending time: a ray later than
 * every ray kept so far cannot repeat one of them and is appended without any search; a ray at or before the latest
 * time is looked up by binary search on the log's times (then compared exactly in time and angles) and, when new,
 * kept in a small out-of-order table. Rays older than the horizon before the latest one, or beyond MAX_RAYS_KEPT,
 * are forgotten. A ray holds its range gates as first + k * step (k < n) or, when irregular, as a list.
 * Handles: a log ray is its sequence number (>= 0, valid while kept); an out-of-order ray is -1 - its index, valid
 * within the table's epoch (the table is emptied when full or when the horizon has passed all of it).
 */
class RayHistory {
  private cap = 1024;
  private T = new Float64Array(this.cap);
  private AZ = new Float64Array(this.cap);
  private EL = new Float64Array(this.cap);
  private R0 = new Float64Array(this.cap);
  private DR = new Float64Array(this.cap);
  private RMAX = new Float64Array(this.cap);
  private N = new Int32Array(this.cap);
  /** Sequence numbers [head, tail) are kept; entry of seq s at s & (cap - 1). */
  private head = 0;
  private tail = 0;
  private maxT = -Infinity;
  // Out-of-order rays.
  private oT: number[] = [];
  private oAZ: number[] = [];
  private oEL: number[] = [];
  private oR0: number[] = [];
  private oDR: number[] = [];
  private oRMAX: number[] = [];
  private oN: number[] = [];
  private oIndex = new Map<number, number[]>();
  private oEpochStart = Infinity;
  /** Irregular rays' ranges by handle. */
  private lists = new Map<number, number[]>();

  constructor(private readonly horizon: number) {}

  /** Epoch of the out-of-order table (changes when it is emptied). */
  oEpoch = 0;

  /** True while handle h (taken when oEpoch was `epoch`) still names the same ray. */
  valid(h: number, epoch: number): boolean {
    return h >= 0 ? h >= this.head && h < this.tail : epoch === this.oEpoch && -1 - h < this.oN.length;
  }

  /**
   * Handle of the ray (t, az, el) of row i of batch b kept in the history, or NOT_FOUND. (Row and batch rather
   * than the numbers themselves: numbers passed to a call that is not inlined are boxed on the heap, per row.)
   */
  find(b: SampleBatch, i: number): number {
    const t = b.time[i], az = b.azimuth[i], el = b.elevation[i];
    if (t > this.maxT) return Q.NOT_FOUND;
    // Log: the first kept ray at time >= t, then every ray at exactly t.
    let lo = this.head, hi = this.tail;
    const mask = this.cap - 1;
    while (lo < hi) {
      const mid = Math.floor((lo + hi) / 2);
      if (this.T[mid & mask] < t) lo = mid + 1;
      else hi = mid;
    }
    for (let q = lo; q < this.tail && this.T[q & mask] === t; q++) {
      if (this.AZ[q & mask] === az && this.EL[q & mask] === el) return q;
    }
    const list = this.oIndex.get(t);
    if (list) for (const k of list) if (this.oAZ[k] === az && this.oEL[k] === el) return -1 - k;
    return Q.NOT_FOUND;
  }

  /** Adds the ray of row i of batch b with its first gate; call right after find() returned NOT_FOUND for that row. */
  add(b: SampleBatch, i: number): number {
    const t = b.time[i], az = b.azimuth[i], el = b.elevation[i], range = b.range[i];
    if (t > this.maxT || this.tail === this.head) {
      this.maxT = t;
      // Forget rays beyond the horizon, or the oldest when full.
      const mask0 = this.cap - 1;
      while (this.head < this.tail && (this.T[this.head & mask0] < t - this.horizon || this.tail - this.head >= Q.MAX_RAYS_KEPT)) this.forget(this.head++);
      if (this.tail - this.head === this.cap) this.grow();
      if (this.oN.length && (this.oEpochStart < t - this.horizon || this.oN.length >= Q.MAX_RAYS_KEPT)) this.clearOutOfOrder();
      const q = this.tail++, i = q & (this.cap - 1);
      this.T[i] = t; this.AZ[i] = az; this.EL[i] = el; this.R0[i] = range; this.DR[i] = NaN; this.RMAX[i] = range; this.N[i] = 1;
      return q;
    }
    const k = this.oN.length;
    if (k === 0) this.oEpochStart = this.maxT;
    this.oT.push(t); this.oAZ.push(az); this.oEL.push(el); this.oR0.push(range); this.oDR.push(NaN); this.oRMAX.push(range); this.oN.push(1);
    const l = this.oIndex.get(t);
    if (l) l.push(k);
    else this.oIndex.set(t, [k]);
    return -1 - k;
  }

  private forget(q: number): void {
    if (this.lists.size) this.lists.delete(q);
  }

  private clearOutOfOrder(): void {
    for (let k = 0; k < this.oN.length; k++) this.lists.delete(-1 - k);
    this.oT = []; this.oAZ = []; this.oEL = []; this.oR0 = []; this.oDR = []; this.oRMAX = []; this.oN = [];
    this.oIndex.clear();
    this.oEpochStart = Infinity;
    this.oEpoch++;
  }

  private grow(): void {
    const cap0 = this.cap, cap = cap0 * 2, mask0 = cap0 - 1, mask = cap - 1;
    const re = <A extends Float64Array | Int32Array>(a: A, b: A): A => {
      // Entries q in [head, tail) move from q & mask0 to q & mask: contiguous pieces, copied as blocks.
      for (let q = this.head; q < this.tail; ) {
        const from = q & mask0, to = q & mask;
        const len = Math.min(this.tail - q, cap0 - from, cap - to);
        b.set(a.subarray(from, from + len), to);
        q += len;
      }
      return b;
    };
    this.T = re(this.T, new Float64Array(cap)); this.AZ = re(this.AZ, new Float64Array(cap)); this.EL = re(this.EL, new Float64Array(cap));
    this.R0 = re(this.R0, new Float64Array(cap)); this.DR = re(this.DR, new Float64Array(cap)); this.RMAX = re(this.RMAX, new Float64Array(cap));
    this.N = re(this.N, new Int32Array(cap));
    this.cap = cap;
  }

  // Field access by handle (log entry or out-of-order entry).
  private getN(h: number): number { return h >= 0 ? this.N[h & (this.cap - 1)] : this.oN[-1 - h]; }
  private setN(h: number, v: number): void { if (h >= 0) this.N[h & (this.cap - 1)] = v; else this.oN[-1 - h] = v; }
  private getR0(h: number): number { return h >= 0 ? this.R0[h & (this.cap - 1)] : this.oR0[-1 - h]; }
  private getDR(h: number): number { return h >= 0 ? this.DR[h & (this.cap - 1)] : this.oDR[-1 - h]; }
  private setDR(h: number, v: number): void { if (h >= 0) this.DR[h & (this.cap - 1)] = v; else this.oDR[-1 - h] = v; }
  private getRMAX(h: number): number { return h >= 0 ? this.RMAX[h & (this.cap - 1)] : this.oRMAX[-1 - h]; }
  private setRMAX(h: number, v: number): void { if (h >= 0) this.RMAX[h & (this.cap - 1)] = v; else this.oRMAX[-1 - h] = v; }

  /** True when `r` is one of the ray's ranges. */
  hasRange(h: number, r: number): boolean {
    const n = this.getN(h);
    if (n < 0) {
      for (const x of this.lists.get(h)!) if (Math.abs(x - r) <= Q.RANGE_EPS_M) return true;
      return false;
    }
    const r0 = this.getR0(h);
    if (n === 1) return Math.abs(r0 - r) <= Q.RANGE_EPS_M;
    const dr = this.getDR(h);
    const k = Math.round((r - r0) / dr);
    return k >= 0 && k < n && Math.abs(r0 + k * dr - r) <= Q.RANGE_EPS_M;
  }

  /** Adds range `r` (not yet in the ray). */
  addRange(h: number, r: number): void {
    const n = this.getN(h), r0 = this.getR0(h), dr = this.getDR(h);
    if (n > 0) {
      if (n === 1 && r > r0) { this.setDR(h, r - r0); this.setN(h, 2); this.setRMAX(h, r); return; }
      if (n > 1 && Math.abs(r0 + n * dr - r) <= Q.RANGE_EPS_M) { this.setN(h, n + 1); this.setRMAX(h, r); return; }
      const list: number[] = [];
      for (let k = 0; k < n; k++) list.push(n === 1 ? r0 : r0 + k * dr);
      this.lists.set(h, list);
      this.setN(h, -1);
    }
    this.lists.get(h)!.push(r);
    if (r > this.getRMAX(h)) this.setRMAX(h, r);
  }

  /** Gates of a regular ray whose last gate is `r` (else -1: the fast path does not apply). */
  regularEnd(h: number, r: number): number {
    const n = this.getN(h);
    return n > 1 && r === this.getRMAX(h) ? n : -1;
  }

  first(h: number): number { return this.getR0(h); }
  step(h: number): number { return this.getDR(h); }

  /** Extends a regular ray by `run` gates ending at `rmax`. */
  extend(h: number, run: number, rmax: number): void {
    this.setN(h, this.getN(h) + run);
    this.setRMAX(h, rmax);
  }
}


/** Evidence of one file: per instrument in typed arrays, plus the file's rejected rows by reason. */
class FileEvidence {
  readonly rows: Float64Array; // valid rows per instrument
  readonly maxAzDist: Float64Array; // largest angular distance of an azimuth from north, degrees
  readonly maxAbsEl: Float64Array;
  readonly minEl: Float64Array;
  readonly maxEl: Float64Array;
  readonly minAzDist: Float64Array;
  readonly prevT: Float64Array;
  readonly backSteps: Float64Array;
  readonly backMax: Float64Array;
  readonly backMaxLine: Float64Array;
  readonly backLines: number[][];
  readonly repeatsStart: Uint8Array;
  readonly dups: Float64Array;
  readonly dupLines: number[][];
  readonly first: Float64Array; // per instrument: t, az, el, range of the first row
  /** Per instrument: the current ray (time, azimuth, elevation, handle, out-of-order epoch of the handle). */
  readonly curT: Float64Array;
  readonly curAz: Float64Array;
  readonly curEl: Float64Array;
  readonly curH: Float64Array;
  readonly curGen: Float64Array;
  valid = 0;
  rejected = new Map<string, number>();
  firstRejected: RejectedRow | undefined;
  constructor(I: number) {
    const f = (v = 0) => new Float64Array(I).fill(v);
    this.rows = f(); this.maxAzDist = f(-Infinity); this.maxAbsEl = f(-Infinity); this.minEl = f(Infinity); this.maxEl = f(-Infinity);
    this.minAzDist = f(Infinity); this.prevT = f(NaN); this.backSteps = f(); this.backMax = f(); this.backMaxLine = f();
    this.backLines = Array.from({ length: I }, () => []);
    this.repeatsStart = new Uint8Array(I);
    this.dups = f();
    this.dupLines = Array.from({ length: I }, () => []);
    this.first = new Float64Array(4 * I).fill(NaN);
    this.curT = f(NaN); this.curAz = f(NaN); this.curEl = f(NaN); this.curH = f(NaN); this.curGen = f(-1);
  }
}

/**
 * How each field of a file's evidence combines when the file was read in parts (time shards of a sharded run,
 * pipeline/partial.ts): sums, extremes, the first evidence lines, or nothing (state of the streaming pass only).
 * Every field needs a rule: a field added without one makes `mergeEvidence` throw, not merge wrongly.
 */
const EVIDENCE_RULES: Record<string, 'sum' | 'max' | 'min' | 'or' | 'lines' | 'argmax' | 'transient' | 'map' | 'firstRow' | 'with-argmax'> = {
  rows: 'sum', maxAzDist: 'max', maxAbsEl: 'max', minEl: 'min', maxEl: 'max', minAzDist: 'min', prevT: 'transient',
  backSteps: 'sum', backMax: 'argmax', backMaxLine: 'with-argmax', backLines: 'lines', repeatsStart: 'or', dups: 'sum',
  dupLines: 'lines', first: 'transient', curT: 'transient', curAz: 'transient', curEl: 'transient', curH: 'transient',
  curGen: 'transient', valid: 'sum', rejected: 'map', firstRejected: 'firstRow',
};

/** One file's evidence as plain data: typed arrays apart, everything else JSON. */
export interface EvidenceState {
  meta: Record<string, unknown>;
  arrays: Record<string, Float64Array | Uint8Array>;
}

function evidenceState(e: FileEvidence): EvidenceState {
  const meta: Record<string, unknown> = {};
  const arrays: Record<string, Float64Array | Uint8Array> = {};
  for (const [k, v] of Object.entries(e)) {
    if (!(k in EVIDENCE_RULES)) throw new TypeError(`suspicion evidence field "${k}" has no merge rule (EVIDENCE_RULES)`);
    if (EVIDENCE_RULES[k] === 'transient') continue;
    if (v instanceof Float64Array || v instanceof Uint8Array) arrays[k] = v.slice();
    else if (v instanceof Map) meta[k] = [...v];
    else meta[k] = v;
  }
  return { meta, arrays };
}

/** Adds evidence `s` (of the same file, another part of it) into `e`. */
function mergeEvidence(e: FileEvidence, s: EvidenceState): void {
  const rec = e as unknown as Record<string, unknown>;
  for (const k of Object.keys(e)) {
    const rule = EVIDENCE_RULES[k];
    if (rule === undefined) throw new TypeError(`suspicion evidence field "${k}" has no merge rule (EVIDENCE_RULES)`);
    const mine = rec[k];
    const theirs = (s.arrays[k] ?? s.meta[k]) as never;
    if (rule === 'transient' || theirs === undefined) continue;
    switch (rule) {
      case 'sum':
        if (typeof mine === 'number') rec[k] = mine + (theirs as number);
        else { const a = mine as Float64Array, b = theirs as Float64Array; for (let i = 0; i < a.length; i++) a[i] += b[i]; }
        break;
      case 'max': case 'min': case 'or': {
        const a = mine as Float64Array, b = theirs as Float64Array;
        for (let i = 0; i < a.length; i++) a[i] = rule === 'max' ? Math.max(a[i], b[i]) : rule === 'min' ? Math.min(a[i], b[i]) : a[i] | b[i];
        break;
      }
      case 'argmax': {
        const a = mine as Float64Array, b = theirs as Float64Array, la = e.backMaxLine, lb = s.arrays.backMaxLine as Float64Array;
        for (let i = 0; i < a.length; i++) if (b[i] > a[i]) { a[i] = b[i]; la[i] = lb[i]; }
        break;
      }
      case 'with-argmax': break; // moved with its argmax
      case 'lines': {
        const a = mine as number[][], b = theirs as number[][];
        for (let i = 0; i < a.length; i++) a[i] = [...a[i], ...b[i]].sort((x, y) => x - y).slice(0, MAX_LINES);
        break;
      }
      case 'map': for (const [r, n] of theirs as [string, number][]) e.rejected.set(r, (e.rejected.get(r) ?? 0) + n); break;
      case 'firstRow': {
        const b = theirs as RejectedRow | null;
        if (b && (!e.firstRejected || b.line < e.firstRejected.line)) e.firstRejected = b;
        break;
      }
    }
  }
}

export interface SuspicionReport {
  /** One line each, naming the instrument, the file and the evidence. */
  warnings: string[];
  /** Problems that stop the run (files without a usable row). */
  errors: InputError[];
}

const pct = (x: number) => `${(100 * x).toFixed(x < 0.1 ? 2 : 1)} %`;
const lines = (ls: number[], total: number) => `line${ls.length > 1 ? 's' : ''} ${ls.join(', ')}${total > ls.length ? ', ...' : ''}`;

export class SuspicionInspector {
  private readonly files = new Map<string, FileEvidence>();
  private readonly history: RayHistory[];
  private readonly ids: string[];
  private readonly filesOf: string[][];
  private mask = new Uint8Array(0);
  /** Fast-path state of batch(): instrument, time, azimuth, elevation, first range, step, next gate index. */
  private readonly fast = new Float64Array(7);
  private fastRay = -1;
  private readonly show: (f: string) => string;

  constructor(
    c: Campaign,
    private readonly s: SuspicionSettings,
  ) {
    this.ids = c.instruments.map((i) => i.id);
    this.filesOf = c.instruments.map((i) => i.files);
    this.history = c.instruments.map(() => new RayHistory(s.horizon_s));
    this.show = s.show ?? ((f) => f);
    for (const files of this.filesOf) for (const f of files) this.evidence(f); // a file that yields nothing is seen too
  }

  private evidence(file: string): FileEvidence {
    let e = this.files.get(file);
    if (!e) this.files.set(file, (e = new FileEvidence(this.ids.length)));
    return e;
  }

  /**
   * Takes one chunk of a file (its valid rows and the rows it could not read). Returns the drop mask (1 = drop the
   * row as a duplicate) when qc.dropDuplicates is set, else undefined. The mask is valid until the next call.
   */
  batch(b: SampleBatch, rejected: readonly RejectedRow[]): Uint8Array | undefined {
    const e = this.evidence(b.file);
    for (const r of rejected) e.rejected.set(r.reason, (e.rejected.get(r.reason) ?? 0) + 1);
    if (rejected.length && !e.firstRejected) e.firstRejected = rejected[0];
    const n = b.length;
    if (n === 0) return undefined;
    e.valid += n;
    if (this.mask.length < n) this.mask = new Uint8Array(Math.max(n, 2 * this.mask.length));
    const mask = this.mask;
    mask.fill(0, 0, n);
    const T = b.time, AZ = b.azimuth, EL = b.elevation, RG = b.range, INS = b.instrument;
    const rows = e.rows;
    // Hot loop: a row continuing the previous row's ray as the next gate of its arithmetic range sequence (the
    // common case: one row per range gate) only counts; the run is written to the ray when it ends. Everything else
    // goes to row(), kept out of this loop so that the loop stays small and its type feedback stable.
    const f = this.fast;
    f[0] = -1;
    let run = 0;
    for (let i = 0; i < n; i++) {
      const ins = INS[i];
      if (ins === f[0] && T[i] === f[1] && AZ[i] === f[2] && EL[i] === f[3]) {
        const r = RG[i], next = f[4] + f[6] * f[5];
        if (r - next <= Q.RANGE_EPS_M && next - r <= Q.RANGE_EPS_M) { f[6]++; run++; continue; }
      }
      if (run > 0) { this.endRun(rows, run); run = 0; }
      this.row(e, b, i, mask);
    }
    if (run > 0) this.endRun(rows, run);
    return this.s.dropDuplicates ? mask : undefined;
  }

  /** Writes a run of `run` gates taken by the fast path to its ray. */
  private endRun(rows: Float64Array, run: number): void {
    const f = this.fast;
    this.history[f[0]].extend(this.fastRay, run, f[4] + (f[6] - 1) * f[5]);
    rows[f[0]] += run;
  }

  /**
   * One row off the fast path: the next gate of the stream's current ray, a repeat, or the first row of a ray (the
   * instrument's history says whether it is new). Time order and angle evidence cannot change within a ray, so
   * they are looked at once per ray. Sets the fast path up for the ray's next gate.
   */
  private row(e: FileEvidence, b: SampleBatch, i: number, mask: Uint8Array): void {
    const ins = b.instrument[i], t = b.time[i], az = b.azimuth[i], el = b.elevation[i], r = b.range[i];
    e.rows[ins]++;
    const h = this.history[ins];
    let dup = false;
    let ray: number;
    let fresh = false;
    if (h.valid(e.curH[ins], e.curGen[ins]) && e.curT[ins] === t && e.curAz[ins] === az && e.curEl[ins] === el) {
      ray = e.curH[ins];
      if (h.hasRange(ray, r)) dup = true;
      else h.addRange(ray, r);
    } else {
      ray = h.find(b, i);
      fresh = true;
      if (ray === Q.NOT_FOUND) ray = h.add(b, i);
      else if (h.hasRange(ray, r)) dup = true;
      else h.addRange(ray, r);
      e.curT[ins] = t; e.curAz[ins] = az; e.curEl[ins] = el; e.curH[ins] = ray; e.curGen[ins] = h.oEpoch;
    }
    const f = this.fast;
    this.fastRay = ray;
    f[0] = ins; f[1] = t; f[2] = az; f[3] = el;
    const gates = dup ? -1 : h.regularEnd(ray, r);
    if (gates > 1) { f[4] = h.first(ray); f[5] = h.step(ray); f[6] = gates; }
    else { f[4] = NaN; f[5] = NaN; f[6] = 0; }
    if (dup) {
      mask[i] = 1;
      if (e.dups[ins]++ < MAX_LINES) e.dupLines[ins].push(b.line[i]);
      return; // a repeat says nothing new about time order or angles
    }
    if (!fresh) return; // another gate of the current ray
    // angles
    const azd = az > 180 ? 360 - az : az;
    if (azd > e.maxAzDist[ins]) e.maxAzDist[ins] = azd;
    if (azd < e.minAzDist[ins]) e.minAzDist[ins] = azd;
    const ael = el < 0 ? -el : el;
    if (ael > e.maxAbsEl[ins]) e.maxAbsEl[ins] = ael;
    if (el < e.minEl[ins]) e.minEl[ins] = el;
    if (el > e.maxEl[ins]) e.maxEl[ins] = el;
    // time order
    const k = 4 * ins;
    if (e.first[k] !== e.first[k]) { e.first[k] = t; e.first[k + 1] = az; e.first[k + 2] = el; e.first[k + 3] = r; }
    const prev = e.prevT[ins];
    if (t < prev - this.s.timeOrderTolerance_s) {
      const step = prev - t;
      if (e.backSteps[ins]++ < MAX_LINES) e.backLines[ins].push(b.line[i]);
      if (step > e.backMax[ins]) { e.backMax[ins] = step; e.backMaxLine[ins] = b.line[i]; }
      if (t === e.first[k] && az === e.first[k + 1] && el === e.first[k + 2] && r === e.first[k + 3]) e.repeatsStart[ins] = 1;
    }
    e.prevT[ins] = t;
  }

  /** The evidence gathered on `file` so far, as plain data (a shard's partial result carries it to the merge). */
  evidenceOf(file: string): EvidenceState {
    return evidenceState(this.evidence(file));
  }

  /** Adds evidence gathered elsewhere on `file` (another shard) to this inspector's. */
  absorb(file: string, s: EvidenceState): void {
    mergeEvidence(this.evidence(file), s);
  }

  /** Warnings and errors once every file is read; `accounts` per instrument id (after the robust filter). */
  finish(accounts: Record<string, SampleAccount>): SuspicionReport {
    const warnings: string[] = [];
    const errors: InputError[] = [];
    const I = this.ids.length;
    const twoPi = 2 * Math.PI + 1e-3, halfPi = Math.PI / 2 + 1e-3;
    for (const [file, e] of this.files) {
      const name = this.show(file);
      if (e.valid === 0) {
        const bad = [...e.rejected].map(([r, k]) => `${r} ${k}`).join(', ');
        const f = e.firstRejected;
        errors.push(new InputError(name, undefined, bad && f
          ? Number.isFinite(f.line)
            ? `no usable rows: none of its ${[...e.rejected.values()].reduce((a, b) => a + b, 0)} data lines could be read (${bad}; the first, line ${f.line}: ${f.detail})`
            : `no usable samples: none of its ${[...e.rejected.values()].reduce((a, b) => a + b, 0)} samples could be read (${bad}; the first, variable "${f.variable ?? '?'}" at ray ${f.ray ?? '?'}, gate ${f.gate ?? '?'}: ${f.detail})`
          : 'no usable rows: the file has a header and no data lines'));
        continue;
      }
      for (let ins = 0; ins < I; ins++) {
        const id = this.ids[ins];
        const n = e.rows[ins];
        if (n === 0) continue;
        if (n >= MIN_ROWS_RADIANS && e.maxAzDist[ins] <= twoPi && e.maxAbsEl[ins] <= halfPi &&
          (e.maxAzDist[ins] - e.minAzDist[ins] > 0 || e.maxEl[ins] - e.minEl[ins] > 0)) {
          warnings.push(
            `instrument ${id}, ${name}: angles look like radians, not degrees: all ${n} azimuths lie within ${e.maxAzDist[ins].toFixed(3)} of north and all elevations within ${e.minEl[ins].toFixed(3)} .. ${e.maxEl[ins].toFixed(3)} (2 pi = 6.283, pi/2 = 1.571); if so, map the columns with scale: 57.29577951 (instruments[].columns)`,
          );
        }
        if (e.dups[ins] > 0) {
          warnings.push(
            `instrument ${id}, ${name}: ${e.dups[ins]} row${e.dups[ins] > 1 ? 's' : ''} repeat${e.dups[ins] > 1 ? '' : 's'} an earlier row exactly (time, angles and range; ${lines(e.dupLines[ins], e.dups[ins])}); ` +
              (this.s.dropDuplicates ? 'dropped as "duplicate" (qc.dropDuplicates)' : 'kept and used again; set qc.dropDuplicates: true to drop them'),
          );
        }
        if (e.backSteps[ins] > 0) {
          warnings.push(
            `instrument ${id}, ${name}: time steps back ${e.backSteps[ins]} time${e.backSteps[ins] > 1 ? 's' : ''} by more than ${this.s.timeOrderTolerance_s} s (${lines(e.backLines[ins], e.backSteps[ins])}; largest ${e.backMax[ins].toFixed(1)} s at line ${e.backMaxLine[ins]})` +
              (e.repeatsStart[ins] ? '; the file repeats its first row there: it looks concatenated with itself' : '') +
              '; rows of windows already finished are rejected as out_of_time_order',
          );
        }
      }
    }
    // per instrument: nothing read, or an accepted share that collapsed
    const share = this.ids.map((id) => {
      const a = accounts[id];
      return a && a.read > 0 ? a.accepted / a.read : NaN;
    });
    this.ids.forEach((id, k) => {
      const a = accounts[id];
      if (!a) return;
      if (a.read === 0) {
        if (this.filesOf[k].length > 0) warnings.push(`instrument ${id}: no sample read; no row of its files (${this.filesOf[k].map(this.show).join(', ')}) names it`);
        return;
      }
      const others = share.filter((x, j) => j !== k && x === x).sort((x, y) => x - y);
      const med = others.length ? others[Math.floor((others.length - 1) / 2)] : NaN;
      const collapsed = (med === med && med > 0.05 && share[k] < SHARE_COLLAPSE * med) || (a.read >= 100 && share[k] < 0.01);
      if (!collapsed) return;
      const reasons = (Object.entries(a.rejected) as [RejectReason, number][])
        .filter(([, v]) => v > 0)
        .sort((x, y) => y[1] - x[1])
        .map(([r, v]) => `${r} ${pct(v / a.read)}`)
        .join(', ');
      warnings.push(
        `instrument ${id}: only ${pct(share[k])} of its ${a.read} samples accepted${med === med ? ` (the other instruments: ${pct(med)} median)` : ''}; rejected: ${reasons}` +
          `; files: ${this.filesOf[k].map(this.show).join(', ')}. Check its position, calibration (heading) and angle units`,
      );
    });
    return { warnings, errors };
  }
}

/** Warnings for files listed more than once with the same content (SHA-256), by their displayed names. */
export function sameContentWarnings(inputs: readonly { file: string; sha256: string }[], show: (f: string) => string = (f) => f): string[] {
  const by = new Map<string, string[]>();
  for (const i of inputs) if (i.sha256) pushTo(by, i.sha256, i.file);
  const out: string[] = [];
  for (const [sha, files] of by) {
    const distinct = [...new Set(files)];
    if (distinct.length > 1) out.push(`files ${distinct.map(show).join(' and ')} have the same content (SHA-256 ${sha.slice(0, 12)}...): the same data listed twice?`);
  }
  return out;
}

