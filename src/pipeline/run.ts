/**
 * The whole job for one campaign: check inputs, ingest (QC, geometry, windows), retrieve each window, write the
 * field tables, analyse the wake, render images and the report, and write the manifest.
 *
 * Output safety (outputFolder.ts): everything is written into a marked staging folder beside the result
 * (`.<name>.partial-<pid>`); only a run that finishes is renamed to `<output.dir>/<name>`. Whatever stands there
 * must be a result wakeplane marked for this campaign: it is kept as `<name>.replaced-<time>-<pid>` and the run says
 * so; anything else stops the run before any work. Inputs are checked first (preflight.ts); the suspicious-input
 * inspector (qc/suspicion.ts) watches the samples and adds its warnings, or stops the run for a file without a
 * usable row.
 */
import { planeOrigin, stateTurbine } from '../campaign/turbines.ts';
import { loadTerrain } from '../io/terrainFile.ts';
import { PrimedFiles } from '../io/sampleSource.ts';
import { readerThreadWanted } from '../io/readerThread.ts';
import { createHash } from 'node:crypto';
import { readFileSync, rmSync, statSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { openAtomicStream, writeFileAtomic, type AtomicStream } from '../io/atomic.ts';
import { dictionaryJson, dictionaryMarkdown } from '../records/describe.ts';
import { rejectedRowsTable } from '../records/tables/run.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import { readSeries, type Series } from '../io/series.ts';
import { SuspicionInspector, sameContentWarnings, suspicionSettings } from '../qc/suspicion.ts';
import { REJECT_REASONS, accountBalances, emptyAccount, type SampleAccount } from '../qc/reasons.ts';
import { resolveCnrLimits, type CnrLimits } from '../qc/cnrLimits.ts';
import type { PlaneGrid, RetrievalSettings } from '../retrieval/settings.ts';
import { budgetSettings } from './budgetSettings.ts';
import type { FieldResult } from '../retrieval/types.ts';
import { campaignFirstSample, Counters, ingest, INGEST_BATCH, primeTextFiles } from './ingest.ts';
import { PartialSet, removePartials } from './partial.ts';
import { runShardsLive, shareFiles } from './shardProcesses.ts';
import type { FinishedWindow } from './finishWindows.ts';
import type { RejectedRow } from '../io/batch.ts';
import { assumptionLines, WindowFinisher } from './finishWindows.ts';
import { PlaneTarget } from '../grid/planeTarget.ts';
import { campaignTargets } from './geometryTargets.ts';
import { GeometryFinisher } from './geometryFinish.ts';
import { hashFiles } from './hashing.ts';
import type { OutputRecord, RunManifest } from '../records/manifest.ts';
import { directionForWindow } from '../windows/direction.ts';
import { buildWindowPlan, type BuiltWindowPlan } from '../windows/build.ts';
import type { WindowPlan } from '../windows/plan.ts';
import { loadConditionSeries } from './ensembles.ts';
import { Problems } from '../errors.ts';
import { VERSION } from '../version.ts';
import { campaignInputs, openStaging } from './outputFolder.ts';
import { preflight } from './preflight.ts';

export interface RunOptions {
  /** Output root; default: the campaign's output.dir (resolved against the campaign file's folder). */
  outRoot?: string;
  /** Also remove unfinished staging folders whose run cannot be proven stopped (see outputFolder.ts). */
  clean?: boolean;
  /** Render images and the report (default: campaign output.images). */
  images?: boolean;
  /** Progress sink (the CLI passes a terminal progress display; silent by default). */
  progress?: RunProgress;
  /** Stages after retrieval (wake analysis, images, planner, report), in order; see stages.ts. */
  stages?: RunStage[];
  /**
   * Processes reading the samples (default 1; the command line's default is every core). With more than one and more than one data
   * file, the files are shared out to child processes, each writing a partial result, merged here exactly
   * (pipeline/partial.ts): the same outputs as one process. 1 keeps the single-process path.
   */
  cores?: number;
  /**
   * Read in one process when the data files together are smaller than this, bytes (starting processes costs more
   * than it saves on small campaigns); default 0. The command line uses PARALLEL_MIN_BYTES unless --cores is given.
   */
  parallelMinBytes?: number;
  /** Merge these partial results of sharded runs instead of reading the samples (`wakeplane merge`). */
  partials?: string[];
  /** Keep the partial files after a successful merge (default: removed). */
  keepPartials?: boolean;
}

export interface RunProgress {
  stage(name: string): void;
  file(path: string, rows: number): void;
  /** A running counter of the stage (windows, images, ...). */
  count?(label: string, value: number): void;
  /** Expected total rows of the reading stage (an estimate), for the share done. */
  expect?(rows: number): void;
  done(): void;
}

/**
 * A stage after retrieval. `field` sees each field (one plane and window) as its window finishes, in time order;
 * `finish` runs once after the last window, before the manifest is written. Fields are not kept after their window:
 * a stage keeps what it needs (small summaries), so memory does not grow with the grids of a long campaign.
 */
export interface RunStage {
  name: string;
  /** Before the first sample is read, with the campaign's planes (for work that can overlap the ingest). */
  start?(ctx: StageContext, planes: PlaneGrid[]): void;
  field?(f: FieldResult, ctx: StageContext): Promise<OutputRecord[]>;
  finish?(ctx: StageContext): Promise<OutputRecord[]>;
  /** Runs after the manifest's end time, timings and peak memory are final, so what it writes (the report) shows
   * exactly the manifest's figures; its own few milliseconds are not in the timings. */
  last?: boolean;
}

export interface StageContext {
  campaign: Campaign;
  runDir: string;
  images: boolean;
  /** Filled progressively; complete (but for finishedAt, timings and peak memory) when `finish` runs. */
  manifest: RunManifest;
  /** Results handed from one stage to the next (each stage documents what it puts here). */
  shared: Record<string, unknown>;
}

export interface RunResult {
  manifest: RunManifest;
  runDir: string;
  notices: string[];
  /** What the stages handed on (for example the wake analysis and the plan summary). */
  shared: Record<string, unknown>;
}

const rejectedLayout = tableLayout(rejectedRowsTable);

const silent: RunProgress = { stage() {}, file() {}, done() {} };

function sha256Text(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export function accountsFrom(c: Campaign, counters: Counters): { perInstrument: Record<string, SampleAccount>; total: SampleAccount } {
  const per: Record<string, SampleAccount> = {};
  const total = emptyAccount();
  for (const ins of c.instruments) {
    const a = emptyAccount();
    a.read = counters.read[ins.index];
    a.accepted = counters.accepted[ins.index];
    REJECT_REASONS.forEach((r, k) => (a.rejected[r] = counters.rejected[ins.index * REJECT_REASONS.length + k]));
    per[ins.id] = a;
    total.read += a.read;
    total.accepted += a.accepted;
    for (const r of REJECT_REASONS) total.rejected[r] += a.rejected[r];
  }
  return { perInstrument: per, total };
}

function loadInflowSeries(c: Campaign): Series | undefined {
  return c.inflow.kind === 'series' ? readSeries(c.inflow.file, c.inflow.columns, ['height_m', 'speed_ms'], ['direction_deg']) : undefined;
}

/** Data below this size is read in one process by default (about 1 s of reading on one core), bytes. */
export const PARALLEL_MIN_BYTES = 32 * 2 ** 20;

/** Fewest cores on which the command reads in several processes by default. */
export const PARALLEL_MIN_CORES = 4;

/**
 * The command's default number of reading processes: every core (os.availableParallelism()) on machines with at
 * least PARALLEL_MIN_CORES, else 1. Measured on a 2-core machine (README, "Speed and memory"): one process already
 * keeps about 1.5 cores busy (hashing, NetCDF writing and the kernel's reads beside the main thread), and two reading
 * processes cost about 35 % more CPU seconds, so splitting made the run about 10 % slower there.
 */
export function defaultCores(available: number): number {
  return available >= PARALLEL_MIN_CORES ? available : 1;
}

/** Writes a stage left running on another thread; the run waits for them before the report and the manifest. */
export function pendingWrites(shared: Record<string, unknown>): Promise<void>[] {
  return (shared.pendingWrites ??= []) as Promise<void>[];
}

/** The campaign as the manifest records it: qc.cnr_db.resolved_db holds each instrument's applied CNR limit, dB. */
export function withResolvedCnr(c: Campaign, cnr: CnrLimits): Campaign {
  const resolved_db = Object.fromEntries(c.instruments.map((i) => [i.id, cnr.min_db[i.index]]));
  return { ...c, qc: { ...c.qc, cnr_db: { ...c.qc.cnr_db, resolved_db } } } as Campaign;
}

export async function runCampaign(c: Campaign, opts: RunOptions = {}): Promise<RunResult> {
  const progress = opts.progress ?? silent;
  const t0 = performance.now();
  // the process's peak so far (a demo's simulation, an earlier run of the same process): says whether the peak at the end is this run's
  const peakAtStart = process.resourceUsage().maxRSS * 1024;
  const timings: Record<string, number> = {};
  const lap = (name: string, since: number) => (timings[name] = (timings[name] ?? 0) + (performance.now() - since) / 1000);
  const images = opts.images ?? c.output.images;
  const notices: string[] = [];
  const warnings: string[] = [];

  // 1. Inputs and the output target, before anything is written (all problems at once).
  progress.stage('checking inputs');
  let t = performance.now();
  const outRoot = resolve(opts.outRoot ?? c.output.dir);
  const pre = await preflight(c, { outRoot, folder: c.name, kind: 'run', data: true });
  if (pre.errors.length) throw pre.errors.length === 1 ? pre.errors[0] : new Problems(pre.errors);
  warnings.push(...pre.warnings);
  const cRead = pre.campaign; // each data file once
  const dataFiles = pre.files;
  const dirSeries = pre.directionSeries;
  // Windows that do not depend on the samples (lists, segments, fixed with a given anchor) are built now, so that
  // their errors come before any output; fixed windows anchored at the first sample are built by the ingest.
  const stateSeries = stateTurbine(c).series;
  const turbineSeries = c.windows.kind === 'segments' && stateSeries
    ? readSeries(stateSeries.file, stateSeries.columns, ['yaw_deg'], ['wind_direction_deg', 'power_kw'], { holes: ['yaw_deg'] })
    : undefined;
  const planInputs = { turbineSeries, directionSeries: dirSeries };
  const early: BuiltWindowPlan | undefined =
    c.windows.kind === 'fixed' && c.windows.anchor === 'first-sample' ? undefined : buildWindowPlan(c, planInputs);
  const conditionSeries = loadConditionSeries(c);
  const terrain = await loadTerrain(c);
  const show = (f: string) => relative(c.baseDir, f) || f;
  // Partial results to merge: checked against the campaign and each other before anything is written.
  let partialSet = opts.partials ? PartialSet.open(opts.partials, c, dataFiles.map((d) => d.file), show) : undefined;
  const cores = Math.max(1, Math.floor(opts.cores ?? 1));
  const dataBytes = dataFiles.reduce((a, d) => a + statSync(d.file).size, 0);
  const parallel = !partialSet && cores > 1 && dataFiles.length > 1 && dataBytes >= (opts.parallelMinBytes ?? 0);
  const digests = hashFiles(dataFiles.map((d) => d.file));
  const campaignText = c.sourceFile === '<memory>' ? JSON.stringify(c) : readFileSync(c.sourceFile, 'utf8');
  lap('check_inputs', t);

  // CNR limits: fixed, or estimated from the first rows of every file (a function of the campaign only, so every
  // shard or core of a run gets the same limits).
  progress.stage('estimating CNR limits');
  t = performance.now();
  // Opened once: the pre-pass reads the heads of the NetCDF and compressed files, the ingest goes on from there.
  // Only where this process ingests the files itself (not when spread over cores, nor when merging partials).
  const primed = new PrimedFiles(INGEST_BATCH, readerThreadWanted());
  let cnr: CnrLimits;
  let staging: ReturnType<typeof openStaging>;
  try {
    if (!(parallel || partialSet)) await primeTextFiles(cRead, primed);
    cnr = await resolveCnrLimits(cRead, parallel || partialSet ? undefined : primed);
    if (cnr.mode !== 'fixed') lap('cnr_limits', t);
    // Partials must have used the same limits (the same data: the estimate depends on the campaign's files only);
    // checked before anything is written.
    partialSet?.checkCnrLimits(cnr.min_db);
    // 2. Staging folder (marked as wakeplane's; stale ones of killed runs removed or reported).
    staging = openStaging({
      root: outRoot, folder: c.name, kind: 'run', campaign: c.name, campaignSha256: sha256Text(campaignText), clean: opts.clean,
      inputs: [...campaignInputs(c), ...(opts.partials ?? []).map((p) => resolve(p))],
    });
  } catch (e) {
    await primed.close();
    throw e;
  }
  notices.push(...staging.notices);
  const runDir = staging.dir;
  const finalDir = staging.finalDir;
  const inspector = new SuspicionInspector(cRead, suspicionSettings(c, show));

  try {
    const settings: RetrievalSettings = {
      maxAmplification: c.retrieval.maxAmplification,
      minSamplesPerInstrument: c.retrieval.minSamplesPerInstrument,
      twoInstrumentAssumption: c.retrieval.twoInstrumentAssumption,
      robust: c.qc.robust,
      instrumentCount: c.instruments.length,
      budget: budgetSettings(c, dirSeries),
    };
    const counters = new Counters(c.instruments.length);
    let rejectedOut: AtomicStream | undefined;
    let rejectedCount = 0;
    if (c.output.writeRejected) {
      rejectedOut = openAtomicStream(join(runDir, 'rejected_rows.csv'));
      rejectedOut.write(headerLine(rejectedLayout));
    }
    const outputs: OutputRecord[] = [];
    const manifest: RunManifest = {
      tool: { name: 'wakeplane', version: VERSION },
      campaign: { name: c.name, file: c.sourceFile, sha256: sha256Text(campaignText), description: c.description },
      startedAt: new Date(Date.now() - (performance.now() - t0)).toISOString(),
      finishedAt: '',
      inputs: [],
      settings: withResolvedCnr(c, cnr),
      cnrLimits: { mode: cnr.mode, perInstrument: cnr.perInstrument },
      samples: { total: emptyAccount(), perInstrument: {}, balanced: false },
      windows: [],
      outputs,
      timings_s: timings,
      peakRss_bytes: 0,
      peakRssAtStart_bytes: peakAtStart,
      samplesPerSecond: 0,
      assumptions: [],
      warnings,
    };
    const stages = opts.stages ?? [];
    const stageCtx: StageContext = { campaign: c, runDir, images, manifest, shared: {} };
    const { planes, rt } = campaignTargets(c);
    const geometry = rt.targets.length > 1 ? new GeometryFinisher(c, rt, c.qc.robust, loadInflowSeries(c)) : undefined;
    if (geometry) stageCtx.shared.geometry = geometry.results;
    if (geometry) stageCtx.shared.profileInflow = geometry.profileInflow;
    const finisher = new WindowFinisher(c, planes, settings, runDir, stages, stageCtx, counters, conditionSeries, geometry);
    manifest.windows = finisher.windows;

    // 3. Ingest and retrieve, window by window.
    // Stages' early work (the NetCDF writer thread loading the HDF5 library and defining the plane files) runs
    // beside the ingest, not after the last window. It used to wait for the inputs' digests, so that three threads
    // would not share two cores at the start; but hashing at low priority beside a busy main thread can take as long
    // as the ingest (4.2 s of a 5.3 s run on the benchmark without ray structure), and the writer then loaded the
    // library after the last window: +0.7 s. Both threads run below the main thread (nice 10).
    for (const stage of stages) stage.start?.(stageCtx, planes);
    progress.stage('reading samples');
    progress.expect?.(pre.estimatedRows);
    t = performance.now();
    let built: BuiltWindowPlan | undefined = early;
    let outputsSeen = 0, imageCount = 0;
    const onWindow = async (w: FinishedWindow) => {
      await finisher.window(w);
      progress.count?.('windows', finisher.windows.length);
      for (; outputsSeen < finisher.outputs.length; outputsSeen++) if (finisher.outputs[outputsSeen].kind === 'image') imageCount++;
      if (imageCount) progress.count?.('images', imageCount);
    };
    const onRejectedRows = (rows: RejectedRow[]) => {
      rejectedCount += rows.length;
      if (rejectedOut) for (const r of rows) rejectedOut.write(rowLine(rejectedLayout, [relative(c.baseDir, r.file) || r.file, r.line, r.variable, r.ray, r.gate, r.reason, r.detail, r.text]));
    };
    if (parallel) {
      // Every core: the files shared out to child processes (by size); windows finished here as they come.
      const shardDir = join(runDir, '.shards');
      const groups = shareFiles(dataFiles.map((d) => d.file), cores);
      const first = await campaignFirstSample(cRead);
      built ??= buildWindowPlan(c, { ...planInputs, firstSample_s: first });
      finisher.disjoint = built.plan.disjoint;
      const specs = groups.map((files) => ({ files, from_s: -Infinity, to_s: Infinity }));
      warnings.push(...(await runShardsLive(c, specs, shardDir, first, { onWindow, onRejectedRows, counters, inspector }, show, cnr.min_db)));
      rmSync(shardDir, { recursive: true, force: true });
      notices.push(`read in ${groups.length} processes (--cores ${cores})`);
    } else if (partialSet) {
      built ??= buildWindowPlan(c, { ...planInputs, firstSample_s: partialSet.firstSample_s });
      finisher.disjoint = built.plan.disjoint;
      warnings.push(...partialSet.warnings);
      await partialSet.feed({ onWindow, onRejectedRows, counters, inspector });
      partialSet.close();
    } else {
      await ingest(
        {
          campaign: cRead,
          terrain,
          suspicion: inspector,
          targets: rt.targets,
          targetOf: rt.targetOf,
          nacelleFrames: rt.nacelleFrames,
          cnrMin_db: cnr.min_db,
          primed,
          windowPlan(first) {
            built ??= buildWindowPlan(c, { ...planInputs, firstSample_s: first });
            finisher.disjoint = built.plan.disjoint;
            return built.plan;
          },
          directionOf: (start, end) => directionForWindow(c, dirSeries, start, end),
          onRejectedRows,
          onProgress: (file, rows) => progress.file(relative(c.baseDir, file) || file, rows),
          onWindow,
        },
        counters,
      );
    }
    await primed.close(); // streams of the pre-pass the ingest did not take (other paths, shards)
    await finisher.end(manifest, notices);
    warnings.push(...finisher.ensembles.speedWarnings());
    // Stages that look at every window (the power gain) read the plan.
    if (built) stageCtx.shared.windowPlan = built.plan;
    outputs.push(...finisher.outputs);
    if (built?.segments) manifest.segments = built.segments;
    const missed = missedWindows(built?.plan, finisher.windows);
    if (missed) warnings.push(missed);
    if (!finisher.disjoint) warnings.push('windows overlap: robust-filter outliers are counted per window (manifest windows[].outliers), not in the run-level accounting');
    if (!finisher.disjoint && c.conditions?.bins.length) {
      warnings.push('condition bins pool overlapping windows: a sample in k windows of a bin counts k times in its ensemble, so the ensemble\'s sample counts are inflated and its standard uncertainties too small (by up to the square root of k); use windows that do not overlap for ensembles');
    }
    lap('ingest_total', t);
    const stageFieldTime = Object.values(finisher.times.stages).reduce((a, b) => a + b, 0);
    for (const [name, secs] of Object.entries(finisher.times.stages)) timings[name] = (timings[name] ?? 0) + secs;
    timings.retrieval = finisher.times.retrieval;
    timings.write_fields = finisher.times.write_fields;
    timings.ingest = timings.ingest_total - finisher.times.retrieval - finisher.times.write_fields - stageFieldTime;
    delete timings.ingest_total;
    if (rejectedOut) {
      await rejectedOut.close();
      outputs.push({ kind: 'rejected-rows', path: 'rejected_rows.csv', description: `${rejectedCount} rows that could not be read (file, line, reason)` });
    }
    for (const [id, l] of Object.entries(cnr.perInstrument)) if (l.status === 'too-few-samples' || l.status === 'no-cnr') warnings.push(`CNR limit of ${id}: ${l.note}`);
    if (images && cnr.mode !== 'fixed') {
      const { renderCnrLimitFigures } = await import('../render/cnrLimitFigure.ts');
      outputs.push(...(await renderCnrLimitFigures(cnr.perInstrument, runDir)));
    }
    if (finisher.windows.length === 0) warnings.push('no window received any in-plane sample: check positions, planes and the wind direction');

    t = performance.now();
    manifest.inputs = (await digests).map((d, k) => ({ file: d.file, instrument: dataFiles[k].ins.id, bytes: d.bytes, sha256: d.sha256 }));
    lap('hash_wait', t);
    const { perInstrument, total } = accountsFrom(c, counters);
    const suspicion = inspector.finish(perInstrument);
    if (suspicion.errors.length) throw suspicion.errors.length === 1 ? suspicion.errors[0] : new Problems(suspicion.errors);
    warnings.push(...suspicion.warnings, ...sameContentWarnings(manifest.inputs, show));
    manifest.samples = { total, perInstrument, balanced: Object.values(perInstrument).every(accountBalances) };
    if ((partialSet || parallel) && total.rejected.out_of_time_order > 0) warnings.push(`${total.rejected.out_of_time_order} samples came after their window was finished (out_of_time_order): which rows that catches depends on which files are read together, so a sharded run can count them differently from a single run`);
    if (!manifest.samples.balanced) warnings.push('sample accounting does not balance (read != accepted + rejected): please report this as a bug');
    const fieldCount = outputs.filter((o) => o.kind === 'field-table').length;
    manifest.assumptions = assumptionLines(finisher.assumptions, fieldCount);
    manifest.samplesPerSecond = total.read / Math.max(1e-9, (timings.ingest ?? 0) + (timings.retrieval ?? 0) + (timings.write_fields ?? 0) + (timings.check_inputs ?? 0) + (timings.cnr_limits ?? 0));

    // 4. Later stages: wake summaries, figures, planner; then the end figures, then the report (a `last` stage).
    for (const stage of stages) {
      if (!stage.finish || stage.last) continue;
      progress.stage(stage.name);
      t = performance.now();
      const made = await stage.finish(stageCtx);
      outputs.push(...made);
      progress.count?.('files', made.length);
      lap(stage.name, t);
    }
    await Promise.all(pendingWrites(stageCtx.shared)); // files the stages left to other threads
    timings.total = (performance.now() - t0) / 1000;
    manifest.finishedAt = new Date().toISOString();
    manifest.peakRss_bytes = process.resourceUsage().maxRSS * 1024;
    writeFileAtomic(join(runDir, 'dictionary.md'), dictionaryMarkdown());
    writeFileAtomic(join(runDir, 'dictionary.json'), dictionaryJson());
    outputs.push({ kind: 'dictionary', path: 'dictionary.md', description: 'every output column and variable: unit, frame, meaning, precision' });
    outputs.push({ kind: 'dictionary', path: 'dictionary.json', description: 'the same dictionary for programs' });

    for (const stage of stages) {
      if (!stage.finish || !stage.last) continue;
      progress.stage(stage.name);
      outputs.push(...(await stage.finish(stageCtx)));
    }

    // 5. Manifest, then make the result visible.
    outputs.push({ kind: 'manifest', path: 'manifest.json', description: 'this run: inputs, settings, sample accounting, timings' });
    writeFileAtomic(join(runDir, 'manifest.json'), JSON.stringify(manifest, null, 2) + '\n');

    notices.push(...staging.commit());
    if (opts.partials && !opts.keepPartials) removePartials(opts.partials);
    progress.done();
    return { manifest, runDir: finalDir, notices, shared: stageCtx.shared };
  } catch (e) {
    progress.done();
    await primed.close();
    staging.abort();
    throw e;
  }
}

/**
 * Windows of a list or of turbine-state segments that no sample reached: they have no field, figure or
 * table, and are said so once (at most five named) instead of being left out silently. '' when there are none.
 */
function missedWindows(plan: WindowPlan | undefined, done: readonly { start_s: number; end_s: number }[]): string {
  if (!plan?.all?.length || (plan.kind !== 'list' && plan.kind !== 'segment')) return '';
  const have = new Set(done.map((w) => `${w.start_s}/${w.end_s}`));
  const missed = plan.all.filter((d) => !have.has(`${d.start_s}/${d.end_s}`));
  if (!missed.length) return '';
  const kind = plan.kind === 'list' ? 'listed' : 'segment';
  const iso = (t: number) => new Date(Math.round(t * 1000)).toISOString().slice(0, 16).replace('T', ' ');
  const named = missed.slice(0, 5).map((d) => `${d.label ? `${d.label} ` : ''}(${iso(d.start_s)}\u2013${iso(d.end_s)} UTC)`);
  const more = missed.length > 5 ? ` and ${missed.length - 5} more` : '';
  return `windows: ${missed.length} of ${plan.all.length} ${kind} windows had no sample and are not in the results (no field, figure or table): ${named.join(', ')}${more}`;
}
