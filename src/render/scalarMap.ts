/**
 * The one single-map renderer: a scalar field on a plane grid as filled contour bands (or cells) with a colour bar,
 * masked cells hatched by reason, optional rotor outline (or turbines seen from above), markers, ellipses and
 * in-plane arrows. Results and the planner's trust maps share it; the small multiples (smallMultiples.ts) share its
 * layers (mapLayers.ts).
 *
 * Layout, left to right: the vertical axis label (the only rotated label on the left), the map with metres on the
 * bottom and left and rotor diameters on the top and right (the right axis label is the only rotated label on the
 * right), the colour bar with its title written horizontally on top, then the legend.
 */
import type { Grid } from '../grid/grid.ts';
import type { Scheme } from './colour.ts';
import { colourBar } from './colourBar.ts';
import { colourScale, percentileSorted, rangeCounts } from './colourScale.ts';
import {
  arrowEvery, arrowLayer, axesLayer, clipDef, ellipseLayer, fieldLayer, gridView, mapFrame, markerLayer, maskLayer, rotorLayer, turbineLayer,
  ARROW_CAP, type ArrowScale, type MarkerShape, type TurbineMark, type View,
} from './mapLayers.ts';
import { drawLegend, uniqueItems, type LegendItem } from './mapLegend.ts';
import { NO_VALUE_CODE } from './maskStyle.ts';
import { qty } from './numbers.ts';
import { figureHead, svgDocument, text, wrap } from './svg.ts';
import { theme } from './theme.ts';

export interface ScalarMapOptions {
  title: string;
  subtitle?: string;
  /** Colour-bar title with unit (sub/superscript markup allowed), e.g. "u/u_{∞} (–)". */
  colorbarLabel: string;
  /** Colour range [lo, hi] in the value's unit (shared across a run, or fixed in the campaign); values outside
   * take the end colours and are counted at the bar's triangular ends. Default: the 1st to 99th percentile of the
   * finite values, widened to nice numbers. */
  domain?: [number, number];
  /** Default 'sequential' (cividis); 'diverging' (PuOr) for signed quantities. */
  scheme?: Scheme;
  /** Marks across the colour bar, e.g. a masking threshold: a dark line with a pointer, explained in the legend. */
  colorbarMarks?: { value: number; label: string }[];
  /** Filled contour bands (default true) or flat cells. */
  contours?: boolean;
  /** Mask reason per cell (0 = valid) and the reasons' names for the legend; masked cells are drawn hatched. */
  mask?: { codes: Uint8Array; names: Record<number, string> };
  /** Axis labels (with unit); with diameter_m a second pair of axes shows rotor diameters from the rotor centre
   * (or from 0 without a rotor). */
  axes: { yLabel: string; zLabel: string; diameter_m?: number; yLabelD?: string; zLabelD?: string; note?: string };
  /** Rotor disk outline and hub (cross planes), metres in the plane's coordinates. */
  rotor?: { y: number; z: number; radius: number };
  /** Turbines seen from above (horizontal planes): y and x of the tower, rotor diameter. */
  turbines?: TurbineMark[];
  markers?: { y: number; z: number; label: string; shape: MarkerShape }[];
  /** Ellipses with semi-axes ry (along y) and rz (along the second axis), metres. */
  ellipses?: { y: number; z: number; ry: number; rz: number; label: string }[];
  /**
   * In-plane vectors per cell (v along the horizontal axis, w along the vertical axis), m/s, every k-th cell in each
   * direction (default: about 16 arrows across). `scale` fixes the reference speed and its length in plane metres
   * (one per run); without it the reference is `referenceSpeed` (default a nice number near the 90th percentile of
   * the in-plane speed) drawn 0.75 arrow spacings long. `assumedW` flags cells where w was assumed zero: their
   * arrows are grey with an open head. Arrows faster than twice the reference are cut to that length and dashed.
   */
  arrows?: { v: Float64Array; w: Float64Array; assumedW?: Uint8Array; every?: number; referenceSpeed?: number; scale?: ArrowScale; label?: string };
  /** Part of the plane to show, metres (default: the whole grid), e.g. cropped to the cells with data. */
  view?: View;
}

const ID = 'wp';
const LEGEND_W = 218;
const CB_COLUMN = 112;

export function scalarMapSvg(grid: Grid, opts: ScalarMapOptions): string {
  const values = grid.values;
  const scale = colourScale(values, opts.scheme ?? 'sequential', opts.domain);
  const view = opts.view ?? gridView(grid);

  // Plot area at most 520 wide and 430 high (560 for planes taller than wide), one scale for both axes.
  const vw = view.yHi - view.yLo, vh = view.zHi - view.zLo;
  const maxH = vh > 1.2 * vw ? 560 : 430;
  const s = Math.min(520 / vw, maxH / vh);
  const pw = vw * s, ph = vh * s;
  const D = opts.axes.diameter_m && opts.axes.diameter_m > 0 ? opts.axes.diameter_m : undefined;
  const left = 74;
  const cbX = left + pw + (D ? 72 : 24);
  const legendX = cbX + CB_COLUMN;
  const width = Math.max(legendX + LEGEND_W + 12, 760);
  const headText = figureHead(left, width - left - 12, opts.title, opts.subtitle);
  const subLines = headText.subLines;
  const top = 50 + headText.extra + subLines.length * 15 + (D ? 40 : 6);
  const f = mapFrame(view, left, top, s, `${ID}-plot`);

  const defs = [clipDef(f)];
  const body: string[] = [];
  const legend: LegendItem[] = [];

  body.push(fieldLayer(f, grid, scale, opts.contours !== false));
  const mask = maskLayer(f, grid, opts.mask?.codes);
  body.push(mask.markup);
  if (mask.counts.size) {
    legend.push({ kind: 'heading', label: 'Not shown' });
    for (const c of [...mask.counts.keys()].sort((a, b) => a - b)) {
      const name = c === NO_VALUE_CODE ? 'no value' : (opts.mask?.names[c] || `code ${c}`).replace(/_/g, ' ');
      const k = mask.counts.get(c)!;
      legend.push({ kind: 'mask', code: c, label: `${name} (${k}\u00a0cell${k === 1 ? '' : 's'})` });
    }
  }

  if (opts.arrows) {
    const a = opts.arrows;
    const base = Math.max(1, Math.round(a.every ?? Math.ceil(Math.max(grid.ny, grid.nz) / 16)));
    const sc = a.scale ?? defaultArrowScale(a.v, a.w, base * Math.min(grid.dy, grid.dz), a.referenceSpeed);
    // The run's arrow length on a plane of smaller cells: fewer arrows, so that they do not run into each other.
    const every = a.scale && a.every === undefined ? arrowEvery(grid, sc, base) : base;
    const res = arrowLayer(f, grid, { v: a.v, w: a.w, assumedW: a.assumedW, every }, sc);
    body.push(res.markup);
    legend.push(...arrowLegend(sc, s, res.counts, a.label));
  }

  if (opts.rotor) {
    body.push(rotorLayer(f, opts.rotor));
    legend.push({ kind: 'rotor', label: 'rotor disk and hub' });
  }
  for (const t of opts.turbines ?? []) {
    const m = turbineLayer(f, t);
    if (m) (body.push(m), legend.push({ kind: 'turbine', label: `${t.label}: rotor seen from above` }));
  }
  for (const e of opts.ellipses ?? []) {
    const m = ellipseLayer(f, e);
    if (m) (body.push(m), legend.push({ kind: 'ellipse', label: e.label }));
  }
  for (const m of opts.markers ?? []) {
    const mk = markerLayer(f, m);
    if (mk) (body.push(mk), legend.push({ kind: 'marker', shape: m.shape, label: m.label }));
  }

  const yc = opts.rotor?.y ?? 0, zc = opts.rotor?.z ?? 0;
  body.push(axesLayer(f, { yTicks: true, zTicks: true, ...(D ? { diameters: { D, yc, zc } } : {}) }));
  const ax: string[] = [];
  ax.push(text(left + pw / 2, top + ph + 36, opts.axes.yLabel, { anchor: 'middle', size: 12, cls: 'axis-label' }));
  ax.push(text(18, top + ph / 2, opts.axes.zLabel, { anchor: 'middle', size: 12, rotate: -90, cls: 'axis-label' }));
  if (D) {
    ax.push(text(left + pw / 2, top - 26, opts.axes.yLabelD ?? (opts.rotor ? '(y \u2212 y_{hub})/D' : 'y/D'), { anchor: 'middle', size: 11, fill: theme.muted, cls: 'axis-label' }));
    ax.push(text(left + pw + 48, top + ph / 2, opts.axes.zLabelD ?? (opts.rotor ? '(z \u2212 z_{hub})/D' : 'z/D'), { anchor: 'middle', size: 11, fill: theme.muted, rotate: 90, cls: 'axis-label' }));
  }
  if (opts.axes.note) ax.push(text(left, top + ph + 54, opts.axes.note, { size: 10, fill: theme.muted }));
  body.push(`<g class="axis-labels">${ax.join('')}</g>`);

  const hasValues = values.some((v) => Number.isFinite(v));
  const cbH = Math.max(ph, 200);
  const cb = colourBar({ x: cbX, top, height: cbH, width: CB_COLUMN - 10, scale, counts: rangeCounts(values, scale.domain), title: opts.colorbarLabel, hasValues, marks: opts.colorbarMarks });
  body.push(cb.markup);
  legend.push(...cb.legend);

  // The masked cells under "Not shown", and the marks drawn over the map under a heading of their own.
  const items = uniqueItems(legend);
  const firstMark = items.findIndex((it) => it.kind !== 'heading' && it.kind !== 'mask');
  if (mask.counts.size && firstMark > 0) items.splice(firstMark, 0, { kind: 'heading', label: 'Marks' });
  const leg = drawLegend(items, legendX, top + 4, LEGEND_W);
  body.push(leg.markup);

  const head = headText.markup;
  const height = Math.max(top + ph + (opts.axes.note ? 66 : 50), top + cbH + 20, leg.bottom + 16);
  return svgDocument(width, height, opts.title, head + body.join('\n') + '\n', defs.join(''));
}

/** The reference arrow and, when present, the assumed-w and capped arrows, for the legend. */
export function arrowLegend(sc: ArrowScale, unitsPerMetre: number, counts: { measured: number; assumed: number; capped: number; unresolved?: number }, label?: string): LegendItem[] {
  if (counts.measured + counts.assumed === 0) return [];
  const len = sc.length_m * unitsPerMetre;
  const ref = qty(sc.reference_ms, 'm/s', decimalsOf(sc.reference_ms));
  const items: LegendItem[] = [{ kind: 'arrow', length: len, label: `${ref} ${label ?? 'in-plane flow (v, w), measured'}` }];
  if (counts.assumed) items.push({ kind: 'arrow', length: len, assumed: true, label: `${ref}, v only: w not measured, taken as 0 (two-instrument cells, ${counts.assumed}\u00a0arrow${counts.assumed === 1 ? '' : 's'})` });
  if (counts.capped) items.push({ kind: 'arrow', length: len, dashed: true, label: `${counts.capped}\u00a0arrow${counts.capped === 1 ? '' : 's'} faster than ${qty(ARROW_CAP * sc.reference_ms, 'm/s', decimalsOf(sc.reference_ms))}, cut to that length` });
  const k = counts.unresolved ?? 0;
  if (k) items.push({ kind: 'note', label: `no arrow in ${k}\u00a0cell${k === 1 ? '' : 's'} with a value: v or w not resolved (masked)` });
  return items;
}

/** Reference speed (a nice number near the 90th percentile of the in-plane speed, or the given one) drawn 0.75
 * arrow spacings long. */
export function defaultArrowScale(v: ArrayLike<number>, w: ArrayLike<number>, spacing_m: number, referenceSpeed?: number): ArrowScale {
  let ref = referenceSpeed;
  if (!(ref && ref > 0)) {
    const speeds: number[] = [];
    for (let i = 0; i < v.length; i++) {
      const sp = Math.hypot(v[i], w[i]);
      if (Number.isFinite(sp)) speeds.push(sp);
    }
    speeds.sort((a, b) => a - b);
    ref = niceRound(speeds.length ? percentileSorted(speeds, 0.9) : NaN);
  }
  return { reference_ms: ref, length_m: 0.75 * spacing_m };
}

/** 1, 2 or 5 times a power of ten nearest to v (1 for empty or zero input). */
export function niceRound(v: number): number {
  if (!(v > 0) || !Number.isFinite(v)) return 1;
  const p = 10 ** Math.floor(Math.log10(v));
  const f = v / p;
  return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}

function decimalsOf(v: number): number {
  return v >= 1 ? 0 : Math.min(4, Math.ceil(-Math.log10(v)));
}

export { colourLevels } from './colourScale.ts';
