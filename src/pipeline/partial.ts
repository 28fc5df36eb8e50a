/**
 * Sharded runs: a shard reads a subset of a campaign (some of its files, the rows of a time range, or both) and
 * writes a partial result; a merge adds partials up and finishes them exactly as one run over everything would.
 *
 * What a partial holds (io/partialFile.ts is the container), per record:
 * - header: tool and version, partial format, the accumulator layout (grid/accumulatorState.ts), the campaign (name,
 *   file, SHA-256), the settings key (SHA-256 of the run's resolved settings: everything the manifest lists under
 *   `settings`), the campaign's data files, the shard (its files and time range [from_s, to_s)), the targets and
 *   their key counts, and the campaign's first sample time (from every file's first batch, so that windows anchored
 *   at the first sample are the same in every shard);
 * - window: per window that received a sample in range (after the CNR and radial-velocity limits), its definition,
 *   bounds, first and last sample times, wind direction, and per target the UNFILTERED accumulator (integer
 *   fixed-point sums and radial-velocity histograms): the robust filter runs only at the merge, on the merged
 *   histograms, so its median and MAD are those of all the window's samples;
 * - counters: per instrument the samples read, accepted (before the robust filter) and rejected by reason;
 * - evidence: the suspicious-input inspector's evidence per file read (qc/suspicion.ts), merged at the end;
 * - rejected: the rows that could not be read (for rejected_rows.csv), in batches;
 * - index (last): offsets of all the above, the windows with their bounds, and each file's span of valid times.
 *
 * The merge checks every partial before any output (same tool version and layout, campaign, settings and files;
 * no two partials covering the same rows; every file covered over all time) and names the partial at fault in one
 * line. It then feeds the merged windows in the order a single run finishes them (by end, then start, then id) to
 * the normal finishing (robust filter, retrieval, tables, stages), sums the counters, merges the evidence, so the
 * field tables are byte-identical to a single run's and the accounting sums exactly.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { dirname, relative } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { InputError, OutputError, PartialError, Problems } from '../errors.ts';
import { CellAccumulator } from '../grid/accumulator.ts';
import { accumulatorFromStates, accumulatorLayout, accumulatorState, type ArrayState, type TypedArray } from '../grid/accumulatorState.ts';
import type { SampleTarget } from '../grid/target.ts';
import type { RejectedRow } from '../io/batch.ts';
import { PARTIAL_FORMAT, PartialReader, PartialWriter } from '../io/partialFile.ts';
import { isoTime } from '../io/time.ts';
import { REJECT_REASONS } from '../qc/reasons.ts';
import { SuspicionInspector, suspicionSettings, type EvidenceState } from '../qc/suspicion.ts';
import { resolveCnrLimits } from '../qc/cnrLimits.ts';
import { VERSION } from '../version.ts';
import { buildWindowPlan, type BuiltWindowPlan } from '../windows/build.ts';
import { directionForWindow } from '../windows/direction.ts';
import type { WindowDef } from '../windows/plan.ts';
import { stateTurbine } from '../campaign/turbines.ts';
import { readSeries } from '../io/series.ts';
import { loadTerrain } from '../io/terrainFile.ts';
import type { FinishedWindow } from './finishWindows.ts';
import { campaignTargets } from './geometryTargets.ts';
import { campaignFirstSample, Counters, ingest } from './ingest.ts';
import { preflight } from './preflight.ts';

/** The part of a campaign a shard reads: some files (all when undefined) and the rows with from_s <= t < to_s. */
export interface ShardSpec {
  files?: string[];
  from_s: number;
  to_s: number;
}

/** SHA-256 of the resolved settings (what the manifest lists under `settings`): the compatibility key of partials. */
export function settingsKey(c: Campaign): string {
  return createHash('sha256').update(JSON.stringify(c)).digest('hex');
}

function campaignSha(c: Campaign): string {
  const text = c.sourceFile === '<memory>' ? JSON.stringify(c) : readFileSync(c.sourceFile, 'utf8');
  return createHash('sha256').update(text).digest('hex');
}

const REJECTED_BATCH = 8192;

export interface ShardResult {
  partial: string;
  windows: number;
  read: number;
}

/**
 * Where a shard's results go, in this order: begin (the header), then windows as they finish (in the order a run
 * finishes them) with the time up to which every window is finished and batches of unreadable rows, then end
 * (counters, per-file evidence, per-file time spans). A partial file (fileSink) or the parent process (shardProcesses.ts).
 */
export interface ShardSink {
  begin(header: Record<string, unknown>): void | Promise<void>;
  window(meta: Record<string, unknown>, arrays: Record<string, TypedArray>): void | Promise<void>;
  finishedTo?(t: number): void;
  rejected(rows: RejectedRow[]): void;
  end(counters: Record<string, Float64Array>, evidence: [string, EvidenceState][], spans: [string, [number, number]][]): void | Promise<void>;
  abort(): void;
}

/** The sink writing a partial file (io/partialFile.ts; the records described at the top of this file). */
/** What a shard writing a partial file tells its parent on one machine (shardProcesses.ts). */
export type SinkNote =
  | { type: 'begin'; tmp: string }
  | { type: 'window'; id: number; start_s: number; end_s: number; at: number }
  | { type: 'finishedTo'; t: number };

export function fileSink(partialPath: string, notify?: (n: SinkNote) => void | Promise<void>): ShardSink {
  if (existsSync(partialPath)) {
    // Never touch a file the tool did not make: only an earlier partial result is replaced (a shard run again).
    try {
      PartialReader.open(partialPath).close();
    } catch (e) {
      const msg = (e as Error).message;
      // A partial of another format (an older wakeplane's) says so; anything else is not the tool's file.
      if (msg.startsWith('partial format')) throw new OutputError(partialPath, `exists and is a ${msg.replace(/: run the shard again.*$/, '')}; left alone. Remove it or choose another --partial file`);
      throw new OutputError(partialPath, 'exists and is not a wakeplane partial result; left alone. Choose another --partial file');
    }
  }
  mkdirSync(dirname(partialPath), { recursive: true });
  const out = new PartialWriter(partialPath);
  let header = -1;
  const windows: [number, number, number, number][] = [];
  const rejected: number[] = [];
  return {
    begin(h) {
      header = out.write({ type: 'header', ...h });
      return notify?.({ type: 'begin', tmp: out.tmp });
    },
    window(meta, arrays) {
      const def = meta.def as WindowDef;
      const at = out.write({ type: 'window', ...meta }, arrays);
      windows.push([def.id, meta.start_s as number, meta.end_s as number, at]);
      return notify?.({ type: 'window', id: def.id, start_s: meta.start_s as number, end_s: meta.end_s as number, at });
    },
    finishedTo(t) { void notify?.({ type: 'finishedTo', t }); },
    rejected(rows) { rejected.push(out.write({ type: 'rejected', rows })); },
    end(counters, evidence, spans) {
      const cnt = out.write({ type: 'counters' }, counters);
      const ev = evidence.map(([f, e]) => [f, out.write({ type: 'evidence', file: f, meta: e.meta }, e.arrays)]);
      out.close({ header, windows, rejected, counters: cnt, evidence: ev, spans, reasons: [...REJECT_REASONS] });
    },
    abort() { out.abort(); },
  };
}

/**
 * Reads one shard of a campaign and writes its partial result to `partialPath` (atomically: the file appears only
 * when complete). Memory is bounded as for a run: each finished window's accumulators are written and reused.
 */
export async function runShard(c: Campaign, spec: ShardSpec, partialPath: string, opts: { firstSample_s?: number; cnrMin_db?: Float64Array } = {}): Promise<ShardResult> {
  const r = await runShardTo(c, spec, fileSink(partialPath), opts);
  return { ...r, partial: partialPath };
}

/** Reads one shard of a campaign into `sink`. */
export async function runShardTo(c: Campaign, spec: ShardSpec, sink: ShardSink, opts: { firstSample_s?: number; cnrMin_db?: Float64Array } = {}): Promise<{ windows: number; read: number }> {
  const pre = await preflight(c, { outRoot: c.baseDir, folder: '', kind: 'run', data: true, output: false });
  if (pre.errors.length) throw pre.errors.length === 1 ? pre.errors[0] : new Problems(pre.errors);
  const cRead = pre.campaign;
  const allFiles = pre.files.map((f) => f.file);
  const known = new Set(allFiles);
  for (const f of spec.files ?? []) if (!known.has(f)) throw new InputError(f, undefined, 'not a data file of the campaign (shard files must be listed under instruments[].files)');
  const files = new Set(spec.files ?? allFiles);
  if (!(spec.from_s < spec.to_s)) throw new RangeError(`shard time range is empty: ${isoTime(spec.from_s)} .. ${isoTime(spec.to_s)}`);
  const stateSeries = stateTurbine(c).series;
  const turbineSeries = c.windows.kind === 'segments' && stateSeries
    ? readSeries(stateSeries.file, stateSeries.columns, ['yaw_deg'], ['wind_direction_deg', 'power_kw'], { holes: ['yaw_deg'] })
    : undefined;
  const planInputs = { turbineSeries, directionSeries: pre.directionSeries };
  const firstSample = opts.firstSample_s ?? (await campaignFirstSample(cRead));
  // The CNR limits of the whole campaign (estimated from every file's rows when asked): the same in every shard.
  const cnrMin = opts.cnrMin_db ?? (await resolveCnrLimits(cRead)).min_db;
  const { rt } = campaignTargets(c);
  const terrain = await loadTerrain(c);
  const inspector = new SuspicionInspector(cRead, suspicionSettings(c));
  const counters = new Counters(c.instruments.length);
  try {
    await sink.begin({
      tool: 'wakeplane', version: VERSION, format: PARTIAL_FORMAT, layout: accumulatorLayout(),
      campaign: { name: c.name, file: c.sourceFile, sha256: campaignSha(c) }, settingsKey: settingsKey(c),
      allFiles, shard: { files: [...files], from_s: spec.from_s, to_s: spec.to_s },
      targets: rt.targets.map((t) => ({ id: t.id, keyCount: t.keyCount })), instruments: c.instruments.length, firstSample_s: firstSample, cnrMin_db: [...cnrMin],
    });
    let windows = 0;
    let pending: RejectedRow[] = [];
    const flush = () => {
      if (pending.length) sink.rejected(pending);
      pending = [];
    };
    const spans = new Map<string, [number, number]>();
    let built: BuiltWindowPlan | undefined;
    await ingest({
      campaign: cRead, terrain, suspicion: inspector, targets: rt.targets, targetOf: rt.targetOf, nacelleFrames: rt.nacelleFrames, cnrMin_db: cnrMin,
      shard: { files, from_s: spec.from_s, to_s: spec.to_s },
      firstSample_s: firstSample,
      windowPlan(first) {
        built ??= buildWindowPlan(c, { ...planInputs, firstSample_s: first });
        return built.plan;
      },
      directionOf: (start, end) => directionForWindow(c, pre.directionSeries, start, end),
      onRejectedRows(rows) {
        pending.push(...rows);
        if (pending.length >= REJECTED_BATCH) flush();
      },
      onBatch(b) {
        if (b.length === 0) return;
        let lo = Infinity, hi = -Infinity;
        for (let i = 0; i < b.length; i++) { const t = b.time[i]; if (t < lo) lo = t; if (t > hi) hi = t; }
        const s = spans.get(b.file);
        spans.set(b.file, s ? [Math.min(s[0], lo), Math.max(s[1], hi)] : [lo, hi]);
      },
      onFinishedTo: (t) => sink.finishedTo?.(t),
      async onWindow(w) {
        const arrays: Record<string, TypedArray> = {};
        const accMeta: Record<string, unknown>[] = [];
        w.accs.forEach((a, k) => {
          const st = accumulatorState(a);
          accMeta.push(st.meta);
          for (const [n, v] of Object.entries(st.arrays)) arrays[`${k}.${n}`] = v;
        });
        await sink.window({ def: w.def, start_s: w.start_s, end_s: w.end_s, first_s: w.first_s, last_s: w.last_s, direction_deg: w.direction_deg, accs: accMeta }, arrays);
        windows++;
      },
    }, counters);
    flush();
    await sink.end(
      { read: counters.read, accepted: counters.accepted, rejected: counters.rejected },
      [...files].map((f) => [f, inspector.evidenceOf(f)]),
      [...spans],
    );
    let read = 0;
    for (const r of counters.read) read += r;
    return { windows, read };
  } catch (e) {
    sink.abort();
    throw e;
  }
}

/** Merges the records of one window from several shards (window metadata and per-target accumulator arrays). */
export function mergeWindowRecords(recs: { meta: Record<string, unknown>; arrays: Record<string, TypedArray> }[], start_s: number, end_s: number, spare?: CellAccumulator[]): FinishedWindow {
  let def: WindowDef | undefined, first = Infinity, last = -Infinity, direction = NaN;
  const perTarget: ArrayState[][] = [];
  for (const rec of recs) {
    const m = rec.meta;
    def ??= m.def as WindowDef;
    direction = m.direction_deg as number;
    first = Math.min(first, m.first_s as number);
    last = Math.max(last, m.last_s as number);
    (m.accs as Record<string, unknown>[]).forEach((meta, k) => {
      const arrays: Record<string, TypedArray> = {};
      const prefix = `${k}.`;
      for (const [n, v] of Object.entries(rec.arrays)) if (n.startsWith(prefix)) arrays[n.slice(prefix.length)] = v;
      (perTarget[k] ??= []).push({ meta, arrays });
    });
  }
  const accs: CellAccumulator[] = perTarget.map((states, k) => accumulatorFromStates(states, spare?.[k]));
  return { def: def!, start_s, end_s, direction_deg: direction, accs, first_s: first, last_s: last } as FinishedWindow;
}

/** A finished partial's unreadable rows (handed on), counters (summed) and evidence (merged per file). */
export function absorbTail(r: PartialReader, to: { onRejectedRows(rows: RejectedRow[]): void; counters: Counters; inspector: SuspicionInspector }): void {
  for (const at of r.index.rejected as number[]) to.onRejectedRows(r.read(at).meta.rows as RejectedRow[]);
  const cnt = r.read(r.index.counters as number).arrays;
  const reasons = r.index.reasons as string[];
  if (reasons.length !== REJECT_REASONS.length || reasons.some((x, k) => x !== REJECT_REASONS[k])) throw new PartialError(`${r.path}: written with other rejection reasons`);
  addInto(to.counters.read, cnt.read as Float64Array);
  addInto(to.counters.accepted, cnt.accepted as Float64Array);
  addInto(to.counters.rejected, cnt.rejected as Float64Array);
  for (const [file, at] of r.index.evidence as [string, number][]) {
    const rec = r.read(at);
    to.inspector.absorb(file, { meta: rec.meta.meta as Record<string, unknown>, arrays: rec.arrays as EvidenceState['arrays'] });
  }
}

/** Adds b into a, element by element. */
export function addInto(a: Float64Array, b: Float64Array): void {
  for (let i = 0; i < a.length; i++) a[i] += b[i];
}

/** One window over all partials: where its records are. */
interface MergedWindow {
  id: number;
  start_s: number;
  end_s: number;
  parts: { reader: PartialReader; at: number }[];
}

/** Partials checked against a campaign and against each other, ready to feed the finishing of a run. */
export class PartialSet {
  readonly firstSample_s: number;
  private constructor(
    readonly readers: PartialReader[],
    readonly windows: MergedWindow[],
    firstSample_s: number,
    readonly warnings: string[],
    private readonly headers: Record<string, unknown>[] = [],
  ) {
    this.firstSample_s = firstSample_s;
  }

  /**
   * Opens and checks the partials against campaign `c` (with its data files as the run reads them, `files`).
   * Throws one one-line error naming the partial (or the data file no partial covers) at the first problem.
   */
  static open(paths: string[], c: Campaign, files: string[], show: (f: string) => string = (f) => f): PartialSet {
    const readers: PartialReader[] = [];
    const fail = (msg: string): never => {
      for (const r of readers) r.close();
      throw new PartialError(msg);
    };
    if (paths.length === 0) fail('merge: no partial result given');
    const key = settingsKey(c), layout = accumulatorLayout();
    const headers: Record<string, unknown>[] = [];
    const byReal = new Map<string, string>();
    for (const p of paths) {
      if (!existsSync(p)) fail(`${p}: partial result not found`);
      let r: PartialReader;
      try {
        r = PartialReader.open(p);
      } catch (e) {
        fail(`${p}: ${(e as Error).message}`);
        throw e;
      }
      readers.push(r);
      const h = r.read(r.index.header as number).meta;
      headers.push(h);
      const camp = h.campaign as { name: string; sha256: string };
      if (h.version !== VERSION) fail(`${p}: written by wakeplane ${h.version}, this is ${VERSION}: run the shard again with this version`);
      if (h.layout !== layout) fail(`${p}: accumulator layout differs from this wakeplane's (written by another build): run the shard again`);
      if (camp.name !== c.name) fail(`${p}: partial result of campaign "${camp.name}", not "${c.name}"`);
      if (h.settingsKey !== key) fail(`${p}: partial result of campaign "${c.name}" with other settings (the campaign file or its data changed since the shard ran): run the shard again`);
      const all = h.allFiles as string[];
      if (all.length !== files.length || all.some((f, k) => f !== files[k])) fail(`${p}: partial result of another list of data files than the campaign's now`);
      const sig = JSON.stringify(h.shard);
      const twin = byReal.get(sig);
      if (twin) fail(`${p}: duplicate of ${twin} (the same shard twice)`);
      byReal.set(sig, p);
    }
    const first = headers[0].firstSample_s as number;
    for (let k = 1; k < headers.length; k++) {
      const f = headers[k].firstSample_s as number;
      if (!(f === first || (f !== f && first !== first))) fail(`${paths[k]}: its first sample time differs from ${paths[0]}'s (data files changed between shards?)`);
    }
    // Coverage: per data file, the shards' time ranges must tile (-inf, inf) without overlap.
    for (const file of files) {
      const ranges: { from: number; to: number; p: string }[] = [];
      headers.forEach((h, k) => {
        const s = h.shard as { files: string[]; from_s: number; to_s: number };
        if (s.files.includes(file)) ranges.push({ from: s.from_s, to: s.to_s, p: paths[k] });
      });
      ranges.sort((a, b) => a.from - b.from || a.to - b.to);
      let at = -Infinity;
      for (const r of ranges) {
        if (r.from < at) {
          const other = ranges.find((q) => q !== r && q.from < r.to && r.from < q.to)!;
          fail(`${r.p}: overlaps ${other.p} (both read ${show(file)} over ${isoTime(Math.max(r.from, other.from))} .. ${isoTime(Math.min(r.to, other.to))})`);
        }
        if (r.from > at) fail(`${show(file)}: no partial result covers its rows from ${isoTime(at)} to ${isoTime(r.from)} (a shard missing?)`);
        at = r.to;
      }
      if (at < Infinity) fail(`${show(file)}: no partial result covers its rows from ${isoTime(at)} on (a shard missing?)`);
    }
    // Windows over all partials, in the order a single run finishes them.
    const byId = new Map<number, MergedWindow>();
    readers.forEach((r) => {
      for (const [id, start, end, at] of r.index.windows as [number, number, number, number][]) {
        const w = byId.get(id);
        if (w) { w.start_s = Math.min(w.start_s, start); w.end_s = Math.max(w.end_s, end); w.parts.push({ reader: r, at }); }
        else byId.set(id, { id, start_s: start, end_s: end, parts: [{ reader: r, at }] });
      }
    });
    const windows = [...byId.values()].sort((a, b) => a.end_s - b.end_s || a.start_s - b.start_s || a.id - b.id);
    const spans: { file: string; span: [number, number]; k: number }[] = [];
    readers.forEach((r, k) => { for (const [file, span] of r.index.spans as [string, [number, number]][]) spans.push({ file, span, k }); });
    const warnings = overlapWarnings(c, spans, show);
    return new PartialSet(readers, windows, first, warnings, headers);
  }

  /**
   * Feeds the merged windows, in a single run's order, to `onWindow`; then sums the counters into `counters`, adds
   * each file's evidence to `inspector` and hands the unreadable rows on. One window's accumulators are held at a time.
   */
  async feed(opts: {
    onWindow(w: FinishedWindow): Promise<void>;
    onRejectedRows(rows: RejectedRow[]): void;
    counters: Counters;
    inspector: SuspicionInspector;
  }): Promise<void> {
    // The accumulators of a finished window serve the next (the finishing keeps none of them, as in the ingest).
    let spare: CellAccumulator[] | undefined;
    for (const w of this.windows) {
      const win = mergeWindowRecords(w.parts.map(({ reader, at }) => reader.read(at)), w.start_s, w.end_s, spare);
      await opts.onWindow(win);
      spare = win.accs;
    }
    for (const r of this.readers) absorbTail(r, opts);
  }

  /** Every partial must have applied these CNR limits (dB per instrument): else one line naming the partial. */
  checkCnrLimits(min_db: Float64Array): void {
    this.headers.forEach((h, k) => {
      const theirs = h.cnrMin_db as number[] | undefined;
      const same = theirs !== undefined && theirs.length === min_db.length && theirs.every((x, i) => x === min_db[i] || (x !== x && min_db[i] !== min_db[i]));
      if (!same) {
        this.close();
        throw new PartialError(`${this.readers[k].path}: read with other CNR limits (${theirs ? theirs.join(', ') : 'none recorded'} dB) than this campaign's data give now (${[...min_db].join(', ')} dB): the data files changed; run the shard again`);
      }
    });
  }

  close(): void {
    for (const r of this.readers) r.close();
  }
}


export { PartialError };

/**
 * Files of one instrument read in different shards whose times overlap (strictly: files that only touch, a ray
 * split between consecutive files, are not reported): rows repeated between them were not looked for.
 */
export function overlapWarnings(c: Campaign, spans: { file: string; span: [number, number]; k: number }[], show: (f: string) => string): string[] {
  const warnings: string[] = [];
  const owner = new Map<string, string>();
  for (const ins of c.instruments) for (const f of ins.files) if (!owner.has(f)) owner.set(f, ins.id);
  for (let i = 0; i < spans.length; i++) {
    for (let j = i + 1; j < spans.length; j++) {
      const a = spans[i], b = spans[j];
      if (a.k === b.k || a.file === b.file || owner.get(a.file) !== owner.get(b.file)) continue;
      if (a.span[0] < b.span[1] && b.span[0] < a.span[1]) {
        const [x, y] = [a.file, b.file].sort();
        warnings.push(`instrument ${owner.get(a.file)}: files ${show(x)} and ${show(y)} overlap in time and were read in different shards: rows repeated between them were not looked for`);
      }
    }
  }
  return warnings;
}

/** Removes partial files after a successful merge (only files that are partial results). */
export function removePartials(paths: string[]): void {
  for (const p of paths) {
    try {
      PartialReader.open(p).close();
      rmSync(p, { force: true });
    } catch {
      /* not a partial, or gone: left alone */
    }
  }
}

export const showPath = (c: Campaign) => (f: string) => relative(c.baseDir, f) || f;
