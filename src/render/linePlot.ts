/**
 * A small line and scatter plot builder for the summary figures: linear axes with nice ticks, light grid lines,
 * points with optional vertical error bars, model curves, and a legend beside the plot.
 */
import { figureHead, linear, n, svgDocument, text, wrap } from './svg.ts';
import { theme } from './theme.ts';
import { formatTick, niceExtent, niceStep, niceTicks } from './ticks.ts';

export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond';

export interface PlotSeries {
  label: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** Half-length of the vertical error bar per point (same unit as y); NaN or absent draws none. */
  yErr?: ArrayLike<number>;
  /**
   * The vertical bar's two ends per point instead (same unit as y), for intervals that are not symmetric about the
   * value (bootstrap percentile intervals); takes the place of yErr where given.
   */
  yInterval?: [ArrayLike<number>, ArrayLike<number>];
  /** Half-length of the horizontal error bar per point (same unit as x). */
  xErr?: ArrayLike<number>;
  /** 'line': a polyline through the finite points in the given order; 'points': markers; 'both'. */
  kind: 'line' | 'points' | 'both';
  /** Default: the next colour of the theme's series palette. */
  colour?: string;
  /** SVG dash array for lines, e.g. "6 3". */
  dash?: string;
  /** SVG dash offset of the line (lines drawn at one place with interleaved dashes). */
  dashOffset?: number;
  marker?: MarkerShape;
  /** Drawn shifted by this much along x (display only), so that series at the same x do not hide each other. */
  xOffset?: number;
}

export interface PlotOptions {
  title: string;
  subtitle?: string;
  xLabel: string;
  yLabel: string;
  series: PlotSeries[];
  /** Axis ranges; default: the data (with error bars), padded and widened to nice numbers. */
  xDomain?: [number, number];
  yDomain?: [number, number];
  /** Widen the y range to include 0 (default false). */
  yIncludeZero?: boolean;
  /** Shown under the plot, one line each (e.g. the model's source). */
  notes?: string[];
  /** Plot area size in user units; default 470 x 300. */
  plotWidth?: number;
  plotHeight?: number;
  /** A horizontal reference line (e.g. zero). */
  yReference?: number;
  /** A vertical dashed line at `at` (x units) with `label` beside its top: sets apart what is right of it. */
  xDivider?: { at: number; label: string };
}

export function linePlotSvg(o: PlotOptions): string {
  const pw = o.plotWidth ?? 470, ph = o.plotHeight ?? 300;
  const left = 72;
  const legendX = left + pw + 24, legendW = 220;
  const headText = figureHead(left, legendX + legendW - left - 12, o.title, o.subtitle);
  const subLines = headText.subLines;
  const top = 50 + headText.extra + subLines.length * 15;
  const xd = o.xDomain ?? dataDomain(o.series, 'x', false);
  const yd = o.yDomain ?? dataDomain(o.series, 'y', !!o.yIncludeZero);
  const X = linear(xd[0], xd[1], left, left + pw);
  const Y = linear(yd[0], yd[1], top + ph, top);
  const xCount = Math.max(3, Math.round(pw / 80)), yCount = Math.max(3, Math.round(ph / 55));
  const out: string[] = [];
  out.push(`<rect x="${left}" y="${top}" width="${pw}" height="${ph}" fill="#ffffff" stroke="none"/>`);
  const grid: string[] = [];
  const xStep = niceStep(xd[0], xd[1], xCount), yStep = niceStep(yd[0], yd[1], yCount);
  for (const t of niceTicks(xd[0], xd[1], xCount)) {
    const x = X(t);
    grid.push(`<line x1="${n(x)}" y1="${top}" x2="${n(x)}" y2="${top + ph}" stroke="${theme.faint}" stroke-width="0.8"/>`);
    grid.push(`<line x1="${n(x)}" y1="${top + ph}" x2="${n(x)}" y2="${top + ph + 5}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    grid.push(text(x, top + ph + 17, formatTick(t, xStep), { anchor: 'middle', cls: 'tick' }));
  }
  for (const t of niceTicks(yd[0], yd[1], yCount)) {
    const y = Y(t);
    grid.push(`<line x1="${left}" y1="${n(y)}" x2="${left + pw}" y2="${n(y)}" stroke="${theme.faint}" stroke-width="0.8"/>`);
    grid.push(`<line x1="${left - 5}" y1="${n(y)}" x2="${left}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    grid.push(text(left - 8, y, formatTick(t, yStep), { anchor: 'end', dy: 0.35, cls: 'tick' }));
  }
  out.push(`<g class="grid">${grid.join('')}</g>`);
  if (o.xDivider && o.xDivider.at > xd[0] && o.xDivider.at < xd[1]) {
    const x = X(o.xDivider.at);
    out.push(`<line class="divider" x1="${n(x)}" y1="${top}" x2="${n(x)}" y2="${top + ph}" stroke="${theme.muted}" stroke-width="0.9" stroke-dasharray="5 3"/>`);
    out.push(text(x + 6, top + 14, o.xDivider.label, { size: 10.5, fill: theme.muted, cls: 'divider-label' }));
  }
  if (o.yReference !== undefined && o.yReference > yd[0] && o.yReference < yd[1]) {
    out.push(`<line x1="${left}" y1="${n(Y(o.yReference))}" x2="${left + pw}" y2="${n(Y(o.yReference))}" stroke="${theme.muted}" stroke-width="0.8"/>`);
  }

  const clipId = 'wp-plotclip';
  const data: string[] = [];
  const legend: string[] = [];
  let ly = top + 6;
  o.series.forEach((s, si) => {
    const colour = s.colour ?? theme.series[si % theme.series.length];
    const marker = s.marker ?? (['circle', 'square', 'triangle', 'diamond'] as const)[si % 4];
    // x, y, the vertical bar's ends (NaN: none), the horizontal bar's half-length
    const pts: [number, number, number, number, number][] = [];
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i], y = s.y[i];
      if (!(Number.isFinite(x) && Number.isFinite(y))) continue;
      const [lo, hi] = barEnds(s, i);
      pts.push([x + (s.xOffset ?? 0), y, lo, hi, s.xErr ? s.xErr[i] : NaN]);
    }
    const g: string[] = [];
    if (s.kind !== 'points' && pts.length > 1) {
      g.push(`<path class="series-line" d="M${pts.map(([x, y]) => `${n(X(x))},${n(Y(y))}`).join('L')}" fill="none" stroke="${colour}" stroke-width="1.8"${s.dash ? ` stroke-dasharray="${s.dash}"` : ''}${s.dashOffset ? ` stroke-dashoffset="${s.dashOffset}"` : ''} stroke-linejoin="round"/>`);
    }
    if (s.kind !== 'line') {
      for (const [x, y, lo, hi, ex] of pts) {
        if (Number.isFinite(lo) && Number.isFinite(hi) && hi > lo) {
          const a = Y(lo), b = Y(hi), cx = X(x);
          g.push(`<path class="errorbar" d="M${n(cx)},${n(a)}L${n(cx)},${n(b)}M${n(cx - 3.5)},${n(a)}L${n(cx + 3.5)},${n(a)}M${n(cx - 3.5)},${n(b)}L${n(cx + 3.5)},${n(b)}" stroke="${colour}" stroke-width="1.1" fill="none"/>`);
        }
        if (Number.isFinite(ex) && ex > 0) {
          const a = X(x - ex), b = X(x + ex), cy = Y(y);
          g.push(`<path class="errorbar" d="M${n(a)},${n(cy)}L${n(b)},${n(cy)}M${n(a)},${n(cy - 3.5)}L${n(a)},${n(cy + 3.5)}M${n(b)},${n(cy - 3.5)}L${n(b)},${n(cy + 3.5)}" stroke="${colour}" stroke-width="1.1" fill="none"/>`);
        }
        g.push(markerPath(marker, X(x), Y(y), 4, colour));
      }
    }
    data.push(`<g class="series">${g.join('')}</g>`);
    // Legend entry.
    const sw = legendX;
    if (s.kind !== 'points') legend.push(`<line x1="${sw}" y1="${ly + 5}" x2="${sw + 26}" y2="${ly + 5}" stroke="${colour}" stroke-width="1.8"${s.dash ? ` stroke-dasharray="${s.dash}"` : ''}/>`);
    if (s.kind !== 'line') legend.push(markerPath(marker, sw + 13, ly + 5, 4, colour));
    const lines = wrap(s.label, legendW - 40, 10.5);
    lines.forEach((l, i) => legend.push(text(sw + 34, ly + 9 + i * 13, l, { size: 10.5 })));
    ly += Math.max(18, lines.length * 13 + 6);
  });
  out.push(`<g clip-path="url(#${clipId})">${data.join('')}</g>`);
  out.push(`<rect x="${left}" y="${top}" width="${pw}" height="${ph}" fill="none" stroke="${theme.ink}" stroke-width="0.8"/>`);
  out.push(text(left + pw / 2, top + ph + 38, o.xLabel, { anchor: 'middle', size: 12, cls: 'axis-label' }));
  out.push(text(18, top + ph / 2, o.yLabel, { anchor: 'middle', size: 12, rotate: -90, cls: 'axis-label' }));
  out.push(`<g class="legend">${legend.join('')}</g>`);
  let ny = top + ph + 60;
  for (const note of o.notes ?? []) {
    for (const l of wrap(note, legendX + legendW - left - 12, 10)) {
      out.push(text(left, ny, l, { size: 10, fill: theme.muted, cls: 'note' }));
      ny += 13;
    }
  }
  const head = headText.markup;
  const defs = `<clipPath id="${clipId}"><rect x="${left - 6}" y="${top - 6}" width="${pw + 12}" height="${ph + 12}"/></clipPath>`;
  const width = legendX + legendW;
  const height = Math.max(ny + 4, ly + 10);
  return svgDocument(width, height, o.title, head + out.join('\n') + '\n', defs);
}

/** The ends of point i's vertical bar: yInterval's, else y -/+ yErr; NaN when it has none. */
function barEnds(s: PlotSeries, i: number): [number, number] {
  if (s.yInterval) return [s.yInterval[0][i], s.yInterval[1][i]];
  const e = s.yErr ? Math.abs(s.yErr[i]) : NaN;
  return Number.isFinite(e) && e > 0 ? [s.y[i] - e, s.y[i] + e] : [NaN, NaN];
}

function dataDomain(series: PlotSeries[], axis: 'x' | 'y', includeZero: boolean): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (const s of series) {
    const v = axis === 'x' ? s.x : s.y;
    for (let i = 0; i < v.length; i++) {
      if (!Number.isFinite(v[i]) || !Number.isFinite(axis === 'x' ? s.y[i] : s.x[i])) continue;
      let a = v[i], b = v[i];
      if (axis === 'x') {
        const err = s.xErr && Number.isFinite(s.xErr[i]) ? Math.abs(s.xErr[i]) : 0;
        a -= err; b += err;
      } else {
        const [l, h] = barEnds(s, i);
        if (Number.isFinite(l)) a = Math.min(a, l);
        if (Number.isFinite(h)) b = Math.max(b, h);
      }
      lo = Math.min(lo, a);
      hi = Math.max(hi, b);
    }
  }
  if (!Number.isFinite(lo)) return [0, 1];
  if (includeZero) {
    lo = Math.min(lo, 0);
    hi = Math.max(hi, 0);
  }
  const pad = (hi - lo) * 0.05;
  return niceExtent(lo - (lo === 0 && includeZero ? 0 : pad), hi + pad, 6);
}

function markerPath(shape: MarkerShape, x: number, y: number, s: number, colour: string): string {
  const style = `fill="${colour}" stroke="#ffffff" stroke-width="0.8"`;
  switch (shape) {
    case 'circle':
      return `<circle class="point" cx="${n(x)}" cy="${n(y)}" r="${s}" ${style}/>`;
    case 'square':
      return `<rect class="point" x="${n(x - s * 0.9)}" y="${n(y - s * 0.9)}" width="${n(s * 1.8)}" height="${n(s * 1.8)}" ${style}/>`;
    case 'triangle':
      return `<path class="point" d="M${n(x)},${n(y - s * 1.1)}L${n(x + s)},${n(y + s * 0.7)}L${n(x - s)},${n(y + s * 0.7)}Z" ${style}/>`;
    case 'diamond':
      return `<path class="point" d="M${n(x)},${n(y - s * 1.2)}L${n(x + s)},${n(y)}L${n(x)},${n(y + s * 1.2)}L${n(x - s)},${n(y)}Z" ${style}/>`;
  }
}
