/**
 * Ingest: read every instrument's files in step, apply quality control and geometry to each sample, and add the
 * accepted in-plane samples to the mergeable accumulators (grid/accumulator.ts) of the windows containing their
 * time. A window is handed on (finished) as soon as every file has read past its end, so memory holds the open
 * windows' accumulators (growing with the cells that received samples, never with the samples), never the campaign.
 *
 * Windows come from a plan (windows/plan.ts) built before the samples are read: the ingest primes every file (reads
 * its first batch), gives the plan builder the earliest sample time (for windows anchored at the first sample), and
 * then only looks each sample's time up.
 *
 * Reading in step: the next batch is always pulled from the file that is furthest behind in time. Files are
 * expected in time order (as instruments write them); a sample whose window was already finished is counted as
 * out_of_time_order, never silently dropped. With many files (more than KEEP_PRIMED), only one file per instrument is
 * kept open from the start; the others are opened when the reading reaches where they start (their first batch read
 * twice), so memory and open files do not grow with the number of files.
 *
 * Per sample, in this order (the first failing rule names the rejection): CNR below the instrument's resolved limit
 * (qc.cnr_db.min, fixed or estimated before the run: qc/cnrLimits.ts) (low_cnr);
 * CNR above qc.cnr_db.max (hard_target_cnr); |v_r| above qc.radialVelocityLimit_ms; in no window
 * (outside_windows); every window already finished (out_of_time_order); no wind direction for the window;
 * for instruments on the nacelle, no nacelle direction at the sample time (no_nacelle_direction) or a forward-looking
 * beam outside +/-90 degrees of the axis (wrong_beam_frame);
 * with a terrain model, the point outside it (outside_terrain); the measurement point lower than qc.groundClearance_m
 * above the ground under it (below_ground: ground or hard-target returns); with a terrain model, the beam of a
 * ground-based instrument passing below the ground on its way to the point (beam_blocked: a hill between instrument
 * and point); outside its target (planes: outside_planes; profilers, nacelle instruments, trackers: their own
 * reasons). Samples without CNR (no column) pass the CNR rules.
 * With overlapping windows a sample is added to every window containing it (in each window's own rotor frame) and
 * counted once: accepted when it fell in a plane in at least one of them.
 *
 * Geometry: the beam's site-frame unit vector is the calibration rotation applied to the reported angles; the point
 * is origin + (range + rangeOffset) * n, or with site.earthCurvature the 4/3-Earth beam height and ground distance
 * (geometry/curvature.ts; the small tilt of the beam over the curved ground is neglected). Rotor-frame coordinates use
 * the window's wind direction (geometry/frames.ts).
 *
 * Ground: flat at site.groundLevel_m (one comparison per sample, as before terrain existed), or the terrain model's
 * bilinear height under the point (geometry/terrain.ts). Blocked beams are found once per ray: the range up to which
 * the current ray is known clear (and where it is blocked) is kept per instrument and extended by a march along the
 * beam only when a sample lies beyond it, so rays with many gates cost one march.
 */
import type { Campaign } from '../campaign/types.ts';
import { calibrationMatrix, unitVectorInto } from '../geometry/beam.ts';
import { beamHeight, groundDistance } from '../geometry/curvature.ts';
import { CellAccumulator } from '../grid/accumulator.ts';
import { NacelleMiss, type NacelleFrame } from '../geometry/nacelle.ts';
import { FRAME, SAMPLE_FIELDS, windowFrame, type SampleTarget, type WindowFrame } from '../grid/target.ts';
import { firstBlockedRange, flatTerrain, type Terrain } from '../geometry/terrain.ts';
import { gatesPerRay, type RejectedRow, type SampleBatch } from '../io/batch.ts';
import type { SampleChunk } from '../io/csvSamples.ts';
import { KEEP_PRIMED, openSamples, sampleFormat, type PrimedFiles } from '../io/sampleSource.ts';
import { readerThreadWanted } from '../io/readerThread.ts';
import { REJECT_INDEX, REJECT_REASONS } from '../qc/reasons.ts';
import { batchEndTime, type SuspicionInspector } from '../qc/suspicion.ts';
import type { WindowDef, WindowPlan } from '../windows/plan.ts';

export interface OpenWindow {
  def: WindowDef;
  /** One accumulator per target (IngestOptions.targets), in that order. */
  accs: CellAccumulator[];
  /** Window bounds: the plan's, or for a whole-record window the first and last sample times seen. */
  start_s: number;
  end_s: number;
  /** First and last accepted-window sample times seen. */
  first_s: number;
  last_s: number;
  direction_deg: number;
}

export interface IngestOptions {
  campaign: Campaign;
  /** Read the files on the reader thread (io/readerThread.ts), beside the per-sample work. @default readerThreadWanted() */
  readerThread?: boolean;
  /** Where accepted samples go (grid/target.ts): the planes, and sibling geometries. */
  targets: SampleTarget[];
  /** Target index of each instrument's samples (-1: none; its samples are counted outside_planes). */
  targetOf: Int32Array;
  /**
   * Per instrument: its nacelle frame when its beam angles are nacelle-relative (geometry/nacelle.ts), turning each
   * sample's beam with the nacelle direction at its time; undefined for instruments with site-frame angles.
   */
  nacelleFrames?: (NacelleFrame | undefined)[];
  /** The window plan, given the earliest sample time of the run (NaN when no file has a sample). */
  windowPlan(firstSample_s: number): WindowPlan;
  /** Wind direction (from, degrees) of the window [start, end); NaN when unknown. */
  directionOf(start: number, end: number): number;
  /** Called with each finished window, in order of their ends; its accumulator is reused once this resolves. */
  onWindow(w: OpenWindow): Promise<void>;
  onRejectedRows(rows: RejectedRow[]): void;
  onProgress?(file: string, rows: number): void;
  /** Ground under the samples (io/terrainFile.ts loadTerrain); default flat at site.groundLevel_m. */
  terrain?: Terrain;
  /** Suspicious-input inspector (qc/suspicion.ts): sees every chunk first; its mask drops duplicates. */
  suspicion?: SuspicionInspector;
  /**
   * A shard of a sharded run (pipeline/shard.ts): only these files are read (default: all), and only the rows
   * with from_s <= time < to_s are taken (counted, inspected, accumulated); the others are skipped as if absent.
   * Rows that could not be read have no time: they belong to the shard holding the time of their chunk's first
   * valid row, or of the file's last valid row before them (-Infinity before any), so each is counted once over
   * shards that partition the time axis.
   */
  shard?: { files?: ReadonlySet<string>; from_s: number; to_s: number };
  /**
   * The earliest sample time of the whole campaign when known beforehand (a shard's, from every file's first
   * batch: campaignFirstSample), so that fixed windows anchored at the first sample are the same in every shard.
   */
  firstSample_s?: number;
  /** Sees each batch of valid rows taken (after a shard's time filter), before quality control. */
  onBatch?(b: SampleBatch): void;
  /** Every window ending at or before `t` has been handed to onWindow (and no later sample can reach one). */
  onFinishedTo?(t: number): void;
  /**
   * Per instrument (index), the CNR below which samples are rejected as low_cnr, dB: the run's resolved limits
   * (qc/cnrLimits.ts resolveCnrLimits, fixed or estimated from the data). Default: qc.cnr_db.min when it is a number,
   * else no lower limit.
   */
  cnrMin_db?: Float64Array;
  /** Files opened and read to their first chunk already (the CNR pre-pass's): taken over instead of opened again. */
  primed?: PrimedFiles;
}

/** Per-instrument counters: read, accepted (binned into a cell), and one per rejection reason. */
export class Counters {
  readonly read: Float64Array;
  readonly accepted: Float64Array;
  readonly rejected: Float64Array;
  constructor(readonly instruments: number) {
    this.read = new Float64Array(instruments);
    this.accepted = new Float64Array(instruments);
    this.rejected = new Float64Array(instruments * REJECT_REASONS.length);
  }
  reject(ins: number, reason: number, n = 1): void {
    this.rejected[ins * REJECT_REASONS.length + reason] += n;
  }
}

const R = REJECT_INDEX;
const NR = REJECT_REASONS.length;

interface Live extends OpenWindow {
  /**
   * The window's rotor frame and times for the targets (grid/target.ts FRAME), updated per sample with the first
   * and last sample times (copied to first_s and last_s when the window finishes).
   */
  frame: WindowFrame;
}

/**
 * Text files whose first batch has fewer rows per ray than this (io/batch.ts gatesPerRay) are parsed on the reader
 * thread (io/sampleSource.ts says what was measured): without ray structure the ingest's per-sample work is the
 * larger part, with rays of many gates the ray's reach makes most samples cheap and the parsing is.
 */
export const TEXT_THREAD_GATES = 2;

/** Rows per batch of the ingest's streams (and of PrimedFiles made for it). */
export const INGEST_BATCH = 16384;

/** Times further than this from the median of a file's first batch are not taken as its first sample, s. */
export const FIRST_SAMPLE_SPAN_S = 86400;

/**
 * The earliest sample time of a batch (a file's first), ignoring stamps more than FIRST_SAMPLE_SPAN_S from the
 * batch's median: one corrupted time (a zeroed clock, a wrong year) would otherwise move the anchor of every
 * fixed window. NaN for an empty batch.
 */
export function firstSampleTime(b: { length: number; time: Float64Array }): number {
  if (b.length === 0) return NaN;
  // Times in order (the usual file): the sorted copy would be the batch itself.
  let ordered = true;
  for (let i = 1; i < b.length && ordered; i++) if (!(b.time[i - 1] <= b.time[i])) ordered = false;
  const t = ordered ? b.time.subarray(0, b.length) : Float64Array.from(b.time.subarray(0, b.length)).sort();
  const med = t[t.length >> 1];
  for (let i = 0; i < t.length; i++) if (t[i] >= med - FIRST_SAMPLE_SPAN_S) return t[i];
  return med;
}

/**
 * The earliest sample time over every data file of the campaign, as the ingest of a whole run finds it (each file's
 * first batch, firstSampleTime): NaN when no file has a sample. A shard passes it as IngestOptions.firstSample_s so
 * that fixed windows anchored at the first sample are the same in every shard. Reads one batch per file.
 */
export async function campaignFirstSample(c: Campaign): Promise<number> {
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
  let first = Infinity;
  for (const ins of c.instruments) {
    for (const f of ins.files) {
      const it = openSamples(f, { instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign, batchSize: 16384 })[Symbol.asyncIterator]();
      const r = await it.next();
      await it.return?.(undefined);
      if (r.done) continue;
      const t = firstSampleTime(r.value.batch);
      if (t < first) first = t;
    }
  }
  return Number.isFinite(first) ? first : NaN;
}

/**
 * Opens, before the CNR pre-pass, the text files the ingest will parse on the reader thread (TEXT_THREAD_GATES: a
 * first batch of fewer than 2 rows per ray), through `primed`: the thread then starts and parses their first chunks
 * while this thread reads the pre-pass, instead of after it (on the benchmark without ray structure the main thread
 * waited about 0.2 s for the thread's first batch). Each file's first PRIME_DECISION_ROWS rows are parsed here to
 * decide (the ingest's own rule looks at its first batch: the same answer but for files whose ray structure changes
 * after that many rows, and either answer gives the same results). Only with at most KEEP_PRIMED files (the ingest's own rule for primed
 * streams) and where the reader thread is used (primed.thread); a file that cannot be read is left to the ingest,
 * which reports it.
 */
/** Rows parsed on the calling thread to decide where a text file is parsed (primeTextFiles). */
export const PRIME_DECISION_ROWS = 1024;

export async function primeTextFiles(c: Campaign, primed: PrimedFiles): Promise<void> {
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
  const files = c.instruments.flatMap((ins) => ins.files.map((path) => ({ path, ins })));
  if (!primed.thread || files.length > KEEP_PRIMED) return;
  for (const { path, ins } of files) {
    const opts = { instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign, batchSize: INGEST_BATCH };
    try {
      if (sampleFormat(path) === 'netcdf') continue;
      const it = openSamples(path, { ...opts, batchSize: PRIME_DECISION_ROWS, thread: false })[Symbol.asyncIterator]();
      const r = await it.next();
      await it.return?.(undefined);
      if (!r.done && gatesPerRay(r.value.batch) < TEXT_THREAD_GATES) primed.head(path, { ...opts, textThread: true }).catch(() => {});
    } catch {
      // the ingest opens it again and reports what is wrong with it
    }
  }
}

export async function ingest(opts: IngestOptions, counters: Counters): Promise<{ plan: WindowPlan }> {
  const c = opts.campaign;
  const I = c.instruments.length;
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));

  // Per-instrument geometry constants.
  const Rm = c.instruments.map((i) => calibrationMatrix(i.calibration));
  const posE = Float64Array.from(c.instruments, (i) => i.position[0]);
  const posN = Float64Array.from(c.instruments, (i) => i.position[1]);
  const posU = Float64Array.from(c.instruments, (i) => i.position[2]);
  const rOff = Float64Array.from(c.instruments, (i) => i.calibration.rangeOffset_m);
  const posVec = c.instruments.map((i) => Float64Array.from(i.position));
  // Last (azimuth, elevation) per instrument and its site-frame unit vector: scanning instruments repeat angles
  // for every range gate of a ray, so this cache turns most trigonometry into a comparison.
  const lastAz = new Float64Array(I).fill(NaN), lastEl = new Float64Array(I).fill(NaN);
  const nE = new Float64Array(I), nN = new Float64Array(I), nU = new Float64Array(I);
  // Per instrument, from the second gate of a ray on: the ranges outside which the ray cannot meet its target in
  // the open windows (SampleTarget.reach), valid while reachEpoch[ins] equals `epoch` (bumped when the ray or the
  // set of open windows changes). A gate outside them is counted outside the target without its position and the
  // target's arithmetic: most gates of a scanning ray miss the plane. Not for the first gate (data without ray
  // structure would pay for an interval per sample), nor over terrain, with Earth curvature or on a nacelle.
  const reachLo = new Float64Array(I), reachHi = new Float64Array(I), reachEpoch = new Float64Array(I).fill(-1);
  const rayGates = new Int32Array(I);
  // Time of the instrument's last sample that reached the reach test (with the ray's angles: lastAz, lastEl).
  const rayT = new Float64Array(I).fill(NaN);
  const reachOut = new Float64Array(2);
  let epoch = 0;

  const fixedMin = c.qc.cnr_db.min;
  const cnrMin = opts.cnrMin_db ?? new Float64Array(I).fill(typeof fixedMin === 'number' ? fixedMin : -Infinity);
  const cnrMax = c.qc.cnr_db.max, vLim = c.qc.radialVelocityLimit_ms;
  const terrain = opts.terrain ?? flatTerrain(c.site.groundLevel_m);
  const flat = terrain.flat;
  const ground0 = flat ? terrain.level : NaN;
  const clearance = c.qc.groundClearance_m;
  const groundMin = ground0 + clearance;
  // Per instrument, for the current ray: range known clear of the terrain, and the range where it is blocked.
  const clearTo = new Float64Array(I), blockedAt = new Float64Array(I).fill(Infinity);
  const marchStep = flat ? Infinity : terrain.spacing_m / 2;
  const curvature = c.site.earthCurvature;
  const targets = opts.targets;
  const targetOf = opts.targetOf;
  const nacelles = opts.nacelleFrames ?? [];
  const onNacelle = Uint8Array.from(c.instruments, (i) => (nacelles[i.index] ? 1 : 0));
  const nb = new Float64Array(6);
  // The reported beam's angles and unit vector (instrument frame), per new ray (geometry/beam.ts unitVectorInto).
  const los = new Float64Array(5);
  // The sample handed to the targets (fields SAMPLE of grid/target.ts, in that order), reused for every sample.
  const smp = new Float64Array(SAMPLE_FIELDS);
  const missReason = [R.no_nacelle_direction, R.wrong_beam_frame];
  // Straight beams over flat ground: where the ingest may use the targets' reach (1 per target that has one).
  const straight = flat && !curvature;
  const reaches = Uint8Array.from(targets, (tg) => (tg.reach ? 1 : 0));
  // Per instrument, the rejection of a sample outside its target (read per sample: one typed array, not the targets).
  const outsideWhy = Int32Array.from(targetOf, (tg) => (tg >= 0 ? targets[tg].outsideReason : R.outside_planes));

  // Every file of every instrument (of the shard), read in step; primed with its first batch before the plan is made.
  const shard = opts.shard;
  const files = c.instruments.flatMap((ins) => ins.files.map((f) => ({ path: f, owner: ins.index, ins })))
    .filter((f) => !shard?.files || shard.files.has(f.path));
  const readerThread = opts.readerThread ?? readerThreadWanted();
  // Batches of CSV files that ended, for the files read after them (many small files: one allocation, not one each).
  const csvPool: SampleBatch[] = [];
  const stream = (f: (typeof files)[number], textThread = false) =>
    openSamples(f.path, {
      instrumentIndex, owner: f.owner, columns: f.ins.columns, sign: f.ins.radialVelocitySign, batchSize: INGEST_BATCH, thread: readerThread,
      ...(sampleFormat(f.path) === 'netcdf' || textThread ? { textThread } : { batchPool: csvPool }),
    })[Symbol.asyncIterator]();
  const cursors = files.map((f) => {
    const p = opts.primed?.take(f.path, f.owner);
    return {
    // 16k-row batches: the same speed as larger ones with less memory held per open file (PrimedFiles: the same).
    // Files are read on the reader thread (io/readerThread.ts), beside this loop, where the machine has a core for it.
    it: p?.it ?? stream(f),
    /** The first pull, made already when the file was primed. */
    first: p?.first,
    last: -Infinity,
    done: false,
    pending: undefined as SampleChunk | undefined,
    /** First sample time of the pending (primed) batch: where the file starts in the reading order. */
    pendingFrom: -Infinity,
    /** Primed, then closed until its turn (many files: see KEEP_PRIMED): reopened from its start when first pulled. */
    waiting: false,
    /** The file, to open it again (see waiting). */
    file: f,
    /** A text file read on the reader thread (see TEXT_THREAD_GATES; primed so by primeTextFiles). */
    textThread: p?.textThread ?? false,
    path: f.path,
    owner: f.owner,
    rows: 0,
    /** Time of the file's last valid row so far (time shards: where its unreadable rows belong). */
    lastValid: -Infinity,
    /** Instruments whose rows the file held. */
    seen: new Uint8Array(I),
    };
  });
  let first = Infinity;
  // With more than KEEP_PRIMED files, one primed stream per instrument stays open (its earliest-starting file so
  // far); every other file is closed again once its start is known and reopened from its start in its turn (its
  // first batch read twice), so that memory and open files do not grow with the number of files.
  const keptOf = new Map<number, (typeof cursors)[number]>();
  const release = async (cur: (typeof cursors)[number]) => {
    cur.pending = undefined;
    cur.waiting = true;
    await cur.it.return?.(undefined);
    cur.it = stream(cur.file, cur.textThread);
  };
  for (const cur of cursors) {
    const r = await (cur.first ?? cur.it.next());
    cur.first = undefined;
    if (r.done) { cur.done = true; continue; }
    cur.pending = r.value;
    const f = firstSampleTime(r.value.batch);
    if (f < first) first = f;
    cur.pendingFrom = Number.isFinite(f) ? f : -Infinity;
    if (!cur.textThread && readerThread && sampleFormat(cur.path) !== 'netcdf' && gatesPerRay(r.value.batch) < TEXT_THREAD_GATES) {
      // A text file without ray structure: parsed on the reader thread from its start (its first batch read twice).
      cur.textThread = true;
      await release(cur);
    }
    if (cursors.length <= KEEP_PRIMED) continue;
    const kept = keptOf.get(cur.owner);
    if (kept && kept.pendingFrom <= cur.pendingFrom) await release(cur);
    else {
      if (kept) await release(kept);
      keptOf.set(cur.owner, cur);
    }
  }
  if (opts.firstSample_s !== undefined) first = opts.firstSample_s;
  const plan = opts.windowPlan(Number.isFinite(first) ? first : NaN);
  const record = plan.kind === 'record';

  const open = new Map<number, Live>();
  // Accumulators of finished windows, emptied for reuse (their allocations sized to the data already).
  const spare: CellAccumulator[][] = targets.map(() => []);
  // Every window ending at or before this time is finished.
  let finishedTo = -Infinity;

  const openWindow = (id: number): Live => {
    let w = open.get(id);
    if (!w) {
      const def = plan.def(id);
      const dir = opts.directionOf(def.start_s, def.end_s);
      const D = (dir * Math.PI) / 180;
      w = {
        def, start_s: def.start_s, end_s: def.end_s, first_s: Infinity, last_s: -Infinity, direction_deg: dir,
        accs: targets.map((tg, k) => spare[k].pop() ?? new CellAccumulator(tg.keyCount, I, c.uncertainty.budget)),
        frame: windowFrame(-Math.sin(D), -Math.cos(D), def.start_s, def.end_s),
      };
      open.set(id, w);
    }
    return w;
  };

  const finishUpTo = async (watermark: number) => {
    if (watermark <= finishedTo) return;
    const ready = [...open.values()].filter((w) => w.end_s <= watermark).sort((a, b) => a.end_s - b.end_s || a.start_s - b.start_s);
    finishedTo = watermark;
    for (const w of ready) {
      open.delete(w.def.id);
      w.first_s = w.frame[FRAME.first];
      w.last_s = w.frame[FRAME.last];
      await opts.onWindow(w);
      // onWindow has taken what it needs: the accumulators serve the next window.
      w.accs.forEach((a, k) => {
        a.reset();
        spare[k].push(a);
      });
    }
    opts.onFinishedTo?.(watermark);
  };

  // The windows of the current time range (reused while samples stay inside it): how many contain it (nFound),
  // which of them are still open (live, nLive) and how many of those have a wind direction (nDirected).
  const ids = new Int32Array(Math.max(1, plan.maxOverlap));
  const range = new Float64Array(2);
  // The hot loop below reads only arrays of one kind each (frames, accumulator lists, typed arrays): window objects
  // differ in shape with their values, and code that reads them is thrown away by the optimiser when a new shape
  // comes (deoptimisations of the loop over the benchmark: 8 before, 4 after; no wall-time change measurable).
  const live: Live[] = [];
  const liveFrames: WindowFrame[] = [];
  const liveAccs: CellAccumulator[][] = [];
  let nFound = 0, nLive = 0, nDirected = 0, rFrom = Infinity, rTo = -Infinity;

  /** Looks up the windows containing time t and the time range over which they stay the same. */
  const enterRange = (t: number): void => {
    epoch++;
    nFound = plan.find(t, ids, range);
    rFrom = range[0]; rTo = range[1];
    nLive = 0; nDirected = 0;
    for (let k = 0; k < nFound; k++) {
      if (!record && plan.def(ids[k]).end_s <= finishedTo) continue; // finished already
      const w = openWindow(ids[k]);
      if (w.direction_deg === w.direction_deg) { live[nLive++] = w; nDirected++; }
      else live[nLive++] = w;
    }
    // Windows with a direction first, so the loop below can stop at nDirected.
    live.sort((a, b) => Number(b.direction_deg === b.direction_deg) - Number(a.direction_deg === a.direction_deg));
    if (live.length > nLive) live.length = nLive;
    for (let k = 0; k < nLive; k++) { liveFrames[k] = live[k].frame; liveAccs[k] = live[k].accs; }
  };

  /** Rows that could not be read: charged to the instrument they name, else to the one owning the file. */
  const countUnreadable = (rejected: RejectedRow[], owner: number): void => {
    for (const r of rejected) {
      const ins = r.instrument ?? owner;
      counters.read[ins]++;
      counters.reject(ins, R[r.reason as keyof typeof R] ?? R.bad_number);
    }
    opts.onRejectedRows(rejected);
  };

  // Rejection reasons as constants of this scope (no property lookups in the per-sample loop).
  const R_DUPLICATE = R.duplicate, R_LOW_CNR = R.low_cnr, R_HARD_TARGET = R.hard_target_cnr, R_VR_LIMIT = R.radial_velocity_limit;
  const R_OUT_OF_ORDER = R.out_of_time_order, R_OUTSIDE_WINDOWS = R.outside_windows, R_NO_DIRECTION = R.no_wind_direction;
  const R_BELOW_GROUND = R.below_ground, R_OUTSIDE_TERRAIN = R.outside_terrain, R_BLOCKED = R.beam_blocked, R_OUTSIDE_PLANES = R.outside_planes;
  const reasonCount = NR, readCount = counters.read, acceptedCount = counters.accepted, rejectedCount = counters.rejected;
  const processChunk = (chunk: SampleChunk, owner: number, seen: Uint8Array) => {
    const b = chunk.batch;
    opts.onBatch?.(b);
    const drop = opts.suspicion?.batch(b, chunk.rejected); // 1 = duplicate to drop (qc.dropDuplicates)
    if (chunk.rejected.length) countUnreadable(chunk.rejected, owner);
    processSamples(b, drop, seen);
  };

  // The per-sample loop, apart from the per-batch calls above: optimised code that meets a call or a branch it has
  // never seen run goes back to the interpreter and is compiled again (this function alone took about 0.1 CPU-s per
  // compilation on the compiler threads, a dozen times per run, when the first unreadable row or the first sample
  // of a new window came after it was first optimised).
  const processSamples = (b: SampleBatch, drop: Uint8Array | undefined, seen: Uint8Array) => {
    // Windows may have finished since the last batch: the next sample looks its windows up again (no time is at or
    // beyond rFrom = Infinity, whatever rTo; no negation here, which the optimised loop would meet unrun).
    rFrom = Infinity;
    for (let i = 0; i < b.length; i++) {
      const ins = b.instrument[i];
      readCount[ins]++;
      seen[ins] = 1;
      // Every rejection sets its reason and leaves the block; one statement counts them all, so that a reason met
      // for the first time late in a run does not throw the optimised loop away.
      let why: number;
      sample: {
        if (drop !== undefined && drop[i] === 1) { why = R_DUPLICATE; break sample; }
        const cnr = b.cnr[i];
        if (cnr < cnrMin[ins]) { why = R_LOW_CNR; break sample; }
        if (cnr > cnrMax) { why = R_HARD_TARGET; break sample; }
        const vr = b.radialVelocity[i];
        if (vr > vLim || vr < -vLim) { why = R_VR_LIMIT; break sample; }
        const t = b.time[i];
        if (reachEpoch[ins] === epoch && t === rayT[ins] && b.azimuth[i] === lastAz[ins] && b.elevation[i] === lastEl[ins]) {
          // A further gate of the ray just placed (same time: same windows, whose first and last times it has
          // updated already), beyond its reach: the window lookup and the geometry give what they gave it.
          const r = b.range[i] + rOff[ins];
          if (!(r >= reachLo[ins] && r <= reachHi[ins])) {
            why = posU[ins] + r * nU[ins] < groundMin ? R_BELOW_GROUND : outsideWhy[ins];
            break sample;
          }
        }
        if (!(t >= rFrom && t < rTo)) enterRange(t);
        if (nLive === 0) { why = nFound > 0 ? R_OUT_OF_ORDER : R_OUTSIDE_WINDOWS; break sample; }
        for (let k = 0; k < nLive; k++) {
          // Stored whatever the comparison (a store first met in optimised code sends it back to the interpreter).
          const fr = liveFrames[k], f0 = fr[FRAME.first], f1 = fr[FRAME.last];
          fr[FRAME.first] = t < f0 ? t : f0;
          fr[FRAME.last] = t > f1 ? t : f1;
        }
        if (nDirected === 0) { why = R_NO_DIRECTION; break sample; }
        const az = b.azimuth[i], el = b.elevation[i];
        let ne: number, nn: number, nu: number, oe: number, on: number, ou: number;
        if (onNacelle[ins] === 0) {
          if (az !== lastAz[ins] || el !== lastEl[ins]) {
            los[0] = az; los[1] = el;
            unitVectorInto(los);
            const x0 = los[2], y0 = los[3], z0 = los[4];
            const m = Rm[ins];
            nE[ins] = m[0] * x0 + m[1] * y0 + m[2] * z0;
            nN[ins] = m[3] * x0 + m[4] * y0 + m[5] * z0;
            nU[ins] = m[6] * x0 + m[7] * y0 + m[8] * z0;
            lastAz[ins] = az; lastEl[ins] = el;
            clearTo[ins] = 0; blockedAt[ins] = Infinity;
            rayGates[ins] = 0; reachEpoch[ins] = -1;
          }
          ne = nE[ins]; nn = nN[ins]; nu = nU[ins]; oe = posE[ins]; on = posN[ins]; ou = posU[ins];
        } else {
          // Beam angles relative to the nacelle: turned with the nacelle direction at this sample's time.
          const miss = nacelles[ins]!.beam(t, az, el, nb);
          if (miss !== NacelleMiss.none) { why = missReason[miss]; break sample; }
          ne = nb[0]; nn = nb[1]; nu = nb[2]; oe = nb[3]; on = nb[4]; ou = nb[5];
        }
        const r = b.range[i] + rOff[ins];
        const tg = targetOf[ins];
        if (straight && onNacelle[ins] === 0 && tg >= 0) {
          // A gate of a ray whose reach is known (see reachLo): below the ground, or beyond the target's reach.
          if (reachEpoch[ins] !== epoch && ++rayGates[ins] >= 2 && reaches[tg] === 1) {
            let lo = Infinity, hi = -Infinity;
            for (let k = 0; k < nDirected; k++) {
              targets[tg].reach!(liveFrames[k], oe, on, ou, ne, nn, nu, reachOut);
              if (reachOut[0] < lo) lo = reachOut[0];
              if (reachOut[1] > hi) hi = reachOut[1];
            }
            reachLo[ins] = lo; reachHi[ins] = hi; reachEpoch[ins] = epoch;
          }
          rayT[ins] = t;
          if (reachEpoch[ins] === epoch && !(r >= reachLo[ins] && r <= reachHi[ins])) {
            why = ou + r * nu < groundMin ? R_BELOW_GROUND : outsideWhy[ins];
            break sample;
          }
        }
        let pe: number, pn: number, pu: number;
        if (curvature) {
          const elev = Math.asin(Math.max(-1, Math.min(1, nu)));
          const h = beamHeight(r, elev), s = groundDistance(r, elev, undefined, undefined, h);
          const hn = Math.hypot(ne, nn) || 1;
          pe = oe + (s * ne) / hn; pn = on + (s * nn) / hn; pu = ou + h;
        } else {
          pe = oe + r * ne; pn = on + r * nn; pu = ou + r * nu;
        }
        let gz = ground0;
        if (flat) {
          if (pu < groundMin) { why = R_BELOW_GROUND; break sample; }
        } else {
          gz = terrain.heightAt(pe, pn);
          if (gz !== gz) { why = R_OUTSIDE_TERRAIN; break sample; }
          if (pu < gz + clearance) { why = R_BELOW_GROUND; break sample; }
          // Blocked beams of ground-based instruments (a nacelle instrument's beam moves with the nacelle: not cached).
          if (onNacelle[ins] === 0 && r > clearTo[ins]) {
            if (r >= blockedAt[ins]) { why = R_BLOCKED; break sample; }
            if (blockedAt[ins] === Infinity) {
              const at = firstBlockedRange(terrain, posVec[ins], ne, nn, nu, clearTo[ins], r, marchStep, curvature);
              if (at <= r) { blockedAt[ins] = at; why = R_BLOCKED; break sample; }
              clearTo[ins] = r;
            }
          }
        }
        if (tg < 0) { why = R_OUTSIDE_PLANES; break sample; }
        const target = targets[tg];
        smp[0] = vr; smp[1] = ne; smp[2] = nn; smp[3] = nu; smp[4] = pe; smp[5] = pn; smp[6] = pu; smp[7] = t; smp[8] = gz;
        let placedAny = false;
        for (let k = 0; k < nDirected; k++) {
          if (target.add(liveAccs[k][tg], liveFrames[k], ins, smp)) placedAny = true;
        }
        if (placedAny) { acceptedCount[ins]++; continue; }
        why = target.outsideReason;
      }
      rejectedCount[ins * reasonCount + why]++;
    }
  };

  // Time shards: the rows of a batch inside [from_s, to_s), copied into a reused batch.
  const timeShard = shard !== undefined && (shard.from_s > -Infinity || shard.to_s < Infinity);
  let kept: SampleBatch | undefined;
  const inRange = (b: SampleBatch): SampleBatch => {
    if (!kept || kept.time.length < b.length) {
      const n = Math.max(b.length, 16384);
      kept = { length: 0, file: b.file, line: new Float64Array(n), time: new Float64Array(n), instrument: new Uint8Array(n), azimuth: new Float64Array(n),
        elevation: new Float64Array(n), range: new Float64Array(n), radialVelocity: new Float64Array(n), cnr: new Float64Array(n) };
    }
    const k = kept, lo = shard!.from_s, hi = shard!.to_s;
    k.file = b.file;
    let m = 0;
    for (let i = 0; i < b.length; i++) {
      const t = b.time[i];
      if (!(t >= lo && t < hi)) continue;
      k.line[m] = b.line[i]; k.time[m] = t; k.instrument[m] = b.instrument[i]; k.azimuth[m] = b.azimuth[i];
      k.elevation[m] = b.elevation[i]; k.range[m] = b.range[i]; k.radialVelocity[m] = b.radialVelocity[i]; k.cnr[m] = b.cnr[i];
      m++;
    }
    k.length = m;
    return k;
  };

  const orderJitter = c.qc.timeOrderTolerance_s;
  for (;;) {
    let k = -1;
    // The file that has read least far next; a primed file by where it starts, so that a later file of an instrument
    // is not begun before an earlier one ends (until then only windows ending before its first sample can finish).
    const at = (q: (typeof cursors)[number]) => (q.pending || q.waiting ? q.pendingFrom : q.last);
    for (let j = 0; j < cursors.length; j++) if (!cursors[j].done && (k < 0 || at(cursors[j]) < at(cursors[k]))) k = j;
    if (k < 0) break;
    const cur = cursors[k];
    let chunk: SampleChunk | undefined;
    if (cur.pending) {
      chunk = cur.pending;
      cur.pending = undefined;
    } else {
      const r = await cur.it.next();
      cur.waiting = false;
      if (r.done) cur.done = true;
      else chunk = r.value;
    }
    if (cur.done) {
      // The budget's sequences (rays, runs, bursts of each key: grid/accumulator.ts) end with the file, in every
      // run: a run sharded by files, or spread over cores by files, then forms exactly the same sequences.
      for (const w of open.values()) for (const a of w.accs) for (let ins = 0; ins < I; ins++) if (cur.seen[ins] === 1) a.endSequences(ins);
    }
    if (chunk) {
      if (timeShard) {
        const b = chunk.batch;
        const at = b.length > 0 ? b.time[0] : cur.lastValid;
        const mine = at >= shard!.from_s && at < shard!.to_s;
        processChunk({ batch: inRange(b), rejected: mine ? chunk.rejected : [] }, cur.owner, cur.seen);
        if (b.length > 0) cur.lastValid = b.time[b.length - 1];
      } else processChunk(chunk, cur.owner, cur.seen);
      const b = chunk.batch;
      if (b.length > 0) cur.last = Math.max(cur.last, batchEndTime(b)); // robust to a damaged time at the end
      cur.rows += b.length + chunk.rejected.length;
      opts.onProgress?.(cur.path, cur.rows);
    }
    if (!record) {
      // A file not begun yet holds nothing before its first sample (less the time-order jitter): the windows
      // ending before that can finish. Without this, every window until the start of an instrument's next file
      // stayed open (memory growing with the length of the files: 43 open windows, 90 MB, on the benchmark).
      let watermark = Infinity;
      for (const q of cursors) if (!q.done) watermark = Math.min(watermark, q.pending || q.waiting ? q.pendingFrom - orderJitter : q.last);
      if (Number.isFinite(watermark)) await finishUpTo(watermark);
    }
  }
  if (record) {
    for (const w of open.values()) {
      w.start_s = w.frame[FRAME.first];
      w.end_s = w.frame[FRAME.last];
    }
  }
  await finishUpTo(Infinity);
  return { plan };
}
