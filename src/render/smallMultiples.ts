/**
 * One figure per plane with many fields as small multiples on shared scales: every panel uses the same colour
 * range, the same arrow scale and the same metres per figure unit, so panels compare at a glance. Generic over a
 * list of labelled fields: windows today, condition bins or ensembles as they come.
 *
 * Layout: panels in a grid (columns chosen so that panels stay at least 160 units wide and the figure about 1100
 * units high at most), each with a one- or two-line label above; metre ticks on the left column and on panels
 * with no panel below; one axis title per axis (the vertical one the only rotated label); one colour bar on the
 * right with its title written horizontally and triangular ends counting the cells beyond its range over all
 * panels; the legend in columns under the panels.
 */
import type { GridSpec } from '../grid/grid.ts';
import { colourBar } from './colourBar.ts';
import { colourScale, rangeCounts, type ColourScale } from './colourScale.ts';
import {
  arrowEvery, arrowLayer, axesLayer, clipDef, ellipseLayer, fieldLayer, gridView, mapFrame, markerLayer, maskLayer, rotorLayer, turbineInView, turbineLayer,
  type ArrowScale, type TurbineMark, type View,
} from './mapLayers.ts';
import { drawLegendColumns, uniqueItems, type LegendItem } from './mapLegend.ts';
import { NO_VALUE_CODE } from './maskStyle.ts';
import { arrowLegend } from './scalarMap.ts';
import { textWidth } from './richText.ts';
import { figureHead, svgDocument, text, wrap } from './svg.ts';
import { theme } from './theme.ts';

/** One panel: its field as plain arrays and its label lines. */
export interface Panel {
  label: string;
  sublabel?: string;
  grid: GridSpec;
  values: ArrayLike<number>;
  /** Mask reason per cell where `values` is missing. */
  codes?: ArrayLike<number>;
  arrows?: { v: ArrayLike<number>; w: ArrayLike<number>; assumedW?: ArrayLike<number> };
  centre?: { y: number; z: number };
  diskCentre?: { y: number; z: number };
  ellipse?: { y: number; z: number; ry: number; rz: number };
  track?: { x: number[]; yc: number[] };
  /** This panel's turbines, where they stand in its own rotor frame (default: the options' turbines). */
  turbines?: TurbineMark[];
}

export interface SmallMultiplesOptions {
  title: string;
  subtitle?: string;
  colorbarLabel: string;
  /** Shared colour range; default from the panels' values. */
  domain?: [number, number];
  arrowScale?: ArrowScale;
  axes: { yLabel: string; zLabel: string };
  rotor?: { y: number; z: number; radius: number };
  turbines?: TurbineMark[];
  /** Part of the plane every panel shows (default: the first panel's grid). */
  view?: View;
  maskNames: Record<number, string>;
  /** Lines under the legend (e.g. which windows are shown). */
  notes?: string[];
}

const WIDTH = 1120;
const LEFT = 72;
const CB_COLUMN = 128;
const GAP_X = 16;
const LABEL_SIZE = 11;
const TICK = 12;

export function smallMultiplesSvg(panels: Panel[], o: SmallMultiplesOptions): string {
  const first = panels[0];
  if (!first) throw new RangeError('small multiples need at least one panel');
  const view = o.view ?? gridView(first.grid);
  const vw = view.yHi - view.yLo, vh = view.zHi - view.zLo;
  const area = WIDTH - LEFT - CB_COLUMN - 12;
  const layout = chooseLayout(panels.length, vw, vh, area, 32);
  const { cols, rows, s } = layout;
  const pw = vw * s, ph = vh * s;
  // Panel labels wrapped to the panel width (at most three lines for the label, two for the sublabel).
  const labelLines = panels.map((p) => [
    ...clampLines(wrap(p.label, pw, LABEL_SIZE, true), 3, pw, true).map((t) => ({ t, bold: true })),
    ...(p.sublabel ? clampLines(wrap(p.sublabel, pw, LABEL_SIZE), 3, pw, false).map((t) => ({ t, bold: false })) : []),
  ]);
  const labelH = Math.max(...labelLines.map((l) => l.length)) * 14 + 4;
  const gapY = labelH + 10 + TICK; // room for the panel label above and a tick row below
  const headText = figureHead(LEFT, WIDTH - LEFT - 12, o.title, o.subtitle);
  const subLines = headText.subLines;
  const top0 = 50 + headText.extra + subLines.length * 15 + 8;
  const all: number[] = [];
  for (const p of panels) for (let i = 0; i < p.values.length; i++) all.push(p.values[i]);
  const scale: ColourScale = colourScale(all, 'sequential', o.domain);
  const counts = rangeCounts(all, scale.domain);

  const defs: string[] = [];
  const body: string[] = [];
  const maskCounts = new Map<number, number>();
  const arrowCounts = { measured: 0, assumed: 0, capped: 0, unresolved: 0 };
  const overlays = { centre: false, disk: false, ellipse: false, track: false };
  panels.forEach((p, k) => {
    const col = k % cols, row = Math.floor(k / cols);
    const left = LEFT + col * (pw + GAP_X);
    const top = top0 + labelH + row * (ph + gapY);
    const f = mapFrame(view, left, top, s, `wp-panel-${k}`);
    defs.push(clipDef(f));
    const grid = { ...p.grid, values: Float64Array.from(p.values) };
    const g: string[] = [`<g class="panel" data-index="${k}">`];
    g.push(fieldLayer(f, grid, scale, true));
    const codes = p.codes ? Uint8Array.from(p.codes) : undefined;
    const m = maskLayer(f, grid, codes);
    g.push(m.markup);
    for (const [c, nc] of m.counts) maskCounts.set(c, (maskCounts.get(c) ?? 0) + nc);
    if (p.arrows && o.arrowScale) {
      const every = arrowEvery(p.grid, o.arrowScale, Math.ceil(Math.max(p.grid.ny, p.grid.nz) / 9));
      const a = arrowLayer(f, grid, { v: p.arrows.v, w: p.arrows.w, assumedW: p.arrows.assumedW, every }, o.arrowScale);
      g.push(a.markup);
      arrowCounts.measured += a.counts.measured;
      arrowCounts.assumed += a.counts.assumed;
      arrowCounts.capped += a.counts.capped;
      arrowCounts.unresolved += a.counts.unresolved;
    }
    if (o.rotor) g.push(rotorLayer(f, o.rotor, 2));
    for (const t of p.turbines ?? o.turbines ?? []) g.push(turbineLayer(f, t));
    if (p.ellipse) {
      const e = ellipseLayer(f, p.ellipse);
      if (e) (g.push(e), (overlays.ellipse = true));
    }
    if (p.centre) {
      const c = markerLayer(f, { ...p.centre, shape: 'cross' }, 4);
      if (c) (g.push(c), (overlays.centre = true));
    }
    if (p.diskCentre) {
      const c = markerLayer(f, { ...p.diskCentre, shape: 'diamond' }, 3.5);
      if (c) (g.push(c), (overlays.disk = true));
    }
    for (let i = 0; i < (p.track?.x.length ?? 0); i++) {
      const c = markerLayer(f, { y: p.track!.yc[i], z: p.track!.x[i], shape: 'circle' }, 3.5);
      if (c) (g.push(c), (overlays.track = true));
    }
    const below = k + cols < panels.length;
    // Bottom tick labels keep half the gap to a neighbouring panel (edge labels that would meet are left out).
    const room: [number, number] = [col === 0 ? 0 : left - GAP_X / 2, col === cols - 1 || k === panels.length - 1 ? Infinity : left + pw + GAP_X / 2];
    g.push(axesLayer(f, { yTicks: !below, zTicks: col === 0, tickSize: TICK, yTickRoom: room }));
    labelLines[k].forEach((l, j) => g.push(text(left, top - labelH + 11 + 14 * j, l.t, { size: LABEL_SIZE, ...(l.bold ? { weight: 'bold' as const } : { fill: theme.muted }), cls: 'panel-label' })));
    g.push('</g>');
    body.push(g.join(''));
  });

  const gridW = cols * pw + (cols - 1) * GAP_X;
  const gridBottom = top0 + labelH + rows * ph + (rows - 1) * gapY;
  body.push(text(LEFT + gridW / 2, gridBottom + 16 + TICK + 8, o.axes.yLabel, { anchor: 'middle', size: 12, cls: 'axis-label' }));
  body.push(text(18, top0 + labelH + (gridBottom - top0 - labelH) / 2, o.axes.zLabel, { anchor: 'middle', size: 12, rotate: -90, cls: 'axis-label' }));

  const cbX = LEFT + gridW + 40;
  const cbH = Math.min(Math.max(260, ph), Math.max(260, gridBottom - top0));
  const cb = colourBar({ x: cbX, top: top0, height: cbH, width: WIDTH - cbX - 8, scale, counts, title: o.colorbarLabel, hasValues: all.some(Number.isFinite) });
  body.push(cb.markup);

  const legend: LegendItem[] = [];
  if (maskCounts.size) {
    legend.push({ kind: 'heading', label: panels.length === 1 ? 'Not shown' : `Not shown (cells in ${panels.length === 2 ? 'both' : `all ${panels.length}`} panels)` });
    for (const c of [...maskCounts.keys()].sort((a, b) => a - b)) {
      const name = c === NO_VALUE_CODE ? 'no value' : (o.maskNames[c] || `code ${c}`).replace(/_/g, ' ');
      legend.push({ kind: 'mask', code: c, label: `${name} (${maskCounts.get(c)}\u00a0${maskCounts.get(c) === 1 ? 'cell' : 'cells'})` });
    }
  }
  legend.push({ kind: 'heading', label: 'Marks' });
  if (o.arrowScale) legend.push(...arrowLegend(o.arrowScale, s, arrowCounts, 'in-plane flow (v, w), measured; one scale for the run'));
  if (o.rotor) legend.push({ kind: 'rotor', label: 'rotor disk and hub' });
  for (const t of o.turbines ?? []) if (turbineInView(view, t)) legend.push({ kind: 'turbine', label: `${t.label}: rotor seen from above` });
  if (overlays.centre) legend.push({ kind: 'marker', shape: 'cross', label: 'wake centre, 2D Gaussian fit' });
  if (overlays.ellipse) legend.push({ kind: 'ellipse', label: 'width ellipse (σ_{y}, σ_{z}) of the fit' });
  if (overlays.disk) legend.push({ kind: 'marker', shape: 'diamond', label: 'wake centre, minimum-power disk' });
  if (overlays.track) legend.push({ kind: 'marker', shape: 'circle', label: 'wake centre per row (1D Gaussian fit)' });
  legend.push(...cb.legend);
  const legendTop = gridBottom + 16 + TICK + 30;
  const colW = 300;
  const leg = drawLegendColumns(uniqueItems(legend), LEFT, legendTop, colW, 3, 30);
  body.push(leg.markup);
  let ny = leg.bottom + 8;
  for (const note of o.notes ?? []) {
    for (const l of wrap(note, WIDTH - LEFT - 12, 10)) {
      body.push(text(LEFT, ny + 10, l, { size: 10, fill: theme.muted, cls: 'note' }));
      ny += 13;
    }
  }
  const head = headText.markup;
  const height = Math.max(ny + 12, top0 + cbH + 20);
  return svgDocument(WIDTH, height, o.title, head + body.join('\n') + '\n', defs.join(''));
}

/**
 * Columns and scale for n panels of a vw x vh view (metres) in `area` units of width: the largest panels (at most
 * 420 units wide, and 330 high, or 460 for views more than 1.5 times taller than wide) for which all rows fit in
 * about 1100 units; among layouts with panels of the same size, the one with the fewest rows.
 */
export function chooseLayout(n: number, vw: number, vh: number, area: number, labelH: number): { cols: number; rows: number; s: number } {
  const maxH = vh > 1.5 * vw ? 460 : 330;
  let best: { cols: number; rows: number; s: number; h: number; fits: boolean } | undefined;
  for (let cols = 1; cols <= Math.min(n, 10); cols++) {
    const pw = Math.min(420, (area - (cols - 1) * GAP_X) / cols);
    const s = Math.min(pw / vw, maxH / vh);
    const rows = Math.ceil(n / cols);
    const h = rows * (vh * s + labelH + 10 + TICK);
    const fits = h <= 1100;
    // Layouts that fit beat those that do not; among those that fit, bigger panels, then fewer rows; among those
    // that do not, the lowest figure.
    const better = !best || (fits && !best.fits) ||
      (fits && best.fits && (s > best.s * 1.01 || (s > best.s * 0.99 && rows < best.rows))) ||
      (!fits && !best.fits && h < best.h);
    if (better) best = { cols, rows, s, h, fits };
  }
  return { cols: best!.cols, rows: best!.rows, s: best!.s };
}

/** At most `max` lines; when some are left out the last shown ends with an ellipsis (shortened to stay in `width`). */
function clampLines(lines: string[], max: number, width: number, bold: boolean): string[] {
  if (lines.length <= max) return lines;
  const out = lines.slice(0, max);
  let last = out[max - 1];
  while (last.length > 1 && textWidth(`${last}\u2026`, LABEL_SIZE, bold) > width) last = last.slice(0, -1).trimEnd();
  out[max - 1] = `${last}\u2026`;
  return out;
}
