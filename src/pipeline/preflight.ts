/**
 * Everything a command checks before it writes anything, in one place, so that `check` validates what `run` (or
 * `plan`) would and a run never fails after an hour for a reason visible at the start:
 * - the output target: a folder wakeplane may replace, or nothing (outputFolder.ts); unfinished staging folders;
 * - every data file: a readable regular file (not a directory, device, FIFO or system file), listed once (a path
 *   listed twice is read once, with a warning), with the required columns in its header and at least one data line;
 * - the series files the run reads (wind direction, turbine, inflow reference): readable, with their columns;
 * - the plausibility warnings on the geometry (campaign/plausibility.ts), and what the outputs will lack (no yaw
 *   series: no wake-steering rows).
 * It collects every problem instead of stopping at the first.
 */
import { stateTurbine } from '../campaign/turbines.ts';
import { loadTerrain } from '../io/terrainFile.ts';
import { realpathSync, statSync } from 'node:fs';
import { relative } from 'node:path';
import { plausibilityWarnings } from '../campaign/plausibility.ts';
import type { Campaign, Instrument } from '../campaign/types.ts';
import { InputError } from '../errors.ts';
import { checkSamples, openSamples, sampleFormat } from '../io/sampleSource.ts';
import { readerThreadWanted } from '../io/readerThread.ts';
import { fileProblem } from '../io/fileKind.ts';
import { unterminatedLastLine } from '../io/fileTail.ts';
import { printable } from '../io/excerpt.ts';
import { readSeries, type Series } from '../io/series.ts';
import { emptyAccount } from '../qc/reasons.ts';
import { SuspicionInspector, suspicionSettings } from '../qc/suspicion.ts';
import { buildWindowPlan } from '../windows/build.ts';
import { loadConditionSeries } from './ensembles.ts';
import { campaignInputs, checkTarget, findPartials, type FolderKind } from './outputFolder.ts';
import { pushTo } from '../math/group.ts';
import { planeOverlapWarnings } from '../campaign/planeOverlap.ts';

export interface PreflightOptions {
  /** Output root (absolute). */
  outRoot: string;
  /** Folder under the root (the campaign name for a run, `<name>-plan` for the planner). */
  folder: string;
  kind: FolderKind;
  /** Check data and series files (a run; the planner needs none). */
  data: boolean;
  /**
   * Also read every data row (`check`): files without a usable row become errors, and the inspector's evidence
   * (angle units, time order, duplicates) becomes warnings, as a run would report them. The reader alone runs at
   * several million rows per second.
   */
  scan?: boolean;
  /** Check the output target (default true; a shard of a sharded run writes only its partial file). */
  output?: boolean;
}

export interface Preflight {
  /** The campaign with each data file listed once (under its first instrument): what the run reads. */
  campaign: Campaign;
  /** Data files to read, with their owning instrument. */
  files: { file: string; ins: Instrument }[];
  /** The wind-direction series when the campaign uses one (read here, used by the run). */
  directionSeries?: Series;
  /** Problems that stop the command (each names its file and line, key or folder). */
  errors: Error[];
  /** One line each: the run goes on, and says so in the terminal, manifest and report. */
  warnings: string[];
  /** Notes about unfinished staging folders found beside the target. */
  notes: string[];
  /** Estimated data rows over all files (from sizes and the mean line length at their start): for progress. */
  estimatedRows: number;
}

const shown = (c: Campaign, f: string) => relative(c.baseDir, f) || f;

export async function preflight(c: Campaign, opts: PreflightOptions): Promise<Preflight> {
  const errors: Error[] = [];
  const warnings = [...plausibilityWarnings(c)];
  const notes: string[] = [];
  if (opts.output !== false) try {
    checkTarget({ root: opts.outRoot, folder: opts.folder, kind: opts.kind, campaign: c.name, campaignSha256: '', inputs: campaignInputs(c) });
  } catch (e) {
    errors.push(e as Error);
  }
  if (opts.output !== false) for (const p of findPartials(opts.outRoot, opts.folder)) {
    notes.push(`unfinished folder ${relative(process.cwd(), p.path) || p.path}: ${p.why}${p.status === 'stale' ? ' (removed by the next run or plan)' : p.status === 'unknown' ? ' (remove it with --clean)' : ''}`);
  }
  const files: { file: string; ins: Instrument }[] = [];
  let estimatedRows = 0;
  let directionSeries: Series | undefined;
  let campaign = c;
  if (opts.data) {
    const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
    const seen = new Map<string, { file: string; ins: Instrument }>();
    const keep = new Map<number, string[]>();
    for (const ins of c.instruments) {
      for (const file of ins.files) {
        const bad = fileProblem(file);
        if (bad) {
          errors.push(new InputError(file, undefined, bad.kind === 'missing' ? `data file of instrument "${ins.id}" not found` : `data file of instrument "${ins.id}" ${bad.reason}`));
          continue;
        }
        // The file's identity, not its path: a symbolic link or a hard link to a file already listed is that file.
        let real = file;
        try {
          const st = statSync(file);
          real = st.ino ? `${st.dev}:${st.ino}` : realpathSync(file); // no inode number (some file systems): the path
        } catch {
          /* checked above */
        }
        const first = seen.get(real);
        if (first) {
          warnings.push(`${shown(c, file)} is listed twice (under instrument ${first.ins.id}${first.file !== file ? ` as ${shown(c, first.file)}` : ''} and under ${ins.id}): read once, for ${first.ins.id}`);
          continue;
        }
        seen.set(real, { file, ins });
        pushTo(keep, ins.index, file);
        files.push({ file, ins });
        try {
          const h = await checkSamples(file, { instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign, thread: readerThreadWanted() });
          if (!h.hasDataLine) errors.push(new InputError(file, undefined, sampleFormat(file) === 'netcdf' ? 'no usable rows: the file has no rays (its time dimension is empty)' : 'no usable rows: the file has a header and no data lines'));
          const tail = h.hasDataLine && h.format === 'csv' ? unterminatedLastLine(file) : undefined;
          if (tail !== undefined) {
            const end = [...tail].length > 40 ? `\u2026${printable([...tail].slice(-40).join(''))}` : printable(tail);
            warnings.push(`instrument ${ins.id}, ${shown(c, file)}: the file ends without a line break: its last row ("${end}") may have been cut short (a copy or write interrupted?); read as it stands`);
          }
          const size = statSync(file).size;
          estimatedRows += h.bytesPerLine > 0 ? size / h.bytesPerLine : 0;
        } catch (e) {
          errors.push(e as Error);
        }
      }
    }
    if (c.instruments.every((i) => i.files.length === 0)) errors.push(new InputError(c.sourceFile, undefined, 'no data files: list them under instruments[].files'));
    campaign = { ...c, instruments: c.instruments.map((i) => ({ ...i, files: keep.get(i.index) ?? [] })) };
    const series = (what: () => Series) => {
      try {
        return what();
      } catch (e) {
        errors.push(e as Error);
        return undefined;
      }
    };
    if (c.windDirection.kind === 'series') {
      const wd = c.windDirection;
      directionSeries = series(() => readSeries(wd.file, wd.columns, ['direction_deg'], [], { holes: ['direction_deg'] }));
      if (directionSeries && directionSeries.time.length === 0) errors.push(new InputError(wd.file, undefined, 'the wind-direction series has no rows'));
    }
    let stateSeries: Series | undefined;
    for (const t of c.turbines) {
      const ts = t.series;
      // The state turbine's series must give the yaw; the others may bring only their power.
      const required = t === stateTurbine(c) ? ['yaw_deg'] : [];
      const read = ts ? series(() => readSeries(ts.file, ts.columns, required, ['yaw_deg', 'wind_direction_deg', 'power_kw', 'wind_speed_ms', 'status'], { holes: ['yaw_deg'] })) : undefined;
      if (t === stateTurbine(c)) stateSeries = read;
    }
    // Inclinometer series of nacelle-mounted instruments (run reads them before any output).
    for (const ins of c.instruments) {
      const o = ins.orientationSeries;
      if (o) series(() => readSeries(o.file, o.columns, [], ['tilt_deg', 'roll_deg']));
    }
    if (c.site.terrain) {
      try {
        await loadTerrain(c);
      } catch (e) {
        errors.push(e as Error);
      }
    }
    if (c.inflow.kind === 'series') {
      const inf = c.inflow;
      series(() => readSeries(inf.file, inf.columns, ['height_m', 'speed_ms'], ['direction_deg']));
    }
    // The columns condition bins name (run reads them before any output; check must fail on them as run does).
    if (c.conditions?.bins.length) {
      try {
        loadConditionSeries(c);
      } catch (e) {
        errors.push(e as Error);
      }
    }
    // Windows that do not depend on the samples (lists, segments, fixed with a given anchor) are built by run before
    // any output: build them here too, so that check fails on a bad window list or no steady span exactly as run
    // does (only when the series they need were read, so that one problem is not reported twice).
    const w = c.windows;
    if (errors.length === 0 && !(w.kind === 'fixed' && w.anchor === 'first-sample')) {
      try {
        buildWindowPlan(c, { turbineSeries: w.kind === 'segments' ? stateSeries : undefined, directionSeries });
      } catch (e) {
        errors.push(e as Error);
      }
    }
    if (opts.scan && errors.length === 0) {
      const found = await scanData(campaign, files);
      errors.push(...found.errors);
      warnings.push(...found.warnings);
    }
    warnings.push(...planeOverlapWarnings(c.planes));
    if (!stateTurbine(c).series) {
      warnings.push('no turbine series (turbine.series with yaw_deg): the yaw offset of each window is unknown, so wake/steering.csv has no rows');
    }
  }
  return { campaign, files, directionSeries, errors, warnings, notes, estimatedRows };
}

/** Reads every row of every data file through the inspector (no quality control, no geometry). */
async function scanData(c: Campaign, files: { file: string; ins: Instrument }[]): Promise<{ errors: Error[]; warnings: string[] }> {
  const inspector = new SuspicionInspector(c, suspicionSettings(c, (f) => shown(c, f)));
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));
  for (const { file, ins } of files) {
    for await (const chunk of openSamples(file, { instrumentIndex, owner: ins.index, columns: ins.columns, sign: ins.radialVelocitySign })) {
      inspector.batch(chunk.batch, chunk.rejected);
    }
  }
  // no accounting here (no quality control): the per-instrument share checks need a run
  const accounts = Object.fromEntries(c.instruments.map((i) => [i.id, { ...emptyAccount(), read: NaN }]));
  const r = inspector.finish(accounts);
  return { errors: r.errors, warnings: r.warnings };
}
