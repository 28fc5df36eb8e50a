/**
 * The colour bar of a map column: its title written horizontally on top (so it never stands beside the rotated
 * label of the rotor-diameter axis), the bands with tick labels, threshold marks, and triangular ends for values
 * beyond the range, each with its number of cells. The bar keeps the same length whether or not there are such
 * values, so bars of one run compare.
 */
import type { ColourScale, RangeCounts } from './colourScale.ts';
import type { LegendItem } from './mapLegend.ts';
import { linear, n, text } from './svg.ts';
import { wrapText } from './richText.ts';
import { theme } from './theme.ts';
import { formatNumber, formatTick, niceStep, niceTicks } from './ticks.ts';

export interface ColourBarOptions {
  /** Left edge of the bar and the top of the column (title first), figure units. */
  x: number;
  top: number;
  /** Height of the whole column: title, ends and bar. */
  height: number;
  /** Width available for the title and labels. */
  width: number;
  scale: ColourScale;
  counts: RangeCounts;
  title: string;
  /** false: the field has no finite value (an empty frame says so). */
  hasValues: boolean;
  marks?: { value: number; label: string }[];
  /** Counted thing, e.g. "cells" (default). */
  unit?: string;
}

const BAR_W = 16;
const TITLE_SIZE = 11;
const TITLE_LINE = 13;

/** Space the title takes above the bar for a given title and width (to align other content). */
export function colourBarTitleHeight(title: string, width: number): number {
  return wrapText(title, width, TITLE_SIZE).length * TITLE_LINE;
}

export function colourBar(o: ColourBarOptions): { markup: string; legend: LegendItem[]; barTop: number; barBottom: number } {
  const cb: string[] = [];
  const legend: LegendItem[] = [];
  const lines = wrapText(o.title, o.width, TITLE_SIZE);
  lines.forEach((l, i) => cb.push(text(o.x, o.top + 10 + i * TITLE_LINE, l, { size: TITLE_SIZE, cls: 'colorbar-title' })));
  const titleH = lines.length * TITLE_LINE;
  const barTop = o.top + titleH + 32;
  const barBottom = o.top + o.height - 30;
  const x = o.x;
  if (!o.hasValues) {
    cb.push(`<rect x="${n(x)}" y="${n(barTop)}" width="${BAR_W}" height="${n(barBottom - barTop)}" fill="${theme.faint}" stroke="${theme.rule}" stroke-width="0.6"/>`);
    cb.push(text(x + BAR_W + 6, (barTop + barBottom) / 2, 'no values', { size: 10, fill: theme.muted, dy: 0.35 }));
    return { markup: `<g class="colorbar">${cb.join('')}</g>`, legend, barTop, barBottom };
  }
  const s = o.scale;
  const C = linear(s.domain[0], s.domain[1], barBottom, barTop);
  for (let k = 0; k < s.colours.length; k++) {
    const yA = C(s.thresholds[k + 1]), yB = C(s.thresholds[k]);
    cb.push(`<rect x="${n(x)}" y="${n(yA)}" width="${BAR_W}" height="${n(yB - yA + 0.3)}" fill="${s.colours[k]}"/>`);
  }
  cb.push(`<rect x="${n(x)}" y="${n(barTop)}" width="${BAR_W}" height="${n(barBottom - barTop)}" fill="none" stroke="${theme.ink}" stroke-width="0.6"/>`);
  const unit = o.unit ?? 'cells';
  if (o.counts.over > 0) {
    const top = s.colours[s.colours.length - 1];
    cb.push(`<path class="colorbar-over" data-count="${o.counts.over}" d="M${n(x)},${n(barTop)}L${n(x + BAR_W / 2)},${n(barTop - 12)}L${n(x + BAR_W)},${n(barTop)}Z" fill="${top}" stroke="${theme.ink}" stroke-width="0.6"/>`);
    cb.push(text(x, barTop - 15, `${o.counts.over}\u00a0above`, { size: 10, cls: 'colorbar-count' }));
  }
  if (o.counts.under > 0) {
    const bottom = s.colours[0];
    cb.push(`<path class="colorbar-under" data-count="${o.counts.under}" d="M${n(x)},${n(barBottom)}L${n(x + BAR_W / 2)},${n(barBottom + 12)}L${n(x + BAR_W)},${n(barBottom)}Z" fill="${bottom}" stroke="${theme.ink}" stroke-width="0.6"/>`);
    cb.push(text(x, barBottom + 24, `${o.counts.under}\u00a0below`, { size: 10, cls: 'colorbar-count' }));
  }
  if (o.counts.over > 0 || o.counts.under > 0) {
    const many = (k: number) => `${k}\u00a0${k === 1 ? unit.replace(/s$/, '') : unit}`;
    const parts = [
      o.counts.over > 0 ? `${many(o.counts.over)} above ${formatNumber(s.domain[1], decimalsOf(s))}` : '',
      o.counts.under > 0 ? `${many(o.counts.under)} below ${formatNumber(s.domain[0], decimalsOf(s))}` : '',
    ].filter(Boolean);
    legend.push({ kind: 'range', label: `beyond the colour range (triangles): ${parts.join(', ')}; drawn in the end colours` });
  }
  const cStep = niceStep(s.domain[0], s.domain[1], 6);
  for (const t of niceTicks(s.domain[0], s.domain[1], 6)) {
    const y = C(t);
    cb.push(`<line x1="${n(x + BAR_W)}" y1="${n(y)}" x2="${n(x + BAR_W + 4)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.6"/>`);
    cb.push(text(x + BAR_W + 7, y, formatTick(t, cStep), { dy: 0.35, size: 10, cls: 'tick' }));
  }
  for (const mk of o.marks ?? []) {
    if (!(mk.value >= s.domain[0] && mk.value <= s.domain[1])) continue;
    const y = C(mk.value);
    cb.push(`<line class="cb-mark" x1="${n(x - 4)}" y1="${n(y)}" x2="${n(x + BAR_W)}" y2="${n(y)}" stroke="#ffffff" stroke-width="3"/><line x1="${n(x - 4)}" y1="${n(y)}" x2="${n(x + BAR_W)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="1.4"/>`);
    cb.push(`<path d="M${n(x - 1)},${n(y)}L${n(x - 8)},${n(y - 4)}L${n(x - 8)},${n(y + 4)}Z" fill="${theme.ink}"/>`);
    legend.push({ kind: 'cbmark', label: `${mk.label} ${formatNumber(mk.value, markDecimals(mk.value))} (line on the colour bar)` });
  }
  return { markup: `<g class="colorbar">${cb.join('')}</g>`, legend, barTop, barBottom };
}

function decimalsOf(s: ColourScale): number {
  const step = s.thresholds.length > 1 ? s.thresholds[1] - s.thresholds[0] : 1;
  for (let d = 0; d < 4; d++) if (Math.abs(step * 10 ** d - Math.round(step * 10 ** d)) < 1e-6) return d;
  return 4;
}

function markDecimals(v: number): number {
  for (let d = 0; d < 4; d++) if (Math.abs(v * 10 ** d - Math.round(v * 10 ** d)) < 1e-9) return d;
  return 4;
}
