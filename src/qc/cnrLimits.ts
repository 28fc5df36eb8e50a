/**
 * The CNR limits of a run, resolved before the ingest, per instrument: fixed (a number: instruments[].cnrMin_db, else
 * qc.cnr_db.min) or estimated from the data ("auto", the default of qc.cnr_db.min; cnrEvidence.ts and cnrLimit.ts).
 *
 * The estimate is a function of the campaign's inputs and settings only: a bounded, deterministic pre-pass reads
 * rows of every file of each instrument (qc.cnr_db.auto.rowsPerInstrument, shared equally among its files, in
 * campaign order: from a plain CSV file 8 evenly spaced slices through it, from a compressed or NetCDF file its
 * first rows) and keeps only those rows' six numbers. It never depends on how a run is split into shards or
 * cores: every part of a run calls `resolveCnrLimits` on the whole campaign and gets the same limits (the manifest
 * records them). Memory: at most rowsPerInstrument rows of six numbers per instrument (15,000 rows: 0.7 MB).
 *
 * Limits: compressed CSV and NetCDF files are judged on their first rows (a record split into many files is still
 * sampled throughout). An instrument with too few samples, or without a CNR
 * column, gets qc.cnr_db.auto.withoutEvidence_db and the run says so.
 */
import type { Campaign } from '../campaign/types.ts';
import { KEEP_PRIMED, openSamples, sampleFormat, type PrimedFiles } from '../io/sampleSource.ts';
import { readerThreadWanted } from '../io/readerThread.ts';
import { readCsvSlices } from '../io/csvSlices.ts';
import type { CnrEvidence } from './cnrEvidence.ts';
import { estimateCnrLimit, type CnrClass, type CnrLimitDecision, type CnrLimitStatus } from './cnrLimit.ts';

export interface InstrumentCnrLimit {
  /** Samples below are rejected (low_cnr), above max_db too (hard_target_cnr), dB. */
  min_db: number;
  max_db: number;
  status: CnrLimitStatus | 'fixed';
  /** One sentence for the terminal, the manifest and the report. */
  note: string;
  /** The pre-pass (auto only): rows read from the heads of the instrument's files, samples with a CNR, with a reference. */
  rowsRead?: number;
  samples?: number;
  referenced?: number;
  /** Good-signal scatter sigma_g, m/s: the unit of the normalised deviation. */
  scatter_ms?: number;
  /** Inconsistent share of the strongest signals and of junk (cnrLimit.ts steps 3 and 4). */
  referenceShare?: number;
  junkInconsistentShare?: number;
  /** Estimated junk samples accepted above the limit and good samples rejected below it, in the pre-pass rows. */
  junkAccepted?: number;
  goodRejected?: number;
  binning?: CnrEvidence['binning'];
  /** The evidence curve: per CNR class, its share of inconsistent samples, scatter and estimated junk share. */
  classes?: CnrClass[];
}

export interface CnrLimits {
  /** auto: every instrument estimated; fixed: none; mixed: some (instruments[].cnrMin_db). */
  mode: 'auto' | 'fixed' | 'mixed';
  /** Per instrument id, in campaign order. */
  perInstrument: Record<string, InstrumentCnrLimit>;
  /** Per instrument index (campaign order), dB: what the ingest compares with. */
  min_db: Float64Array;
  /** Seconds spent reading and estimating (0 for fixed limits). */
  seconds: number;
}

interface Columns {
  n: number;
  time: Float64Array; azimuth: Float64Array; elevation: Float64Array; range: Float64Array; radialVelocity: Float64Array; cnr: Float64Array;
}

function columns(cap: number): Columns {
  return {
    n: 0, time: new Float64Array(cap), azimuth: new Float64Array(cap), elevation: new Float64Array(cap), range: new Float64Array(cap),
    radialVelocity: new Float64Array(cap), cnr: new Float64Array(cap),
  };
}

/** Byte slices per plain CSV file in the pre-pass (io/csvSlices.ts). */
export const PREPASS_SLICES = 8;

/**
 * The pre-pass: up to rowsPerInstrument rows per instrument, shared equally among its files; from a plain CSV file
 * spread through it (PREPASS_SLICES evenly spaced slices, io/csvSlices.ts), from a compressed CSV or NetCDF file its
 * first rows. Each file once (a file listed by several instruments with the smallest of their quotas), in campaign
 * order; rows go to the instrument they name.
 */
export async function readPrepass(c: Campaign, rowsPerInstrument: number, which: number[] = c.instruments.map((i) => i.index), primed?: PrimedFiles): Promise<{ cols: Columns[]; rowsRead: Float64Array }> {
  const I = c.instruments.length;
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
  const cols: Columns[] = [];
  const rowsRead = new Float64Array(I);
  for (let k = 0; k < I; k++) cols.push(columns(Math.min(rowsPerInstrument, 1 << 16)));
  const add = (k: number, t: number, az: number, el: number, r: number, vr: number, cnr: number) => {
    rowsRead[k]++;
    let col = cols[k];
    if (col.n >= rowsPerInstrument) return;
    if (col.n >= col.time.length) {
      const next = columns(Math.min(rowsPerInstrument, 2 * col.time.length));
      for (const f of ['time', 'azimuth', 'elevation', 'range', 'radialVelocity', 'cnr'] as const) next[f].set(col[f].subarray(0, col.n));
      next.n = col.n;
      col = cols[k] = next;
    }
    const j = col.n++;
    col.time[j] = t; col.azimuth[j] = az; col.elevation[j] = el; col.range[j] = r; col.radialVelocity[j] = vr; col.cnr[j] = cnr;
  };
  const quotas = new Map<string, { quota: number; ins: (typeof c.instruments)[number] }>();
  for (const k of which) {
    const ins = c.instruments[k];
    const quota = Math.ceil(rowsPerInstrument / Math.max(1, ins.files.length));
    for (const path of ins.files) {
      const q = quotas.get(path);
      if (!q || quota < q.quota) quotas.set(path, { quota, ins: q?.ins ?? ins });
    }
  }
  // Files read through `primed` (their streams kept open for the ingest): every compressed or NetCDF file when there
  // are at most KEEP_PRIMED of them, else the first of each instrument (as the ingest keeps them: pipeline/ingest.ts);
  // the others are read here and closed. Their heads asked for at once: the reader thread then reads each file's first
  // chunk before any file's second, instead of one file at a time as the heads are awaited below.
  const optsOf = (ins: (typeof c.instruments)[number]) => ({ instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign });
  const streamed = [...quotas].filter(([path]) => sampleFormat(path) !== 'csv');
  const primedPaths = new Set<string>();
  if (primed) {
    const firstOf = new Set<number>();
    for (const [path, { ins }] of streamed) {
      if (streamed.length > KEEP_PRIMED && firstOf.has(ins.index)) continue;
      firstOf.add(ins.index);
      primedPaths.add(path);
      primed.head(path, optsOf(ins)).catch(() => {});
    }
  }
  for (const [path, { quota, ins }] of quotas) {
    const opts = optsOf(ins);
    if (sampleFormat(path) === 'csv') {
      readCsvSlices(path, opts, quota, PREPASS_SLICES, (v) => add(v.instrument, v.time, v.azimuth, v.elevation, v.range, v.radialVelocity, v.cnr));
      continue;
    }
    if (primed && primedPaths.has(path)) {
      // The head the ingest will start from (io/sampleSource.ts PrimedFiles), when its first chunk holds the quota;
      // the same rows as reading the file's head again below.
      const first = await primed.head(path, opts);
      if (first.done) continue;
      const b = first.value.batch;
      const m = Math.min(b.length, quota);
      if (m + first.value.rejected.length >= quota) {
        for (let i = 0; i < m; i++) add(b.instrument[i], b.time[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]);
        continue;
      }
    }
    let taken = 0;
    for await (const chunk of openSamples(path, { ...opts, batchSize: 16384, thread: readerThreadWanted() })) {
      const b = chunk.batch;
      const m = Math.min(b.length, quota - taken);
      for (let i = 0; i < m; i++) add(b.instrument[i], b.time[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]);
      taken += m + chunk.rejected.length;
      if (taken >= quota) break;
    }
  }
  return { cols, rowsRead };
}

const fmt = (x: number) => (Math.round(x * 10) / 10).toString();

/**
 * The run's CNR limits from the campaign: fixed, or estimated by the pre-pass. Same campaign and files, same limits.
 */
export async function resolveCnrLimits(c: Campaign, primed?: PrimedFiles): Promise<CnrLimits> {
  const q = c.qc.cnr_db;
  const I = c.instruments.length;
  const per: Record<string, InstrumentCnrLimit> = {};
  const min = new Float64Array(I);
  const wanted = c.instruments.map((ins) => ins.cnrMin_db ?? q.min);
  for (const ins of c.instruments) {
    const w = wanted[ins.index];
    if (w === 'auto') continue;
    const key = ins.cnrMin_db !== undefined ? `instruments[${ins.index}].cnrMin_db` : 'qc.cnr_db.min';
    per[ins.id] = { min_db: w, max_db: q.max, status: 'fixed', note: `fixed limit ${fmt(w)} dB (${key})` };
    min[ins.index] = w;
  }
  const autoCount = wanted.filter((w) => w === 'auto').length;
  const mode = autoCount === 0 ? 'fixed' : autoCount === I ? 'auto' : 'mixed';
  if (autoCount === 0) return { mode, perInstrument: order(c, per), min_db: min, seconds: 0 };
  const t0 = performance.now();
  const a = q.auto;
  const auto = c.instruments.filter((ins) => wanted[ins.index] === 'auto');
  const { cols, rowsRead } = await readPrepass(c, a.rowsPerInstrument, auto.map((ins) => ins.index), primed);
  for (const ins of auto) {
    const col = cols[ins.index];
    const { evidence: ev, decision: d } = estimateCnrLimit(
      { length: col.n, time: col.time, azimuth: col.azimuth, elevation: col.elevation, range: col.range, radialVelocity: col.radialVelocity, cnr: col.cnr },
      { timeBlock_s: a.timeBlock_s, rangeBin_m: ins.kind === 'pulsed' ? ins.pulsed.gateLength_m : 30, cnrMax_db: q.max, radialVelocityLimit_ms: c.qc.radialVelocityLimit_ms },
      { junkCost: a.junkCost, minSamples: a.minSamples, fallback_db: a.fallback_db, withoutEvidence_db: a.withoutEvidence_db },
    );
    per[ins.id] = {
      min_db: d.min_db, max_db: q.max, status: d.status, note: noteOf(d, ev.referenced, rowsRead[ins.index], a.minSamples), rowsRead: rowsRead[ins.index],
      samples: ev.samples, referenced: ev.referenced, scatter_ms: ev.scatter_ms, referenceShare: d.referenceShare, junkInconsistentShare: d.junkInconsistentShare,
      junkAccepted: Math.round(d.junkAccepted), goodRejected: Math.round(d.goodRejected), binning: ev.binning, classes: d.classes,
    };
    min[ins.index] = d.min_db;
  }
  return { mode, perInstrument: order(c, per), min_db: min, seconds: (performance.now() - t0) / 1000 };
}

/** The per-instrument record in campaign order. */
function order(c: Campaign, per: Record<string, InstrumentCnrLimit>): Record<string, InstrumentCnrLimit> {
  return Object.fromEntries(c.instruments.map((i) => [i.id, per[i.id]]));
}

/** One sentence on how the limit was chosen. */
function noteOf(d: CnrLimitDecision, referenced: number, rowsRead: number, minSamples: number): string {
  if (d.status === 'break') {
    const below = d.classes.filter((k) => k.hi_db <= d.min_db);
    const n = below.reduce((s, k) => s + k.samples, 0), bad = below.reduce((s, k) => s + k.samples * k.inconsistentShare, 0);
    return `estimated ${fmt(d.min_db)} dB: below it ${Math.round((100 * bad) / Math.max(1, n))} % of the samples are inconsistent with their neighbours, ${fmt(100 * d.referenceShare)} % at the strongest signals`;
  }
  if (d.status === 'no-break') return `no clear break: the data are consistent down to the lowest CNR seen; permissive limit ${fmt(d.min_db)} dB (the lower of qc.cnr_db.auto.fallback_db and the lowest CNR seen)`;
  if (d.status === 'no-cnr') return `no CNR values in the first ${rowsRead} rows: samples without CNR pass the CNR rules; limit ${fmt(d.min_db)} dB for any with one (qc.cnr_db.auto.withoutEvidence_db)`;
  return `too few samples for an estimate (${referenced} with a local reference, ${minSamples} needed): limit ${fmt(d.min_db)} dB (qc.cnr_db.auto.withoutEvidence_db)`;
}
