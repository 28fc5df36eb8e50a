/**
 * The stages that follow retrieval in a normal run, in order:
 * 1. wake: each field through the per-plane-window analysis as its window finishes (shared.wakeRows maps a field to
 *    its row); at the end the campaign-level summaries and model fits (shared.wake).
 * 2. images: plane images and geometry maps per field (using shared.wakeRows), summary plots at the end.
 * 3. plan (optional, `wakeplane demo` and `run --plan`): the planner's outputs under plan/ (shared.plan).
 * 4. report: report.html listing every output recorded before it.
 * The image stack (sharp) and the planner load only when a run uses them, so a run without images starts faster.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { readSeries, type Series } from '../io/series.ts';
import type { PlanSummary } from '../plan/index.ts';
import type { ReportExtras } from '../render/report.ts';
import { planeWindowContext, summariseWake, type WakeInputs } from '../wake/analyse.ts';
import { analysePlaneWindow } from '../wake/planeWindow.ts';
import { writeWakeOutputs } from '../wake/output.ts';
import { FieldNetcdf } from './fieldNetcdf.ts';
import { writeWakeNetcdf } from '../wake/outputNetcdf.ts';
import type { WakeAnalysis, WakePlaneWindow } from '../wake/types.ts';
import type { RunStage } from './run.ts';
import type { FieldResult } from '../retrieval/types.ts';

/** The series files the wake analysis uses (inflow reference, turbine yaw), loaded once. */
export function loadWakeInputs(c: Campaign): WakeInputs {
  const inputs: WakeInputs = {};
  if (c.inflow.kind === 'series') {
    inputs.inflowSeries = readSeries(c.inflow.file, c.inflow.columns, ['height_m', 'speed_ms'], ['direction_deg']);
  }
  if (c.turbine.series) {
    inputs.turbineSeries = readSeries(c.turbine.series.file, c.turbine.series.columns, ['yaw_deg'], ['wind_direction_deg', 'power_kw']);
  }
  return inputs;
}

/** Wake rows by field; weak, so a field and its row go once the window's stages are done. */
function wakeRows(shared: Record<string, unknown>): WeakMap<FieldResult, WakePlaneWindow> {
  return (shared.wakeRows ??= new WeakMap<FieldResult, WakePlaneWindow>()) as WeakMap<FieldResult, WakePlaneWindow>;
}

export function wakeStage(): RunStage {
  let inputs: WakeInputs | undefined;
  let ctxW: ReturnType<typeof planeWindowContext> | undefined;
  const rows: WakePlaneWindow[] = [];
  const ensembleRows: WakePlaneWindow[] = [];
  return {
    name: 'wake analysis',
    async field(f, ctx) {
      if (!inputs) {
        inputs = loadWakeInputs(ctx.campaign);
        ctxW = planeWindowContext(ctx.campaign, inputs);
      }
      const row = analysePlaneWindow(f, ctxW!);
      // Keep the row without its grid-sized arrays: the summaries need only the scalars and profiles. Ensembles
      // (condition bins) are reported on their own and stay out of the per-window summaries.
      (f.window.kind === 'ensemble' ? ensembleRows : rows).push({ ...row, deficit: new Float64Array(0) });
      wakeRows(ctx.shared).set(f, row);
      return [];
    },
    async finish(ctx) {
      const a = summariseWake(rows, ctx.campaign, inputs ?? {});
      ctx.shared.wake = a;
      if (a.steering.bins.length === 0 && ctx.campaign.turbine.series) {
        ctx.manifest.warnings.push(`wake/steering.csv has no rows: ${a.steering.note ?? 'no window qualified'} (the wake table's flag and reason columns say why per window)`);
      }
      ctx.shared.ensembleRows = ensembleRows;
      const out = writeWakeOutputs(a, ctx.runDir, ensembleRows);
      if (ctx.campaign.output.netcdf) out.push(...(await writeWakeNetcdf(a, ctx.campaign, ctx.runDir, ctx.manifest.campaign.sha256)));
      return out;
    },
  };
}

export function imageStage(): RunStage {
  return {
    name: 'images',
    async field(f, ctx) {
      if (!ctx.images) return [];
      const { renderGeometryMaps, renderPlaneImages } = await import('../render/planeImages.ts');
      const wake = wakeRows(ctx.shared).get(f);
      return [...(await renderPlaneImages(f, wake, ctx.campaign, ctx.runDir)), ...(await renderGeometryMaps(f, ctx.campaign, ctx.runDir))];
    },
    async finish(ctx) {
      const a = ctx.shared.wake as WakeAnalysis | undefined;
      if (!ctx.images || !a) return [];
      const { renderSummaryPlots } = await import('../render/summaryPlots.ts');
      return renderSummaryPlots(a, ctx.campaign, ctx.runDir);
    },
  };
}

export function planStage(): RunStage {
  return {
    name: 'planner',
    async finish(ctx) {
      const { planCampaign, writePlanOutputs } = await import('../plan/index.ts');
      const result = planCampaign(ctx.campaign);
      ctx.shared.plan = result.summary;
      return writePlanOutputs(result, ctx.campaign, ctx.runDir, { images: ctx.images });
    },
  };
}

const pc = (x: number) => `${(100 * x).toFixed(1)} %`;

function planExtras(s: PlanSummary): NonNullable<ReportExtras['planSummary']> {
  const items: [string, string][] = [
    ['Planned wind direction', `${s.direction_deg.toFixed(1)}\u00b0 (${s.directionSource})`],
    ['Rotor disk resolved in u, v and w (all planes)', pc(s.rotor.all)],
    ['Planes resolved in u, v and w', pc(s.plane.all)],
  ];
  if (s.layout?.best) {
    items.push(['Best layout found', `${pc(s.layout.best.rotorAll)} of the rotor disk (${s.layout.evaluated} layouts evaluated; gain ${(100 * s.layout.gain.rotorAll).toFixed(1)} points)`]);
  }
  return {
    title: 'Campaign geometry (planner)',
    items,
    tables: [{
      title: 'Resolved fraction per plane',
      columns: ['plane', 'rotor disk u', 'v', 'w', 'all three', 'whole plane all three'],
      rows: s.planes.map((p) => [p.planeId, pc(p.rotor.u), pc(p.rotor.v), pc(p.rotor.w), pc(p.rotor.all), pc(p.plane.all)]),
      link: 'plan/summary.json',
    }],
    notes: s.notes,
  };
}

export function reportStage(): RunStage {
  return {
    name: 'report',
    async finish(ctx) {
      if (!ctx.images) return [];
      const { writeReport } = await import('../render/report.ts');
      const { wakeReportTables } = await import('../render/reportTables.ts');
      const a = ctx.shared.wake as WakeAnalysis | undefined;
      const plan = ctx.shared.plan as PlanSummary | undefined;
      const extras: ReportExtras = {};
      if (a) extras.wakeTables = wakeReportTables(a, { rows: join('wake', 'wake_table.csv'), downstream: join('wake', 'downstream.csv'), steering: join('wake', 'steering.csv') });
      if (plan) extras.planSummary = planExtras(plan);
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

export function defaultStages(opts: { plan?: boolean } = {}): RunStage[] {
  return [wakeStage(), netcdfStage(), imageStage(), ...(opts.plan ? [planStage()] : []), reportStage()];
}

export type { Series };
