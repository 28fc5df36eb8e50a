/**
 * Images of one plane and window (drawn on request: see output.figures.windowImages): the normalised streamwise
 * speed with in-plane arrows, wake centre and width, its uncertainty, the inflow profile with its fitted law, and
 * the geometry maps (error amplification of u, v, w and samples per cell). Names: images/<plane>_w<window>_<what>.
 *
 * `planeWindowFigures` builds the SVG texts (pure); the run's figure stage queues them for parallel rendering.
 * Given the run's scales, colour ranges and arrows are those shared by every figure of the run.
 */
import type { Campaign, PlaneSpec } from '../campaign/types.ts';
import { siteTurbineMarks } from './turbineMarks.ts';
import { withValues, type GridSpec } from '../grid/grid.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { MaskReason, maskReasonName, type FieldResult } from '../retrieval/types.ts';
import { KAPPA } from '../wake/options.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import { axisLabels, imageName, planePosition, QUANTITY, whichField, windFrom, windowLabel } from './labels.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import type { TurbineMark, View } from './mapLayers.ts';
import { qty, withUncertainty } from './numbers.ts';
import { croppedView, NO_INFLOW_CODE, panelField } from './panelField.ts';
import type { RunScales } from './runScales.ts';
import { scalarMapSvg, type ScalarMapOptions } from './scalarMap.ts';
import { formatNumber } from './ticks.ts';
import { writeFigure, type FigureOptions } from './figure.ts';

export { renderSummaryPlots } from './summaryPlots.ts';
export { writeFigure } from './figure.ts';

/** One figure as SVG text with its file name (under images/, no extension) and description. */
export interface FigureSpec {
  name: string;
  description: string;
  svg: string;
  plane?: string;
  window?: number;
  /** Condition bin of an ensemble field (instead of window). */
  bin?: number;
}

/** How a figure of a field names what it shows: the window ordinal, or the condition bin of an ensemble. */
export function fieldTag(field: FieldResult): { plane: string; window?: number; bin?: number } {
  return field.window.kind === 'ensemble' ? { plane: field.planeId, bin: field.window.index } : { plane: field.planeId, window: field.window.index };
}

/** Mask names of the result maps, with the code for cells that have u but no inflow reference. */
export const RESULT_MASK_NAMES: Record<number, string> = { ...maskReasonName, [NO_INFLOW_CODE]: 'no inflow reference' };

/** The turbine of a horizontal plane, seen from above at the rotor-frame origin. */
export function turbineMarks(campaign: Campaign, plane?: PlaneSpec, direction_deg = NaN): TurbineMark[] {
  // Several turbines: every one of them, where it stands in this plane's frame (render/turbineMarks.ts).
  if (plane && campaign.turbines.length > 1 && Number.isFinite(direction_deg)) return siteTurbineMarks(campaign, plane, direction_deg);
  return [{ y: 0, x: 0, diameter_m: campaign.turbine.rotorDiameter_m, label: `turbine ${campaign.turbine.id}` }];
}

/** Horizontal planes: the cells with data (and the turbine when it stands within 3 D of them). */
export function horizontalView(grid: GridSpec, hasData: ArrayLike<number>[], campaign: Campaign): View | undefined {
  const D = campaign.turbine.rotorDiameter_m;
  return croppedView(grid, hasData, { y: 0, x: 0, radius: D / 2, reach_m: 3 * D });
}

function baseOptions(field: FieldResult, campaign: Campaign, view: View | undefined): Pick<ScalarMapOptions, 'axes' | 'rotor' | 'turbines' | 'view'> {
  const D = campaign.turbine.rotorDiameter_m;
  const labels = axisLabels(field.orientation);
  const cross = field.orientation === 'cross';
  return {
    axes: { yLabel: labels.yLabel, zLabel: labels.zLabel, diameter_m: D, note: labels.note, ...(labels.zLabelD ? { zLabelD: labels.zLabelD } : {}) },
    ...(cross ? { rotor: { y: 0, z: campaign.turbine.hubHeight_m, radius: D / 2 } } : { turbines: turbineMarks(campaign, campaign.planes[field.planeIndex], field.direction_deg) }),
    ...(view ? { view } : {}),
  };
}

/**
 * The result figures of one plane and window: u/u_inf (or u) with arrows and wake marks, its uncertainty, the
 * inflow profile; with `geometry` also the error amplification of u, v, w and the samples per cell.
 * @param wake the wake analysis of this plane and window, if any (its deficit may be empty: completed from the inflow)
 * @param scales the run's shared scales; without them each figure takes its own range
 */
export function planeWindowFigures(field: FieldResult, wake: WakePlaneWindow | undefined, campaign: Campaign, scales?: RunScales, geometry = true, siteRows?: readonly WakePlaneWindow[]): FigureSpec[] {
  const D = campaign.turbine.rotorDiameter_m;
  // Several turbines: the wake tracks of every turbine's view of this field (render/turbineMarks.ts siteTracks).
  const p = panelField(field, wake, siteRows?.length ? { campaign, rows: siteRows } : undefined);
  const view = field.orientation === 'horizontal' ? horizontalView(field.grid, [p.hasData], campaign) : undefined;
  const base = baseOptions(field, campaign, view);
  const win = field.window.index;
  const ens = field.window.kind === 'ensemble';
  const when = windowLabel(field.window);
  // A window's own label (from the experiment log or the campaign's list): in the subtitles, which wrap.
  const named = !ens && field.window.label ? field.window.label : '';
  const figs: FigureSpec[] = [];
  const meta = fieldTag(field);
  const n = field.grid.ny * field.grid.nz;

  const normalised = p.normalised;
  const values = Float64Array.from(normalised ? p.values : p.u);
  const subtitle = [
    named,
    planePosition(field, D),
    wake && wake.inflow.ok ? `inflow ${qty(wake.inflow.hubSpeed_ms, 'm/s', 1)} at hub height (${wake.inflow.source}, ${wake.inflow.law} law)` : 'no inflow reference',
    windFrom(field.direction_deg),
    wake && Number.isFinite(wake.yawOffset_deg) ? `yaw offset ${qty(wake.yawOffset_deg, '\u00b0', 1)}` : '',
    wake && wake.flag !== 'ok' && wake.flag !== 'horizontal_plane' ? `wake: ${wake.reason || wake.flag.replace(/_/g, ' ')}` : '',
  ].filter(Boolean).join(' \u00b7 ');

  const markers: NonNullable<ScalarMapOptions['markers']> = [];
  const ellipses: NonNullable<ScalarMapOptions['ellipses']> = [];
  if (wake && field.orientation === 'cross') {
    const fit = wake.gaussian;
    if (wake.centre.ok && fit) {
      markers.push({ y: wake.centre.y_m, z: wake.centre.z_m, shape: 'cross', label: `wake centre, 2D Gaussian fit: y_{c}\u00a0=\u00a0${withUncertainty(fit.params.yc_m, fit.stderr.yc_m, 'm')}, z_{c}\u00a0=\u00a0${withUncertainty(fit.params.zc_m, fit.stderr.zc_m, 'm')}` });
      ellipses.push({ y: fit.params.yc_m, z: fit.params.zc_m, ry: fit.params.sigmaY_m, rz: fit.params.sigmaZ_m, label: `width ellipse: σ_{y}\u00a0=\u00a0${withUncertainty(fit.params.sigmaY_m, fit.stderr.sigmaY_m, 'm')}, σ_{z}\u00a0=\u00a0${withUncertainty(fit.params.sigmaZ_m, fit.stderr.sigmaZ_m, 'm')}` });
    }
    if (wake.diskCentre.ok) markers.push({ y: wake.diskCentre.y_m, z: wake.diskCentre.z_m, label: 'wake centre, minimum-power disk', shape: 'diamond' });
  }
  if (p.track) for (let k = 0; k < p.track.x.length; k++) markers.push({ y: p.track.yc[k], z: p.track.x[k], label: 'wake centre per row (1D Gaussian fit)', shape: 'circle' });

  let arrows: ScalarMapOptions['arrows'];
  if (field.orientation === 'cross') {
    arrows = { v: Float64Array.from(p.v), w: Float64Array.from(p.w), assumedW: p.assumedW, ...(scales ? { scale: scales.arrows } : {}) };
  }
  const shared = (q: keyof RunScales['limits']) => (scales?.limits[q] ? { domain: scales.limits[q] } : {});
  const uSvg = scalarMapSvg(withValues(field.grid, values), {
    title: `${field.planeId} \u00b7 ${whichField(field.window)} \u00b7 ${when}`,
    subtitle,
    colorbarLabel: normalised ? QUANTITY.uNorm : QUANTITY.u,
    ...shared(normalised ? 'u_norm' : 'u_ms'),
    mask: { codes: normalised ? p.codes : p.codesU, names: RESULT_MASK_NAMES },
    ...base,
    markers,
    ellipses,
    ...(arrows ? { arrows } : {}),
  });
  figs.push({ name: imageName(field.planeId, win, normalised ? 'u_norm' : 'u', ens), svg: uSvg, ...meta,
    description: `${normalised ? 'u/u_inf' : 'streamwise speed u'}${arrows ? ' with in-plane arrows' : ''}${markers.length ? ', wake centre' : ''}${ellipses.length ? ' and width' : ''}` });

  figs.push({
    name: imageName(field.planeId, win, 'su', ens), ...meta, description: 'standard uncertainty of u',
    svg: scalarMapSvg(withValues(field.grid, field.su), {
      title: `${field.planeId} \u00b7 ${whichField(field.window)} \u00b7 uncertainty of u`,
      subtitle: `${planePosition(field, D)} \u00b7 ${when}${named ? ` \u00b7 ${named}` : ''} \u00b7 standard uncertainty from radial-velocity scatter and geometry`,
      colorbarLabel: QUANTITY.su,
      ...shared('su_ms'),
      mask: { codes: field.maskU, names: RESULT_MASK_NAMES },
      contours: false,
      ...base,
    }),
  });

  if (wake && (wake.inflow.heights_m.length > 0 || wake.inflow.source === 'fixed')) {
    figs.push({ name: imageName(field.planeId, win, 'inflow', ens), ...meta, description: 'inflow profile and fitted law', svg: inflowSvg(wake, field, campaign) });
  }
  return geometry ? [...figs, ...geometryFigures(field, campaign, scales, view)] : figs;
}

/** Error amplification of u, v and w and accepted samples per cell of one plane and window. */
export function geometryFigures(field: FieldResult, campaign: Campaign, scales?: RunScales, viewIn?: View): FigureSpec[] {
  const D = campaign.turbine.rotorDiameter_m;
  const n = field.grid.ny * field.grid.nz;
  let view = viewIn;
  if (!view && field.orientation === 'horizontal') {
    const has = new Uint8Array(n);
    for (let i = 0; i < n; i++) has[i] = field.samples[i] > 0 || Number.isFinite(field.u[i]) ? 1 : 0;
    view = horizontalView(field.grid, [has], campaign);
  }
  const base = baseOptions(field, campaign, view);
  const win = field.window.index;
  const when = windowLabel(field.window) + (field.window.kind !== 'ensemble' && field.window.label ? ` \u00b7 ${field.window.label}` : ''); // subtitles only
  const meta = fieldTag(field);
  const ens = field.window.kind === 'ensemble';
  const shared = (q: keyof RunScales['limits']) => (scales?.limits[q] ? { domain: scales.limits[q] } : {});
  const figs: FigureSpec[] = [];
  const maxA = campaign.retrieval.maxAmplification;
  const comps = [['u', field.dopU, field.maskU], ['v', field.dopV, field.maskV], ['w', field.dopW, field.maskW]] as const;
  for (const [c, dop, mask] of comps) {
    const codes = new Uint8Array(n);
    for (let i = 0; i < n; i++) codes[i] = Number.isFinite(dop[i]) ? 0 : mask[i] || (field.samples[i] === 0 ? MaskReason.noData : 0);
    figs.push({
      name: imageName(field.planeId, win, `dop${c.toUpperCase()}`, ens), ...meta, description: `error amplification of ${c}`,
      svg: scalarMapSvg(withValues(field.grid, dop), {
        title: `${field.planeId} \u00b7 ${whichField(field.window)} \u00b7 error amplification of ${c}`,
        subtitle: `${planePosition(field, D)} \u00b7 ${when} \u00b7 ${c} is masked above ${formatNumber(maxA, 1)}`,
        colorbarLabel: QUANTITY.amplification(c),
        domain: [0, 2 * maxA],
        colorbarMarks: [{ value: maxA, label: `${c} masked above` }],
        contours: false,
        mask: { codes, names: maskReasonName },
        ...base,
      }),
    });
  }
  const counts = new Float64Array(n);
  const codes = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    counts[i] = field.samples[i] > 0 ? field.samples[i] : NaN;
    codes[i] = field.samples[i] > 0 ? 0 : MaskReason.noData;
  }
  figs.push({
    name: imageName(field.planeId, win, 'samples', ens), ...meta, description: 'accepted samples per cell',
    svg: scalarMapSvg(withValues(field.grid, counts), {
      title: `${field.planeId} \u00b7 ${whichField(field.window)} \u00b7 accepted samples per cell`,
      subtitle: `${planePosition(field, D)} \u00b7 ${when}`,
      colorbarLabel: QUANTITY.samples,
      ...shared('samples'),
      contours: false,
      mask: { codes, names: maskReasonName },
      ...base,
    }),
  });
  return figs;
}

/** The result images of one plane and window, written at once (u map, uncertainty, inflow). */
export async function renderPlaneImages(field: FieldResult, wake: WakePlaneWindow | undefined, campaign: Campaign, runDir: string, fig: FigureOptions = {}, scales?: RunScales): Promise<OutputRecord[]> {
  return writeAll(planeWindowFigures(field, wake, campaign, scales, false), runDir, fig);
}

/** The geometry maps of one plane and window: error amplification of u, v and w, and accepted samples per cell. */
export async function renderGeometryMaps(field: FieldResult, campaign: Campaign, runDir: string, fig: FigureOptions = {}, scales?: RunScales): Promise<OutputRecord[]> {
  return writeAll(geometryFigures(field, campaign, scales), runDir, fig);
}

async function writeAll(figs: FigureSpec[], runDir: string, fig: FigureOptions): Promise<OutputRecord[]> {
  const recs = await Promise.all(figs.map((f) => writeFigure(f.svg, runDir, f.name, { plane: f.plane, window: f.window, bin: f.bin, description: f.description }, fig)));
  return recs.flat();
}

/** The fitted law at height z: power V = V_ref (z/z_ref)^alpha, or log V = (u_star / kappa) ln(z / z0). */
export function lawSpeed(p: WakePlaneWindow['inflow'], z: number): number {
  return p.law === 'power' ? p.uRef_ms * (z / p.zRef_m) ** p.alpha : (p.uStar_ms / KAPPA) * Math.log(z / p.z0_m);
}

/** The law's parameters for a label: "α = 0.16" or "u* = 0.42 m/s, z0 = 0.030 m". */
export function lawText(p: WakePlaneWindow['inflow']): string {
  return p.law === 'power'
    ? `power law, α\u00a0=\u00a0${formatNumber(p.alpha, 3)}, ${qty(p.uRef_ms, 'm/s', 2)} at ${qty(p.zRef_m, 'm', 0)}`
    : `log law, u_{*}\u00a0=\u00a0${qty(p.uStar_ms, 'm/s', 3)}, z_{0}\u00a0=\u00a0${qty(p.z0_m, 'm', 3)}`;
}

export const LAW_NOTE = {
  power: 'Power law V\u00a0=\u00a0V_{ref}\u00a0(z/z_{ref})^{α}, as in the normal wind profile of IEC 61400-1.',
  log: 'Log law V\u00a0=\u00a0(u_{*}/κ)\u00a0ln(z/z_{0}), von Kármán constant κ\u00a0=\u00a00.40.',
} as const;

/** Inflow profile points and the fitted law. */
export function inflowSvg(wake: WakePlaneWindow, field: FieldResult, campaign: Campaign): string {
  const p = wake.inflow;
  const zMax = Math.max(campaign.turbine.hubHeight_m + campaign.turbine.rotorDiameter_m / 2, ...p.heights_m) * 1.05;
  const zMin = Math.max(1, Math.min(campaign.turbine.hubHeight_m - campaign.turbine.rotorDiameter_m / 2, ...p.heights_m) * 0.9);
  const zs: number[] = [], vs: number[] = [];
  for (let k = 0; k <= 60; k++) {
    const z = zMin + ((zMax - zMin) * k) / 60;
    zs.push(z);
    vs.push(lawSpeed(p, z));
  }
  const series: PlotSeries[] = [];
  if (p.heights_m.length) series.push({ label: `measured (${p.source}), bin means`, x: p.speeds_ms, y: p.heights_m, kind: 'points', marker: 'circle' });
  series.push({ label: lawText(p), x: vs, y: zs, kind: 'line' });
  return linePlotSvg({
    title: `${field.planeId} \u00b7 ${whichField(field.window)} \u00b7 inflow profile`,
    // A fit's quality where there is a fit (a fixed inflow has none).
    subtitle: [
      windowLabel(field.window),
      Number.isFinite(p.rmse_ms) ? `RMSE ${qty(p.rmse_ms, 'm/s', 3)}` : '',
      Number.isFinite(p.r2) ? `R^{2}\u00a0${formatNumber(p.r2, 3)}` : '',
      p.note,
    ].filter(Boolean).join(' \u00b7 '),
    xLabel: QUANTITY.speed,
    yLabel: QUANTITY.height,
    series,
    plotWidth: 380,
    plotHeight: 320,
    notes: [LAW_NOTE[p.law]],
  });
}
