/**
 * The whole job for one campaign: check inputs, ingest (QC, geometry, windows), retrieve each window, write the
 * field tables, analyse the wake, render images and the report, and write the manifest.
 *
 * Output safety: everything is written into a staging folder beside the result (`.<name>.partial-<pid>`); only a
 * run that finishes is renamed to `<output.dir>/<name>`. An earlier result of the same name is never overwritten in
 * place: it is kept as `<name>.replaced-<time>` and the run says so (manifest warnings and the returned notice).
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, rmSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { checkSamples } from '../io/sampleSource.ts';
import { openAtomicStream, writeFileAtomic, type AtomicStream } from '../io/atomic.ts';
import { dictionaryJson, dictionaryMarkdown } from '../records/describe.ts';
import { rejectedRowsTable } from '../records/tables/run.ts';
import { headerLine, rowLine, tableLayout } from '../records/tableText.ts';
import { readSeries, type Series } from '../io/series.ts';
import { isoTime } from '../io/time.ts';
import { REJECT_REASONS, accountBalances, emptyAccount, type SampleAccount } from '../qc/reasons.ts';
import { retrieveWindow } from '../retrieval/retrieveWindow.ts';
import type { PlaneGrid, RetrievalSettings } from '../retrieval/settings.ts';
import type { FieldResult } from '../retrieval/types.ts';
import { Counters, ingest } from './ingest.ts';
import { fieldTableName, writeFieldTable } from './fieldTable.ts';
import { FieldNetcdf } from './fieldNetcdf.ts';
import { hashFiles } from './hashing.ts';
import type { OutputRecord, RunManifest, WindowRecord } from '../records/manifest.ts';
import { directionForWindow, windowScheme } from './windows.ts';
import { InputError } from '../errors.ts';
import { VERSION } from '../version.ts';

export interface RunOptions {
  /** Output root; default: the campaign's output.dir resolved against the working directory. */
  outRoot?: string;
  /** Render images and the report (default: campaign output.images). */
  images?: boolean;
  /** Progress sink (the CLI passes a terminal progress display; silent by default). */
  progress?: RunProgress;
  /** Stages after retrieval (wake analysis, images, planner, report), in order; see stages.ts. */
  stages?: RunStage[];
}

export interface RunProgress {
  stage(name: string): void;
  file(path: string, rows: number): void;
  done(): void;
}

/**
 * A stage after retrieval. `field` sees each field (one plane and window) as its window finishes, in time order;
 * `finish` runs once after the last window, before the manifest is written. Fields are not kept after their window:
 * a stage keeps what it needs (small summaries), so memory does not grow with the grids of a long campaign.
 */
export interface RunStage {
  name: string;
  field?(f: FieldResult, ctx: StageContext): Promise<OutputRecord[]>;
  finish?(ctx: StageContext): Promise<OutputRecord[]>;
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

export async function runCampaign(c: Campaign, opts: RunOptions = {}): Promise<RunResult> {
  const progress = opts.progress ?? silent;
  const t0 = performance.now();
  const timings: Record<string, number> = {};
  const lap = (name: string, since: number) => (timings[name] = (timings[name] ?? 0) + (performance.now() - since) / 1000);
  const images = opts.images ?? c.output.images;
  const notices: string[] = [];
  const warnings: string[] = [];

  // 1. Inputs: every data file must exist and have the required columns before anything is written.
  progress.stage('checking inputs');
  let t = performance.now();
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
  const dataFiles = c.instruments.flatMap((ins) => ins.files.map((file) => ({ file, ins })));
  if (dataFiles.length === 0) throw new InputError(c.sourceFile, undefined, 'no data files: list them under instruments[].files');
  for (const { file, ins } of dataFiles) {
    if (!existsSync(file)) throw new InputError(file, undefined, `data file of instrument "${ins.id}" not found`);
    await checkSamples(file, { instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign });
  }
  const dirSeries: Series | undefined =
    c.windDirection.kind === 'series' ? readSeries(c.windDirection.file, c.windDirection.columns, ['direction_deg']) : undefined;
  const digests = hashFiles(dataFiles.map((d) => d.file));
  lap('check_inputs', t);

  // 2. Staging folder.
  const outRoot = resolve(opts.outRoot ?? c.output.dir);
  const finalDir = join(outRoot, c.name);
  const runDir = join(outRoot, `.${c.name}.partial-${process.pid}`);
  rmSync(runDir, { recursive: true, force: true });
  mkdirSync(runDir, { recursive: true });

  let fieldNc: FieldNetcdf | undefined;
  try {
    const planes: PlaneGrid[] = c.planes.map((spec) => ({ spec, grid: gridSpecOf(spec) }));
    const settings: RetrievalSettings = {
      maxAmplification: c.retrieval.maxAmplification,
      minSamplesPerInstrument: c.retrieval.minSamplesPerInstrument,
      twoInstrumentAssumption: c.retrieval.twoInstrumentAssumption,
      robust: c.qc.robust,
      instrumentCount: c.instruments.length,
    };
    const counters = new Counters(c.instruments.length);
    const outputs: OutputRecord[] = [];
    const windows: WindowRecord[] = [];
    // Each assumption with the plane-windows it applied to, stated once in the manifest.
    const assumptions = new Map<string, string[]>();
    let rejectedOut: AtomicStream | undefined;
    let rejectedCount = 0;
    if (c.output.writeRejected) {
      rejectedOut = openAtomicStream(join(runDir, 'rejected_rows.csv'));
      rejectedOut.write(headerLine(rejectedLayout));
    }
    let retrieveTime = 0, writeTime = 0, stageFieldTime = 0;
    const campaignText = c.sourceFile === '<memory>' ? JSON.stringify(c) : readFileSync(c.sourceFile, 'utf8');
    const manifest: RunManifest = {
      tool: { name: 'wakeplane', version: VERSION },
      campaign: { name: c.name, file: c.sourceFile, sha256: sha256Text(campaignText), description: c.description },
      startedAt: new Date(Date.now() - (performance.now() - t0)).toISOString(),
      finishedAt: '',
      inputs: [],
      settings: c,
      samples: { total: emptyAccount(), perInstrument: {}, balanced: false },
      windows,
      outputs,
      timings_s: timings,
      peakRss_bytes: 0,
      samplesPerSecond: 0,
      assumptions: [],
      warnings,
    };
    const stages = opts.stages ?? [];
    fieldNc = c.output.netcdf ? new FieldNetcdf(c, runDir, manifest.campaign.sha256) : undefined;
    const stageCtx: StageContext = { campaign: c, runDir, images, manifest, shared: {} };

    // 3. Ingest and retrieve, window by window.
    progress.stage('reading samples');
    t = performance.now();
    const scheme = windowScheme(c);
    await ingest(
      {
        campaign: c,
        planes,
        scheme,
        directionOf: (start, end) => directionForWindow(c, dirSeries, start, end),
        onRejectedRows(rows) {
          rejectedCount += rows.length;
          if (rejectedOut) for (const r of rows) rejectedOut.write(rowLine(rejectedLayout, [relative(c.baseDir, r.file) || r.file, r.line, r.variable, r.ray, r.gate, r.reason, r.detail, r.text]));
        },
        onProgress: (file, rows) => progress.file(relative(c.baseDir, file) || file, rows),
        async onWindow(w) {
          const tr = performance.now();
          // Windows are numbered 0, 1, ... in time order within the run (the manifest keeps their times).
          const info = { index: windows.length, start_s: w.start_s, end_s: w.end_s };
          const res = retrieveWindow(w.samples, planes, info, w.direction_deg, settings);
          for (let i = 0; i < res.outliers.length; i++) {
            counters.accepted[i] -= res.outliers[i];
            counters.reject(i, REJECT_REASONS.indexOf('outlier'), res.outliers[i]);
          }
          retrieveTime += (performance.now() - tr) / 1000;
          const tw = performance.now();
          const ordinal = windows.length;
          windows.push({
            index: ordinal, start: isoTime(w.start_s), end: isoTime(w.end_s), start_s: w.start_s, end_s: w.end_s,
            direction_deg: w.direction_deg, samples: w.samples.length - res.outliers.reduce((a, b) => a + b, 0),
          });
          for (const f of res.fields) {
            const rel = fieldTableName(f, ordinal);
            await writeFieldTable(f, join(runDir, rel), c.turbine.rotorDiameter_m);
            await fieldNc?.add(f, ordinal);
            outputs.push({ kind: 'field-table', path: rel, plane: f.planeId, window: ordinal, description: `retrieved wind field, ${f.planeId}, ${isoTime(f.window.start_s)}` });
            for (const a of f.assumptions) assumptions.set(a, [...(assumptions.get(a) ?? []), `${f.planeId} w${ordinal}`]);
          }
          writeTime += (performance.now() - tw) / 1000;
          for (const stage of stages) {
            if (!stage.field) continue;
            const ts = performance.now();
            for (const f of res.fields) outputs.push(...(await stage.field(f, stageCtx)));
            lap(stage.name, ts);
            stageFieldTime += (performance.now() - ts) / 1000;
          }
        },
      },
      counters,
    );
    if (fieldNc) {
      const tc = performance.now();
      outputs.push(...(await fieldNc.close()));
      writeTime += (performance.now() - tc) / 1000;
    }
    lap('ingest_total', t);
    timings.retrieval = retrieveTime;
    timings.write_fields = writeTime;
    timings.ingest = timings.ingest_total - retrieveTime - writeTime - stageFieldTime;
    delete timings.ingest_total;
    if (rejectedOut) {
      await rejectedOut.close();
      outputs.push({ kind: 'rejected-rows', path: 'rejected_rows.csv', description: `${rejectedCount} rows that could not be read (file, line, reason)` });
    }
    if (windows.length === 0) warnings.push('no window received any in-plane sample: check positions, planes and the wind direction');

    t = performance.now();
    manifest.inputs = (await digests).map((d, k) => ({ file: d.file, instrument: dataFiles[k].ins.id, bytes: d.bytes, sha256: d.sha256 }));
    lap('hash_wait', t);
    const { perInstrument, total } = accountsFrom(c, counters);
    manifest.samples = { total, perInstrument, balanced: Object.values(perInstrument).every(accountBalances) };
    if (!manifest.samples.balanced) warnings.push('sample accounting does not balance (read != accepted + rejected): please report this as a bug');
    const fieldCount = outputs.filter((o) => o.kind === 'field-table').length;
    manifest.assumptions = [...assumptions].map(([a, where]) => `${a}: in ${where.length} of ${fieldCount} plane-windows (${where.join(', ')})`);
    manifest.samplesPerSecond = total.read / Math.max(1e-9, (timings.ingest ?? 0) + (timings.retrieval ?? 0) + (timings.write_fields ?? 0) + (timings.check_inputs ?? 0));

    // Provisional end figures, so that the report (the last stage) can show them; final values follow below.
    manifest.finishedAt = new Date().toISOString();
    manifest.peakRss_bytes = process.resourceUsage().maxRSS * 1024;

    // 4. Later stages: wake summaries, summary plots, planner, report.
    for (const stage of stages) {
      if (!stage.finish) continue;
      progress.stage(stage.name);
      t = performance.now();
      outputs.push(...(await stage.finish(stageCtx)));
      lap(stage.name, t);
    }

    // 5. Manifest, then make the result visible.
    timings.total = (performance.now() - t0) / 1000;
    manifest.finishedAt = new Date().toISOString();
    manifest.peakRss_bytes = process.resourceUsage().maxRSS * 1024;
    writeFileAtomic(join(runDir, 'dictionary.md'), dictionaryMarkdown());
    writeFileAtomic(join(runDir, 'dictionary.json'), dictionaryJson());
    outputs.push({ kind: 'dictionary', path: 'dictionary.md', description: 'every output column and variable: unit, frame, meaning, precision' });
    outputs.push({ kind: 'dictionary', path: 'dictionary.json', description: 'the same dictionary for programs' });
    outputs.push({ kind: 'manifest', path: 'manifest.json', description: 'this run: inputs, settings, sample accounting, timings' });
    writeFileAtomic(join(runDir, 'manifest.json'), JSON.stringify(manifest, null, 2) + '\n');

    if (existsSync(finalDir)) {
      const kept = `${finalDir}.replaced-${new Date().toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z')}`;
      renameSync(finalDir, kept);
      notices.push(`an earlier result was kept as ${relative(process.cwd(), kept) || kept}`);
    }
    renameSync(runDir, finalDir);
    progress.done();
    return { manifest, runDir: finalDir, notices, shared: stageCtx.shared };
  } catch (e) {
    progress.done();
    await fieldNc?.abort();
    rmSync(runDir, { recursive: true, force: true });
    throw e;
  }
}
