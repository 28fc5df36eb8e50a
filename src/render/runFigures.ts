/**
 * The figures of a run: the summary plots, one multi-panel figure per plane (its windows, or bins, as small
 * multiples on shared scales) and, on request, the images of single windows. Shared by the run's figure stage and
 * by `wakeplane render`, which redoes them from a finished run folder.
 *
 * Memory: while fields stream past, a FigureCollector keeps the value histograms of the shared scales (a few
 * hundred kilobytes) and, per plane, at most 2 x maxPanels small panels (every s-th field, s doubling when the
 * panels would exceed that), so a month of windows costs no more than a day. Images of single windows are drawn
 * from fields read back when they are needed (field tables), one at a time.
 */
import type { FiguresSettings } from '../campaign/figures.ts';
import type { Campaign, PlaneSpec } from '../campaign/types.ts';
import { gridSpecOf } from '../grid/grid.ts';
import type { OutputRecord } from '../pipeline/manifest.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { WakeAnalysis, WakePlaneWindow } from '../wake/types.ts';
import { describeWindowImages, windowSelected } from './figureSelection.ts';
import { axisLabels, conditionBinText, planePosition, QUANTITY, windFrom, windowLabel, windowTimes } from './labels.ts';
import { qty } from './numbers.ts';
import { panelField, type PanelField } from './panelField.ts';
import { horizontalView, planeWindowFigures, RESULT_MASK_NAMES, turbineMarks } from './planeImages.ts';
import type { RenderQueue } from './renderQueue.ts';
import { ScaleCollector, type RunScales } from './runScales.ts';
import { smallMultiplesSvg, type Panel } from './smallMultiples.ts';
import { summaryFigures } from './summaryPlots.ts';
import { pushTo } from '../math/group.ts';

/** Every s-th item of a stream, s doubling whenever more than 2 x max are kept (evenly spaced, bounded). */
class Thinned<T> {
  private items: { k: number; item: T }[] = [];
  private stride = 1;
  count = 0;
  constructor(private readonly max: number) {}

  offer(make: () => T): void {
    const k = this.count++;
    if (k % this.stride !== 0) return;
    this.items.push({ k, item: make() });
    if (this.items.length > 2 * this.max) {
      this.stride *= 2;
      this.items = this.items.filter((it) => it.k % this.stride === 0);
    }
  }

  /** At most `max` of the kept items, evenly spaced, in stream order. */
  selected(): T[] {
    const m = this.items.length;
    if (m <= this.max) return this.items.map((it) => it.item);
    const out: T[] = [];
    for (let j = 0; j < this.max; j++) out.push(this.items[Math.round((j * (m - 1)) / (this.max - 1 || 1))].item);
    return [...new Set(out)];
  }
}

/** Collects what the figures need from each field as it passes (see the file header); windows and condition
 * bins (ensembles) are kept apart, each plane getting one multi-panel figure of each. */
/**
 * Several turbines: every turbine's view of a field is a wake row "plane@turbine" (the plane's own turbine keeps the
 * plane's id); these rows grouped by the field they view, under `keyOf(plane id, window index)`.
 */
export function turbineViewsOf(rows: readonly WakePlaneWindow[], keyOf: (planeId: string, window: number) => string): Map<string, WakePlaneWindow[]> {
  const out = new Map<string, WakePlaneWindow[]>();
  for (const r of rows) {
    if (r.turbineId === undefined) continue;
    const k = keyOf(r.planeId.split('@')[0], r.window.index);
    pushTo(out, k, r);
  }
  return out;
}

export class FigureCollector {
  readonly scales = new ScaleCollector();
  private readonly planes = new Map<string, Thinned<PanelField>>();
  /** `campaign`: needed with several turbines, to place every turbine's wake track in the plane. */
  constructor(private readonly maxPanels: number, private readonly campaign?: Campaign) {}

  add(f: FieldResult, wake?: WakePlaneWindow, siteRows?: readonly WakePlaneWindow[]): void {
    const key = panelKey(f.planeId, f.window.kind === 'ensemble');
    let p: PanelField | undefined;
    const panel = () => (p ??= panelField(f, wake, siteRows && this.campaign ? { campaign: this.campaign, rows: siteRows } : undefined));
    const q = panel();
    if (q.normalised) this.scales.add('u_norm', q.values);
    this.scales.add('u_ms', f.u);
    this.scales.add('su_ms', f.su);
    const samples = new Float64Array(f.samples.length);
    for (let i = 0; i < samples.length; i++) samples[i] = f.samples[i] > 0 ? f.samples[i] : NaN;
    this.scales.add('samples', samples);
    if (f.orientation === 'cross') this.scales.addArrows(q.v, q.w);
    if (!this.planes.has(key)) this.planes.set(key, new Thinned<PanelField>(this.maxPanels));
    this.planes.get(key)!.offer(panel);
  }

  /** The panels of a plane's windows (or, with `bins`, of its condition bins): at most maxPanels, evenly spaced,
   * and how many there were. */
  panels(planeId: string, bins = false): { shown: PanelField[]; total: number } {
    const t = this.planes.get(panelKey(planeId, bins));
    return t ? { shown: t.selected(), total: t.count } : { shown: [], total: 0 };
  }

  runScales(settings: FiguresSettings, planes: PlaneSpec[]): RunScales {
    return this.scales.scales(settings, planes.map(gridSpecOf));
  }
}

const panelKey = (planeId: string, bins: boolean) => `${planeId}\u0000${bins ? 'bins' : 'windows'}`;

export interface RunFiguresInput {
  campaign: Campaign;
  settings: FiguresSettings;
  collector: FigureCollector;
  analysis?: WakeAnalysis;
  /** Wake rows of the condition bins (ensembles), if any. */
  ensembleRows?: WakePlaneWindow[];
  /** The fields of the windows (or bins) a predicate selects, read when needed (field tables, or fields in memory). */
  windowFields?: (want: (planeId: string, index: number, ensemble: boolean) => boolean) => AsyncIterable<FieldResult>;
  queue: RenderQueue;
}

/** Queues every figure of the run and waits for them; returns their output records (summary, planes, windows). */
export async function renderRunFigures(i: RunFiguresInput): Promise<OutputRecord[]> {
  const { campaign, settings, collector, analysis, queue } = i;
  const scales = collector.runScales(settings, campaign.planes);
  if (analysis) {
    for (const f of summaryFigures(analysis, campaign)) await queue.add(f.svg, `images/summary_${f.what}`, { description: f.description });
  }
  for (const bins of [false, true]) {
    for (const plane of campaign.planes) {
      const { shown, total } = collector.panels(plane.id, bins);
      if (!shown.length) continue;
      const what = bins ? 'condition bins' : 'windows';
      await queue.add(planePanelsSvg(plane, shown, total, scales, campaign), `images/${plane.id}_${bins ? 'bins_' : ''}panels`, {
        plane: plane.id,
        description: `${shown.some((p) => p.normalised) ? 'u/u_inf' : 'u'} of ${shown.length === total ? `all ${total}` : `${shown.length} of ${total}`} ${what} on one colour scale`,
      });
    }
  }
  const wantWindows = settings.windowImages !== 'none', wantBins = (settings.binImages ?? 'none') !== 'none';
  if (i.windowFields && (wantWindows || wantBins)) {
    const key = (pid: string, k: number, ens: boolean) => `${pid}\u0000${ens ? 'bin' : 'w'}${k}`;
    const rows = new Map([
      ...(analysis?.rows ?? []).map((r) => [key(r.planeId, r.window.index, false), r] as const),
      ...(i.ensembleRows ?? []).map((r) => [key(r.planeId, r.window.index, true), r] as const),
    ]);
    // Several turbines: the window's map draws every turbine's wake (turbineViewsOf).
    const site = new Map([
      ...turbineViewsOf(analysis?.rows ?? [], (pid, k) => key(pid, k, false)),
      ...turbineViewsOf(i.ensembleRows ?? [], (pid, k) => key(pid, k, true)),
    ]);
    const want = (_pid: string, k: number, ens: boolean) => windowSelected(ens ? (settings.binImages ?? 'none') : settings.windowImages, k);
    for await (const f of i.windowFields(want)) {
      const ens = f.window.kind === 'ensemble';
      const views = site.get(key(f.planeId, f.window.index, ens));
      // The plane's own row, else (a site-frame plane) the first turbine's view: its inflow and yaw in the subtitle.
      const own = rows.get(key(f.planeId, f.window.index, ens)) ?? views?.[0];
      for (const fig of planeWindowFigures(f, own, campaign, scales, true, views)) {
        await queue.add(fig.svg, `images/${fig.name}`, { plane: fig.plane, window: fig.window, bin: fig.bin, description: fig.description });
      }
    }
  }
  return queue.done();
}

/** The multi-panel figure of one plane: u/u_inf (or u where no window has an inflow reference) per panel. */
export function planePanelsSvg(plane: PlaneSpec, shown: PanelField[], total: number, scales: RunScales, campaign: Campaign): string {
  const D = campaign.turbine.rotorDiameter_m;
  const normalised = shown.some((p) => p.normalised);
  const cross = plane.orientation === 'cross';
  const bins = shown.some((p) => p.ensemble);
  const unit = bins ? 'condition bin' : 'window';
  const panels: Panel[] = shown.map((p) => ({
    label: p.ensemble
      ? `condition bin ${p.index}${p.label ? ` \u00b7 ${conditionBinText(p.label)}` : ''}`
      : `window ${p.index} \u00b7 ${windowTimes({ index: p.index, start_s: p.start_s, end_s: p.end_s })}`,
    sublabel: [
      // A window's own label (the experiment log's, a segment's state level) first.
      !p.ensemble && p.label ? p.label : '',
      p.ensemble ? `${p.members}\u00a0window${p.members === 1 ? '' : 's'}` : '',
      Number.isFinite(p.yawOffset_deg) ? `\u03b3\u00a0${qty(p.yawOffset_deg, '\u00b0', 0)}` : '',
      windFrom(p.direction_deg),
    ].filter(Boolean).join(' \u00b7 '),
    grid: p.grid,
    values: normalised ? p.values : p.u,
    codes: normalised ? p.codes : p.codesU,
    ...(cross ? { arrows: { v: p.v, w: p.w, assumedW: p.assumedW } } : {}),
    ...(p.centre ? { centre: p.centre } : {}),
    ...(p.diskCentre ? { diskCentre: p.diskCentre } : {}),
    ...(p.ellipse ? { ellipse: p.ellipse } : {}),
    ...(p.track ? { track: p.track } : {}),
    // Horizontal planes: the turbines where they stand in this window's rotor frame (its own wind direction).
    ...(cross ? {} : { turbines: turbineMarks(campaign, plane, p.direction_deg) }),
  }));
  const first = shown[0], last = shown[shown.length - 1];
  const span = windowLabel({ index: 0, start_s: first.start_s, end_s: last.end_s });
  const q = normalised ? 'u_norm' : 'u_ms';
  const limits = scales.limits[q];
  const labels = axisLabels(plane.orientation);
  const notes: string[] = [];
  if (shown.length < total) notes.push(`${shown.length} of ${total} ${unit}s shown, evenly spaced: ${unit}s ${shown.map((p) => p.index).join(', ')}. Images of single ${unit}s: output.figures.${bins ? 'binImages' : 'windowImages'} or --window-images.`);
  notes.push(`Colour range ${scales.limitSource[q] === 'campaign' ? 'fixed in the campaign (output.figures.limits)' : 'shared by every plane and window of the run (1st to 99th percentile of all values)'}; arrows on one scale for the run${scales.arrowSource === 'campaign' ? ' (reference fixed in the campaign)' : ''}.`);
  if (normalised && shown.some((p) => !p.normalised)) notes.push(`${bins ? 'Bins' : 'Windows'} without an inflow reference have no u/u_inf: their cells are hatched.`);
  if (bins) notes.push('A condition bin pools the kept samples of its windows (an ensemble), each in its own rotor frame.');
  return smallMultiplesSvg(panels, {
    title: `${plane.id}: ${normalised ? 'u/u_{∞}' : 'streamwise speed u'} in ${shown.length === total ? `${total}` : `${shown.length} of ${total}`} ${unit}${total === 1 ? '' : 's'}`,
    subtitle: `${planePosition({ orientation: plane.orientation, x_m: plane.x_m, z_m: plane.z_m }, D)} \u00b7 ${span} \u00b7 ${cross ? 'seen looking downstream, +y on the left' : 'seen from above, flow up the page, +y on the left'}`,
    colorbarLabel: normalised ? QUANTITY.uNorm : QUANTITY.u,
    ...(limits ? { domain: limits } : {}),
    ...(cross ? { arrowScale: scales.arrows } : {}),
    axes: { yLabel: labels.yLabel, zLabel: labels.zLabel },
    ...(cross ? { rotor: { y: 0, z: campaign.turbine.hubHeight_m, radius: D / 2 } } : { turbines: turbineMarks(campaign, plane, first.direction_deg) }),
    ...(cross ? {} : { view: horizontalView(gridSpecOf(plane), shown.map((p) => p.hasData), campaign) }),
    maskNames: RESULT_MASK_NAMES,
    notes,
  });
}

export { describeWindowImages };
