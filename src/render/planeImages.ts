/**
 * Images of one plane and window: the normalised streamwise speed with in-plane arrows, wake centre and width, its
 * uncertainty, the inflow profile with its fitted law, and the geometry maps (error amplification of u, v, w and
 * samples per cell). Files go to <runDir>/images/<plane>_w<window>_<what>.svg and .png.
 */
import type { Campaign } from '../campaign/types.ts';
import { withValues } from '../grid/grid.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { MaskReason, maskReasonName, type FieldResult } from '../retrieval/types.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import { axisLabels, imageName, planePosition, windowLabel } from './labels.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import { scalarMapSvg, type ScalarMapOptions } from './scalarMap.ts';
import { formatNumber } from './ticks.ts';
import { writeFigure, type FigureOptions } from './figure.ts';

export { renderSummaryPlots } from './summaryPlots.ts';
export { writeFigure } from './figure.ts';

function baseOptions(field: FieldResult, campaign: Campaign): Pick<ScalarMapOptions, 'axes' | 'rotor'> {
  const D = campaign.turbine.rotorDiameter_m;
  const labels = axisLabels(field.orientation);
  return {
    axes: { yLabel: labels.yLabel, zLabel: labels.zLabel, diameter_m: D, note: labels.note, ...(field.orientation === 'horizontal' ? { zLabelD: 'x / D' } : {}) },
    ...(field.orientation === 'cross' ? { rotor: { y: 0, z: campaign.turbine.hubHeight_m, radius: D / 2 } } : {}),
  };
}

/**
 * The result images of one plane and window.
 * @param wake the wake analysis of this plane and window, if any: adds u/u_inf, centres, width ellipse, inflow plot
 */
export async function renderPlaneImages(field: FieldResult, wake: WakePlaneWindow | undefined, campaign: Campaign, runDir: string, fig: FigureOptions = {}): Promise<OutputRecord[]> {
  const D = campaign.turbine.rotorDiameter_m;
  const base = baseOptions(field, campaign);
  const win = field.window.index;
  const when = windowLabel(field.window);
  // Figures are rendered concurrently (sharp runs them on its thread pool); records keep this order.
  const jobs: Promise<OutputRecord[]>[] = [];
  const n = field.grid.ny * field.grid.nz;

  // Streamwise speed, normalised by the inflow profile where there is one.
  const normalised = !!wake && wake.inflow.ok && wake.deficit.some(Number.isFinite);
  const values = new Float64Array(n);
  for (let i = 0; i < n; i++) values[i] = normalised ? 1 - wake!.deficit[i] : field.u[i];
  const subtitle = [
    planePosition(field, D),
    wake && wake.inflow.ok ? `inflow ${formatNumber(wake.inflow.hubSpeed_ms, 1)} m/s at hub height (${wake.inflow.source}, ${wake.inflow.law} law)` : 'no inflow reference',
    `wind from ${formatNumber(field.direction_deg, 0)}\u00b0`,
    wake && Number.isFinite(wake.yawOffset_deg) ? `yaw offset ${formatNumber(wake.yawOffset_deg, 1)}\u00b0` : '',
    wake && wake.flag !== 'ok' && wake.flag !== 'horizontal_plane' ? `wake: ${wake.reason || wake.flag.replace(/_/g, ' ')}` : '',
  ].filter(Boolean).join(' \u00b7 ');

  const markers: NonNullable<ScalarMapOptions['markers']> = [];
  const ellipses: NonNullable<ScalarMapOptions['ellipses']> = [];
  if (wake && field.orientation === 'cross') {
    const g = wake.gaussian?.params;
    if (wake.centre.ok) markers.push({ y: wake.centre.y_m, z: wake.centre.z_m, label: 'wake centre, 2D Gaussian fit', shape: 'cross' });
    if (wake.centre.ok && g) ellipses.push({ y: g.yc_m, z: g.zc_m, ry: g.sigmaY_m, rz: g.sigmaZ_m, label: `width ellipse \u03c3y = ${formatNumber(g.sigmaY_m, 0)} m, \u03c3z = ${formatNumber(g.sigmaZ_m, 0)} m` });
    if (wake.diskCentre.ok) markers.push({ y: wake.diskCentre.y_m, z: wake.diskCentre.z_m, label: 'wake centre, minimum-power disk', shape: 'diamond' });
  }
  if (wake?.horizontalTrack) {
    const t = wake.horizontalTrack;
    for (let k = 0; k < t.x_m.length; k++) markers.push({ y: t.yc_m[k], z: t.x_m[k], label: 'wake centre per row (1D Gaussian fit)', shape: 'circle' });
  }

  let arrows: ScalarMapOptions['arrows'];
  if (field.orientation === 'cross') {
    const w = new Float64Array(n);
    let assumed = 0;
    for (let i = 0; i < n; i++) {
      if (field.maskW[i] === MaskReason.assumedZero) {
        w[i] = 0;
        assumed++;
      } else w[i] = field.w[i];
    }
    arrows = { v: field.v, w, ...(assumed ? { label: `in-plane (v, w); w taken as 0 in ${assumed} two-instrument cells` } : {}) };
  }

  const uSvg = scalarMapSvg(withValues(field.grid, values), {
    title: `${field.planeId} \u00b7 ${which(field)} \u00b7 ${when}`,
    subtitle,
    colorbarLabel: normalised ? 'u / u_inf (\u2013)' : 'u, streamwise (m/s)',
    mask: { codes: field.maskU, names: maskReasonName },
    ...base,
    markers,
    ellipses,
    ...(arrows ? { arrows } : {}),
  });
  jobs.push(writeFigure(uSvg, runDir, imageName(field.planeId, win, normalised ? 'u_norm' : 'u', field.window.kind === 'ensemble'), {
    plane: field.planeId, ...windowTag(field), description: `${normalised ? 'u / u_inf' : 'streamwise speed u'}${arrows ? ' with in-plane arrows' : ''}${markers.length ? ', wake centre' : ''}${ellipses.length ? ' and width' : ''}`,
  }, fig));

  const suSvg = scalarMapSvg(withValues(field.grid, field.su), {
    title: `${field.planeId} \u00b7 ${which(field)} \u00b7 uncertainty of u`,
    subtitle: `${planePosition(field, D)} \u00b7 ${when} \u00b7 standard uncertainty from radial-velocity scatter and geometry`,
    colorbarLabel: 'standard uncertainty of u (m/s)',
    mask: { codes: field.maskU, names: maskReasonName },
    contours: false,
    ...base,
  });
  jobs.push(writeFigure(suSvg, runDir, imageName(field.planeId, win, 'su', field.window.kind === 'ensemble'), { plane: field.planeId, ...windowTag(field), description: 'standard uncertainty of u' }, fig));

  if (wake && (wake.inflow.heights_m.length > 0 || wake.inflow.source === 'fixed')) {
    jobs.push(writeFigure(inflowSvg(wake, field, campaign), runDir, imageName(field.planeId, win, 'inflow', field.window.kind === 'ensemble'), {
      plane: field.planeId, ...windowTag(field), description: 'inflow profile and fitted law',
    }, fig));
  }
  return (await Promise.all(jobs)).flat();
}

/** Inflow profile points and the fitted law (power V = V_ref (z/z_ref)^alpha, or log V = (u_star / 0.40) ln(z / z0)). */
export function inflowSvg(wake: WakePlaneWindow, field: FieldResult, campaign: Campaign): string {
  const p = wake.inflow;
  const zMax = Math.max(campaign.turbine.hubHeight_m + campaign.turbine.rotorDiameter_m / 2, ...p.heights_m) * 1.05;
  const zMin = Math.max(1, Math.min(campaign.turbine.hubHeight_m - campaign.turbine.rotorDiameter_m / 2, ...p.heights_m) * 0.9);
  const zs: number[] = [], vs: number[] = [];
  for (let k = 0; k <= 60; k++) {
    const z = zMin + ((zMax - zMin) * k) / 60;
    zs.push(z);
    vs.push(p.law === 'power' ? p.uRef_ms * (z / p.zRef_m) ** p.alpha : (p.uStar_ms / 0.4) * Math.log(z / p.z0_m));
  }
  const lawText = p.law === 'power'
    ? `power law, \u03b1 = ${formatNumber(p.alpha, 3)}, ${formatNumber(p.uRef_ms, 2)} m/s at ${formatNumber(p.zRef_m, 0)} m`
    : `log law, u* = ${formatNumber(p.uStar_ms, 3)} m/s, z0 = ${formatNumber(p.z0_m, 3)} m`;
  const series: PlotSeries[] = [];
  if (p.heights_m.length) series.push({ label: `measured (${p.source}), bin means`, x: p.speeds_ms, y: p.heights_m, kind: 'points', marker: 'circle' });
  series.push({ label: lawText, x: vs, y: zs, kind: 'line' });
  return linePlotSvg({
    title: `${field.planeId} \u00b7 ${which(field)} \u00b7 inflow profile`,
    subtitle: `${windowLabel(field.window)} \u00b7 RMSE ${formatNumber(p.rmse_ms, 3)} m/s \u00b7 R\u00b2 ${formatNumber(p.r2, 3)}${p.note ? ` \u00b7 ${p.note}` : ''}`,
    xLabel: 'horizontal wind speed (m/s)',
    yLabel: 'height above ground (m)',
    series,
    plotWidth: 380,
    plotHeight: 320,
    notes: [p.law === 'power' ? 'Power law V = V_ref (z / z_ref)^\u03b1, as in the normal wind profile of IEC 61400-1.' : 'Log law V = (u* / 0.40) ln(z / z0), von K\u00e1rm\u00e1n constant 0.40.'],
  });
}

/** Geometry maps of one plane and window: error amplification of u, v and w, and accepted samples per cell. */
export async function renderGeometryMaps(field: FieldResult, campaign: Campaign, runDir: string, fig: FigureOptions = {}): Promise<OutputRecord[]> {
  const base = baseOptions(field, campaign);
  const D = campaign.turbine.rotorDiameter_m;
  const win = field.window.index;
  const n = field.grid.ny * field.grid.nz;
  const maxA = campaign.retrieval.maxAmplification;
  const jobs: Promise<OutputRecord[]>[] = [];
  const comps = [
    ['u', field.dopU, field.maskU],
    ['v', field.dopV, field.maskV],
    ['w', field.dopW, field.maskW],
  ] as const;
  for (const [c, dop, mask] of comps) {
    const codes = new Uint8Array(n);
    for (let i = 0; i < n; i++) codes[i] = Number.isFinite(dop[i]) ? 0 : mask[i] || (field.samples[i] === 0 ? MaskReason.noData : 0);
    const svg = scalarMapSvg(withValues(field.grid, dop), {
      title: `${field.planeId} \u00b7 error amplification of ${c}`,
      subtitle: `${planePosition(field, D)} \u00b7 ${which(field)}, ${windowLabel(field.window)} \u00b7 ${c} is masked above ${formatNumber(maxA, 1)}`,
      colorbarLabel: `error amplification of ${c} (\u2013)`,
      domain: [0, 2 * maxA],
      colorbarMarks: [{ value: maxA, label: `${c} masked above` }],
      contours: false,
      mask: { codes, names: maskReasonName },
      ...base,
    });
    jobs.push(writeFigure(svg, runDir, imageName(field.planeId, win, `dop${c.toUpperCase()}`, field.window.kind === 'ensemble'), { plane: field.planeId, ...windowTag(field), description: `error amplification of ${c}` }, fig));
  }
  const counts = new Float64Array(n);
  const codes = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    counts[i] = field.samples[i] > 0 ? field.samples[i] : NaN;
    codes[i] = field.samples[i] > 0 ? 0 : MaskReason.noData;
  }
  const svg = scalarMapSvg(withValues(field.grid, counts), {
    title: `${field.planeId} \u00b7 accepted samples per cell`,
    subtitle: `${planePosition(field, D)} \u00b7 ${which(field)}, ${windowLabel(field.window)}`,
    colorbarLabel: 'accepted samples per cell',
    contours: false,
    mask: { codes, names: maskReasonName },
    ...base,
  });
  jobs.push(writeFigure(svg, runDir, imageName(field.planeId, win, 'samples', field.window.kind === 'ensemble'), { plane: field.planeId, ...windowTag(field), description: 'accepted samples per cell' }, fig));
  return (await Promise.all(jobs)).flat();
}

/** How an output names its window: window ordinal, or condition bin for an ensemble. */
function windowTag(field: FieldResult): { window?: number; bin?: number } {
  return field.window.kind === 'ensemble' ? { bin: field.window.index } : { window: field.window.index };
}

/** "window 3" or "condition bin 2". */
function which(field: FieldResult): string {
  return field.window.kind === 'ensemble' ? `condition bin ${field.window.index}` : `window ${field.window.index}`;
}
