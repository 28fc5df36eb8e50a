/**
 * The stages that follow retrieval in a normal run, in order:
 * 1. wake: each field through the per-plane-window analysis as its window finishes (shared.wakeRows maps a field to
 *    its row); at the end the campaign-level summaries and model fits (shared.wake).
 * 2. figures: each field's values and a small panel collected as it passes (using shared.wakeRows); at the end the
 *    summary plots, one multi-panel figure per plane and the requested single-window images (render/runFigures.ts).
 * 3. plan (optional, `wakeplane demo` and `run --plan`): the planner's outputs under plan/ (shared.plan).
 * 4. report: report.html listing every output recorded before it.
 * The image stack (sharp) and the planner load only when a run uses them, so a run without images starts faster.
 */
import { stateTurbine } from '../campaign/turbines.ts';
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { readSeries, type Series } from '../io/series.ts';
import type { PlanSummary } from '../plan/index.ts';
import type { ReportExtras } from '../render/report.ts';
import { planeWindowContext, summariseWake, type WakeInputs } from '../wake/analyse.ts';
import { analysePlaneWindow } from '../wake/planeWindow.ts';
import { writeWakeOutputs } from '../wake/output.ts';
import { analyseSiteField, type SiteWakeInputs } from '../wake/siteWakes.ts';
import { summariseSiteWake, turbineWakesCsv } from '../wake/siteSummary.ts';
import { powerStage } from './powerStage.ts';
import type { PowerAnalysis } from '../power/analyse.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { FieldNetcdf } from './fieldNetcdf.ts';
import { writeWakeNetcdf } from '../wake/outputNetcdf.ts';
import type { WakeAnalysis, WakePlaneWindow } from '../wake/types.ts';
import { pendingWrites, type RunStage } from './run.ts';
import { geometryStage } from './geometryStage.ts';
import { budgetStage } from './budgetStage.ts';
import type { FieldResult, WindowInfo } from '../retrieval/types.ts';
import { FIGURES_DEFAULT, type FiguresSettings, type WindowImages } from '../campaign/figures.ts';
import type { FigureCollector } from '../render/runFigures.ts';
import { readFieldTable } from './fieldTable.ts';
import type { RunManifest } from './manifest.ts';

/** The series files the wake analysis uses (inflow reference, turbine yaw), loaded once. */
export function loadWakeInputs(c: Campaign): WakeInputs {
  const inputs: WakeInputs = {};
  if (c.inflow.kind === 'series') {
    inputs.inflowSeries = readSeries(c.inflow.file, c.inflow.columns, ['height_m', 'speed_ms'], ['direction_deg']);
  }
  const ts = stateTurbine(c).series;
  if (ts) {
    inputs.turbineSeries = readSeries(ts.file, ts.columns, ['yaw_deg'], ['wind_direction_deg', 'power_kw'], { holes: ['yaw_deg'] });
  }
  return inputs;
}

/** Several turbines: every turbine's wake row of a field (images mark each). */
export function siteWakeRows(shared: Record<string, unknown>): WeakMap<FieldResult, WakePlaneWindow[]> {
  return (shared.siteWakeRows ??= new WeakMap<FieldResult, WakePlaneWindow[]>()) as WeakMap<FieldResult, WakePlaneWindow[]>;
}

/** Each turbine's series, for its yaw offset and power in its wake rows. */
function loadSiteWakeInputs(c: Campaign, inputs: WakeInputs): SiteWakeInputs {
  const turbineSeries = new Map<string, Series>();
  for (const t of c.turbines) {
    // yaw_deg is optional here: a turbine may bring only its power (its rows then have no yaw offset).
    if (t.series) turbineSeries.set(t.id, readSeries(t.series.file, t.series.columns, [], ['yaw_deg', 'wind_direction_deg', 'power_kw']));
  }
  return { inflowSeries: inputs.inflowSeries, turbineSeries };
}

/** Wake rows by field; weak, so a field and its row go once the window's stages are done. */
function wakeRows(shared: Record<string, unknown>): WeakMap<FieldResult, WakePlaneWindow> {
  return (shared.wakeRows ??= new WeakMap<FieldResult, WakePlaneWindow>()) as WeakMap<FieldResult, WakePlaneWindow>;
}

/** The wake stage; with `write: false` (wakeplane render) it analyses but leaves the wake tables as they are. */
export function wakeStage(opts: { write?: boolean } = {}): RunStage {
  let inputs: WakeInputs | undefined;
  let ctxW: ReturnType<typeof planeWindowContext> | undefined;
  let site: SiteWakeInputs | undefined;
  const rows: WakePlaneWindow[] = [];
  const ensembleRows: WakePlaneWindow[] = [];
  return {
    name: 'wake analysis',
    async field(f, ctx) {
      if (!inputs) {
        inputs = loadWakeInputs(ctx.campaign);
        inputs.profileInflow = ctx.shared.profileInflow as WakeInputs['profileInflow'];
        ctxW = planeWindowContext(ctx.campaign, inputs);
        if (ctx.campaign.turbines.length > 1) site = loadSiteWakeInputs(ctx.campaign, inputs);
      }
      // Several turbines: one row per turbine whose wake crosses the plane (wake/siteWakes.ts).
      const made = site
        ? analyseSiteField(f, ctx.campaign, site, (ctx.shared.windowFields as FieldResult[] | undefined) ?? [f])
        : [analysePlaneWindow(f, ctxW!)];
      // Keep the rows without their grid-sized arrays: the summaries need only the scalars and profiles. Ensembles
      // (condition bins) are reported on their own and stay out of the per-window summaries.
      for (const row of made) (f.window.kind === 'ensemble' ? ensembleRows : rows).push({ ...row, deficit: new Float64Array(0) });
      // The row drawn with the field: its own turbine's (the only one with one turbine); several turbines add marks.
      const own = site ? made.find((r) => r.planeId === f.planeId) : made[0];
      if (own) wakeRows(ctx.shared).set(f, own);
      if (site) siteWakeRows(ctx.shared).set(f, made);
      return [];
    },
    async finish(ctx) {
      const a = site ? summariseSiteWake(rows, ctx.campaign, inputs ?? {}) : summariseWake(rows, ctx.campaign, inputs ?? {});
      ctx.shared.wake = a;
      // Steering needs cross planes; a campaign with only horizontal planes (or none) has nothing to say there.
      if (a.steering.bins.length === 0 && ctx.campaign.turbine.series && ctx.campaign.planes.some((p) => p.orientation === 'cross')) {
        ctx.manifest.warnings.push(`wake/steering.csv has no rows: ${a.steering.note ?? 'no window qualified'} (the wake table's flag and reason columns say why per window)`);
      }
      ctx.shared.ensembleRows = ensembleRows;
      const out = opts.write === false ? [] : writeWakeOutputs(a, ctx.runDir, ensembleRows);
      if (opts.write !== false && ctx.campaign.output.netcdf) {
        // Written by the NetCDF thread while the later stages run; the run waits for it before the manifest.
        const written = writeWakeNetcdf(a, ctx.campaign, ctx.runDir, ctx.manifest.campaign.sha256);
        pendingWrites(ctx.shared).push(written.then((recs) => void ctx.manifest.outputs.push(...recs)));
      }
      if (opts.write !== false && site) {
        writeFileAtomic(join(ctx.runDir, 'wake', 'turbine_wakes.csv'), turbineWakesCsv(rows));
        out.push({ kind: 'turbine-wakes', path: 'wake/turbine_wakes.csv', description: 'every turbine\'s wake per plane and window: inflow source, wakes reaching it, centre upstream of the turbines it wakes' });
      }
      return out;
    },
  };
}

export interface ImageStageOptions {
  /** Override output.figures.windowImages and binImages (the command line's --window-images). */
  windowImages?: WindowImages;
  binImages?: WindowImages;
}

/** The figure settings of a run: the campaign's, with the command line's choices over them. */
export function figureSettings(c: Campaign, o: ImageStageOptions = {}): FiguresSettings {
  const f = { ...FIGURES_DEFAULT, ...(c.output.figures ?? {}) };
  return { ...f, ...(o.windowImages ? { windowImages: o.windowImages } : {}), ...(o.binImages ? { binImages: o.binImages } : {}) };
}

/**
 * The fields of the run folder's field tables a predicate selects, read one at a time: the windows in order, then
 * the condition bins (ensembles, with their label and pooled windows from the manifest).
 */
export async function* fieldsFromTables(c: Campaign, runDir: string, manifest: RunManifest, want: (planeId: string, index: number, ensemble: boolean) => boolean): AsyncIterable<FieldResult> {
  const planes = new Map(c.planes.map((p) => [p.id, p]));
  const order = (o: { plane?: string }) => planes.get(o.plane!)!.index;
  const tables = manifest.outputs.filter((o) => o.kind === 'field-table' && o.plane !== undefined && planes.has(o.plane));
  const windows = tables.filter((o) => o.window !== undefined).sort((a, b) => a.window! - b.window! || order(a) - order(b));
  const bins = tables.filter((o) => o.bin !== undefined).sort((a, b) => a.bin! - b.bin! || order(a) - order(b));
  for (const t of windows) {
    if (!want(t.plane!, t.window!, false)) continue;
    const w = manifest.windows[t.window!];
    const info = w ? { index: t.window!, start_s: w.start_s, end_s: w.end_s, ...(w.kind ? { kind: w.kind as WindowInfo['kind'] } : {}), ...(w.label ? { label: w.label } : {}) } : undefined;
    yield readFieldTable(join(runDir, t.path), planes.get(t.plane!)!, info);
  }
  for (const t of bins) {
    if (!want(t.plane!, t.bin!, true)) continue;
    const e = manifest.ensembles?.find((b) => b.bin === t.bin);
    const members = (e?.windows ?? []).map((k) => manifest.windows[k]).filter(Boolean).map((w) => [w.start_s, w.end_s] as [number, number]).sort((a, b) => a[0] - b[0]);
    const info: WindowInfo = {
      index: t.bin!, start_s: members[0]?.[0] ?? NaN, end_s: members.length ? Math.max(...members.map((m) => m[1])) : NaN, kind: 'ensemble',
      ...(e?.label ? { label: e.label } : {}), members,
    };
    yield readFieldTable(join(runDir, t.path), planes.get(t.plane!)!, info);
  }
}

export function imageStage(opts: ImageStageOptions = {}): RunStage {
  let collector: FigureCollector | undefined;
  return {
    name: 'images',
    async field(f, ctx) {
      if (!ctx.images) return [];
      const { FigureCollector } = await import('../render/runFigures.ts');
      collector ??= new FigureCollector(figureSettings(ctx.campaign, opts).maxPanels, ctx.campaign);
      collector.add(f, wakeRows(ctx.shared).get(f), siteWakeRows(ctx.shared).get(f));
      return [];
    },
    async finish(ctx) {
      if (!ctx.images) return [];
      const { FigureCollector, renderRunFigures } = await import('../render/runFigures.ts');
      const { RenderQueue } = await import('../render/renderQueue.ts');
      const settings = figureSettings(ctx.campaign, opts);
      // A list of windows or bins that names some the run does not have: said once, with the key that asked.
      const { missingSelectedText } = await import('../render/figureSelection.ts');
      const windowsMissing = missingSelectedText(settings.windowImages, ctx.manifest.windows.map((w) => w.index), 'window');
      if (windowsMissing) ctx.manifest.warnings.push(`${opts.windowImages ? 'option --window-images' : 'output.figures.windowImages'}: ${windowsMissing}; no images drawn for ${windowsMissing.startsWith('windows') ? 'them' : 'it'}`);
      const binsMissing = missingSelectedText(settings.binImages ?? 'none', (ctx.manifest.ensembles ?? []).filter((e) => !e.empty).map((e) => e.bin), 'condition bin');
      if (binsMissing) ctx.manifest.warnings.push(`${opts.binImages ? 'option --window-images bins:' : 'output.figures.binImages'}: ${binsMissing}; no images drawn for ${binsMissing.startsWith('condition bins') ? 'them' : 'it'}`);
      return renderRunFigures({
        campaign: ctx.campaign,
        settings,
        collector: collector ?? new FigureCollector(settings.maxPanels),
        analysis: ctx.shared.wake as WakeAnalysis | undefined,
        ensembleRows: (ctx.shared.ensembleRows as WakePlaneWindow[] | undefined) ?? [],
        windowFields: (want) => fieldsFromTables(ctx.campaign, ctx.runDir, ctx.manifest, want),
        queue: new RenderQueue(ctx.runDir, settings.density, settings.workers),
      });
    },
  };
}

export function planStage(): RunStage {
  return {
    name: 'planner',
    async finish(ctx) {
      const { planCampaign, writePlanOutputs } = await import('../plan/index.ts');
      const { loadTerrain } = await import('../io/terrainFile.ts');
      const result = planCampaign(ctx.campaign, { terrain: await loadTerrain(ctx.campaign) });
      ctx.shared.plan = result.summary;
      return writePlanOutputs(result, ctx.campaign, ctx.runDir, { images: ctx.images });
    },
  };
}

const pc = (x: number) => `${(100 * x).toFixed(1)} %`;

function planExtras(s: PlanSummary): NonNullable<ReportExtras['planSummary']> {
  const items: [string, string][] = [
    ['Planned wind direction', `${s.direction_deg.toFixed(1)}\u00b0 (${s.directionSource})`],
    ['Region resolved in the target components (all planes)', pc(s.rotor.all)],
    ['Planes resolved in the target components', pc(s.plane.all)],
  ];
  if (s.layout?.best) {
    items.push(['Best layout found', `${pc(s.layout.best.rotorAll)} of the regions (${s.layout.evaluated} layouts evaluated; gain ${(100 * s.layout.gain.rotorAll).toFixed(1)} points)`]);
  }
  const geo = (s.geometries ?? []).map((g) => ({
    title: `${g.role} ${g.instrumentId}`,
    columns: g.rows.length ? Object.keys(g.rows[0]) : [],
    rows: g.rows.map((r) => Object.values(r)),
    link: 'plan/geometries.json',
    note: g.notes.join(' '),
  }));
  return {
    title: 'Campaign geometry (planner)',
    items,
    tables: [{
      title: 'Resolved fraction per plane (region: rotor disk of a cross plane, rotor shadow band of a horizontal plane)',
      columns: ['plane', 'target components', 'region', 'region u', 'v', 'w', 'region, target', 'whole plane, target'],
      rows: s.planes.map((p) => [p.planeId, p.components === 'uvw' ? 'u, v, w' : 'u, v', p.region, pc(p.rotor.u), pc(p.rotor.v), pc(p.rotor.w), pc(p.rotor.all), pc(p.plane.all)]),
      link: 'plan/summary.json',
    }, ...geo],
    notes: s.notes,
  };
}

export function reportStage(): RunStage {
  return {
    name: 'report',
    last: true,
    async finish(ctx) {
      if (!ctx.images) return [];
      const { writeReport } = await import('../render/report.ts');
      const { wakeReportTables, ensembleReportTable } = await import('../render/reportTables.ts');
      const a = ctx.shared.wake as WakeAnalysis | undefined;
      const plan = ctx.shared.plan as PlanSummary | undefined;
      const extras: ReportExtras = {};
      const written = new Set(ctx.manifest.outputs.map((o) => o.path));
      const has = (p: string) => (written.has(p) ? p : undefined);
      if (a) {
        extras.wakeTables = wakeReportTables(a, {
          rows: has('wake/wake_table.csv'), downstream: has('wake/downstream.csv'), steering: has('wake/steering.csv'), tracks: has('wake/track.csv'),
        });
        // Condition bins right after the per-window rows.
        const bins = ensembleReportTable((ctx.shared.ensembleRows as WakePlaneWindow[] | undefined) ?? [], ctx.manifest.ensembles, has('wake/ensembles.csv'));
        if (bins) extras.wakeTables.splice(1, 0, bins);
      }
      if (plan) extras.planSummary = planExtras(plan);
      const geo = ctx.shared.geometryReport as ReportExtras['geometry'];
      if (geo?.length) extras.geometry = geo;
      const unc = ctx.shared.uncertaintyReport as ReportExtras['uncertainty'];
      if (unc) extras.uncertainty = unc;
      const power = ctx.shared.power as PowerAnalysis | undefined;
      if (power) extras.wakeTables = [...(extras.wakeTables ?? []), ...(await import('../power/output.ts')).powerReportTables(power)];
      return [await writeReport(ctx.manifest, ctx.runDir, extras)];
    },
  };
}

/**
 * The fields as NetCDF-4/CF (campaign output.netcdf): each field appended to its plane's file as its window (or
 * condition bin) finishes, the files closed at the end (pipeline/fieldNetcdf.ts). The writer thread starts loading
 * the HDF5 library with the first field, so that it is ready long before the last one.
 */
export function netcdfStage(): RunStage {
  let nc: FieldNetcdf | undefined;
  return {
    name: 'netcdf',
    start(ctx, planes) {
      if (!ctx.campaign.output.netcdf) return;
      nc ??= new FieldNetcdf(ctx.campaign, ctx.runDir, ctx.manifest.campaign.sha256);
      nc.openPlanes(planes);
    },
    async field(f, ctx) {
      if (!ctx.campaign.output.netcdf) return [];
      nc ??= new FieldNetcdf(ctx.campaign, ctx.runDir, ctx.manifest.campaign.sha256);
      await nc.add(f, f.window.index);
      return [];
    },
    async finish() {
      const out = nc ? await nc.close() : [];
      nc = undefined;
      return out;
    },
  };
}

export function defaultStages(opts: { plan?: boolean } & ImageStageOptions = {}): RunStage[] {
  return [wakeStage(), netcdfStage(), geometryStage(), powerStage(), budgetStage(), imageStage(opts), ...(opts.plan ? [planStage()] : []), reportStage()];
}

export type { Series };
