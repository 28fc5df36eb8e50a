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
 *   history costs about a hundred bytes per ray. History reaches back `horizon_s` (two generations of rays; a
 *   duplicate further back in time than that is found as a step back in time instead); with windows other than
 *   fixed ones it reaches back over the whole record. With qc.dropDuplicates the repeats are dropped (reason 'duplicate'),
 *   else kept and reported.
 * - Files without usable rows: an error (the run stops, no result), naming the file and what its lines were.
 * - At the end, per instrument: no sample read at all; an accepted share that collapsed against the other
 *   instruments (below SHARE_COLLAPSE of their median share, or under 1 % of at least 100 samples), with the reasons.
 */
import type { Campaign } from '../campaign/types.ts';
import { InputError } from '../errors.ts';
import type { RejectedRow, SampleBatch } from '../io/batch.ts';
import type { RejectReason, SampleAccount } from './reasons.ts';

/** Fewest rows of a stream before its angles are judged. */
export const MIN_ROWS_RADIANS = 20;
/** An instrument's accepted share below this fraction of the other instruments' median share is a collapse. */
export const SHARE_COLLAPSE = 0.2;
/** Ranges equal within this many metres are the same range gate. */
export const RANGE_EPS_M = 1e-6;
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

/** The settings of a campaign: qc keys, and a horizon of two window lengths (the whole record for other kinds). */
export function suspicionSettings(c: Campaign, show?: (file: string) => string): SuspicionSettings {
  const horizon = c.windows.kind === 'fixed' ? Math.max(2 * c.windows.length_s, 600) : Infinity;
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

/** A ray: time and angles, and its range gates as first + k * step (k < n) or an explicit list. */
interface Ray {
  t: number;
  az: number;
  el: number;
  r0: number;
  dr: number;
  n: number;
  rmax: number;
  list: number[] | undefined;
  next: Ray | undefined;
}

const f64 = new Float64Array(1);
const u32 = new Uint32Array(f64.buffer);
function mix(h: number, x: number): number {
  f64[0] = x;
  h = Math.imul(h ^ u32[0], 0x9e3779b1);
  h = Math.imul(h ^ u32[1], 0x85ebca77);
  return h ^ (h >>> 15);
}

/** Rays of one instrument in two generations (the older dropped when the newer spans the horizon). */
class RayHistory {
  private cur = new Map<number, Ray>();
  private old = new Map<number, Ray>();
  private genStart = NaN;
  constructor(private readonly horizon: number) {}

  /** Hash of the last find(), reused by the add() that follows it. */
  private h = 0;

  find(t: number, az: number, el: number): Ray | undefined {
    const h = (this.h = mix(mix(mix(0x2545f491, t), az), el));
    for (let r = this.cur.get(h); r; r = r.next) if (r.t === t && r.az === az && r.el === el) return r;
    for (let r = this.old.get(h); r; r = r.next) if (r.t === t && r.az === az && r.el === el) return r;
    return undefined;
  }

  /** Adds a ray; call right after find() returned undefined for the same key. */
  add(t: number, az: number, el: number, range: number): Ray {
    if (!(t - this.genStart <= this.horizon)) {
      if (this.genStart === this.genStart) {
        this.old = this.cur;
        this.cur = new Map();
      }
      this.genStart = t;
    }
    const h = this.h;
    const ray: Ray = { t, az, el, r0: range, dr: NaN, n: 1, rmax: range, list: undefined, next: this.cur.get(h) };
    this.cur.set(h, ray);
    return ray;
  }
}

/** True when `r` is one of the ray's ranges. */
function hasRange(ray: Ray, r: number): boolean {
  if (ray.list) {
    for (const x of ray.list) if (Math.abs(x - r) <= RANGE_EPS_M) return true;
    return false;
  }
  if (ray.n === 1) return Math.abs(ray.r0 - r) <= RANGE_EPS_M;
  const k = Math.round((r - ray.r0) / ray.dr);
  return k >= 0 && k < ray.n && Math.abs(ray.r0 + k * ray.dr - r) <= RANGE_EPS_M;
}

/** Adds range `r` (not yet in the ray). */
function addRange(ray: Ray, r: number): void {
  if (!ray.list) {
    if (ray.n === 1 && r > ray.r0) { ray.dr = r - ray.r0; ray.n = 2; ray.rmax = r; return; }
    if (ray.n > 1 && Math.abs(ray.r0 + ray.n * ray.dr - r) <= RANGE_EPS_M) { ray.n++; ray.rmax = r; return; }
    const list: number[] = [];
    for (let k = 0; k < ray.n; k++) list.push(ray.n === 1 ? ray.r0 : ray.r0 + k * ray.dr);
    ray.list = list;
  }
  ray.list.push(r);
  if (r > ray.rmax) ray.rmax = r;
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
  readonly cur: (Ray | undefined)[];
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
    this.cur = new Array(I).fill(undefined);
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
  private fastRay: Ray | undefined;
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
        if (r - next <= RANGE_EPS_M && next - r <= RANGE_EPS_M) { f[6]++; run++; continue; }
      }
      if (run > 0) { this.endRun(rows, run); run = 0; }
      this.row(e, b, i, mask);
    }
    if (run > 0) this.endRun(rows, run);
    return this.s.dropDuplicates ? mask : undefined;
  }

  /** Writes a run of `run` gates taken by the fast path to its ray. */
  private endRun(rows: Float64Array, run: number): void {
    const f = this.fast, ray = this.fastRay!;
    ray.n += run;
    ray.rmax = f[4] + (f[6] - 1) * f[5];
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
    const cur = e.cur[ins];
    let dup = false;
    let ray: Ray | undefined;
    let fresh = false;
    if (cur !== undefined && cur.t === t && cur.az === az && cur.el === el) {
      ray = cur;
      if (r <= cur.rmax + RANGE_EPS_M && hasRange(cur, r)) dup = true;
      else addRange(cur, r);
    } else {
      const h = this.history[ins];
      ray = h.find(t, az, el);
      fresh = true;
      if (ray === undefined) e.cur[ins] = ray = h.add(t, az, el, r);
      else {
        e.cur[ins] = ray;
        if (hasRange(ray, r)) dup = true;
        else addRange(ray, r);
      }
    }
    const f = this.fast;
    this.fastRay = ray;
    f[0] = ins; f[1] = t; f[2] = az; f[3] = el;
    if (!dup && ray.list === undefined && ray.n > 1 && r === ray.rmax) { f[4] = ray.r0; f[5] = ray.dr; f[6] = ray.n; }
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
          ? `no usable rows: none of its ${[...e.rejected.values()].reduce((a, b) => a + b, 0)} data lines could be read (${bad}; the first, line ${f.line}: ${f.detail})`
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
  for (const i of inputs) if (i.sha256) by.set(i.sha256, [...(by.get(i.sha256) ?? []), i.file]);
  const out: string[] = [];
  for (const [sha, files] of by) {
    const distinct = [...new Set(files)];
    if (distinct.length > 1) out.push(`files ${distinct.map(show).join(' and ')} have the same content (SHA-256 ${sha.slice(0, 12)}...): the same data listed twice?`);
  }
  return out;
}

