/**
 * The legend of plane maps: hatched mask reasons with their cell counts, reference arrows, overlays and colour-bar
 * marks, each with a symbol drawn as on the map and a label wrapped to the legend's width (numbers stay with their
 * units: see richText.wrapText).
 */
import { arrowMark, markerShape, type MarkerShape } from './mapLayers.ts';
import { maskSwatch } from './maskStyle.ts';
import { n, text } from './svg.ts';
import { wrapText } from './richText.ts';
import { theme } from './theme.ts';

export type LegendItem =
  | { kind: 'heading'; label: string }
  | { kind: 'mask'; code: number; label: string }
  | { kind: 'arrow'; length: number; label: string; assumed?: boolean; dashed?: boolean }
  | { kind: 'rotor'; label: string }
  | { kind: 'turbine'; label: string }
  | { kind: 'ellipse'; label: string }
  | { kind: 'cbmark'; label: string }
  | { kind: 'range'; label: string }
  /** Words only, beside the symbols of the other items. */
  | { kind: 'note'; label: string }
  | { kind: 'marker'; shape: MarkerShape; label: string };

const SIZE = 10.5;
const LINE = 13;

/** Height of one item at width `w` (for laying out columns). */
export function legendItemHeight(it: LegendItem, w: number): number {
  if (it.kind === 'heading') return 18;
  if (it.kind === 'arrow') return 26 + wrapText(it.label, w, SIZE).length * LINE;
  return Math.max(18, wrapText(it.label, w - 30, SIZE).length * LINE + 6);
}

/** Removes repeated items (same kind and label). */
export function uniqueItems(all: LegendItem[]): LegendItem[] {
  const seen = new Set<string>();
  return all.filter((it) => {
    const key = JSON.stringify(it);
    return seen.has(key) ? false : (seen.add(key), true);
  });
}

/** Draws items from (x, y) down in one column of width w; returns the markup and the bottom edge. */
export function drawLegend(items: LegendItem[], x: number, y: number, w: number): { markup: string; bottom: number } {
  const out: string[] = [];
  let cy = y;
  for (const it of items) {
    out.push(drawItem(it, x, cy, w));
    cy += legendItemHeight(it, w);
  }
  return { markup: `<g class="legend">${out.join('')}</g>`, bottom: cy };
}

/** Items flowed into columns of width w side by side (for a legend under small multiples). */
export function drawLegendColumns(items: LegendItem[], x: number, y: number, w: number, columns: number, gap = 24): { markup: string; bottom: number } {
  const heights = items.map((it) => legendItemHeight(it, w));
  const total = heights.reduce((a, b) => a + b, 0);
  const target = total / columns;
  const out: string[] = [];
  let col = 0, cy = y, bottom = y, used = 0;
  items.forEach((it, k) => {
    // Start a new column when this one holds its share, never leaving a heading last in a column.
    if (col < columns - 1 && used > 0 && (used + heights[k] / 2 > target || (it.kind === 'heading' && used + heights[k] + (heights[k + 1] ?? 0) > target))) {
      col++;
      cy = y;
      used = 0;
    }
    out.push(drawItem(it, x + col * (w + gap), cy, w));
    cy += heights[k];
    used += heights[k];
    bottom = Math.max(bottom, cy);
  });
  return { markup: `<g class="legend">${out.join('')}</g>`, bottom };
}

function drawItem(it: LegendItem, x: number, cy: number, w: number): string {
  const out: string[] = [];
  if (it.kind === 'heading') return text(x, cy + 9, it.label, { size: 11, weight: 'bold' });
  if (it.kind === 'arrow') {
    const len = Math.min(it.length, w - 10);
    out.push(arrowMark(x, cy + 6, x + len, cy + 6, !!it.assumed, !!it.dashed, it.dashed ? 'arrow-cap' : it.assumed ? 'arrow-ref assumed' : 'arrow-ref'));
    wrapText(it.label, w, SIZE).forEach((l, i) => out.push(text(x, cy + 24 + i * LINE, l, { size: SIZE })));
    return out.join('');
  }
  const sx = x + 11, sy = cy + 6;
  if (it.kind === 'mask') out.push(maskSwatch(it.code, x, cy));
  else if (it.kind === 'rotor') out.push(`<circle cx="${n(sx)}" cy="${n(sy)}" r="7" fill="none" stroke="${theme.ink}" stroke-width="1.1" stroke-dasharray="4 2 1.5 2"/><circle cx="${n(sx)}" cy="${n(sy)}" r="2" fill="${theme.ink}"/>`);
  else if (it.kind === 'turbine') out.push(`<line x1="${n(x + 2)}" y1="${n(sy - 2)}" x2="${n(x + 20)}" y2="${n(sy - 2)}" stroke="${theme.ink}" stroke-width="2.4" stroke-linecap="round"/><rect x="${n(sx - 1.5)}" y="${n(sy - 2)}" width="3" height="6" fill="${theme.ink}"/>`);
  else if (it.kind === 'ellipse') out.push(`<ellipse cx="${n(sx)}" cy="${n(sy)}" rx="10" ry="6" fill="none" stroke="${theme.ink}" stroke-width="1.2" stroke-dasharray="3 2"/>`);
  else if (it.kind === 'marker') out.push(markerShape(it.shape, sx, sy, 5));
  else if (it.kind === 'cbmark') out.push(`<path d="M${n(x + 8)},${n(sy)}L${n(x + 1)},${n(sy - 4)}L${n(x + 1)},${n(sy + 4)}Z" fill="${theme.ink}"/><line x1="${n(x + 8)}" y1="${n(sy)}" x2="${n(x + 22)}" y2="${n(sy)}" stroke="${theme.ink}" stroke-width="1.4"/>`);
  else if (it.kind === 'range') out.push(`<path d="M${n(x + 4)},${n(sy - 1)}L${n(x + 10)},${n(sy - 7)}L${n(x + 16)},${n(sy - 1)}Z M${n(x + 4)},${n(sy + 1)}L${n(x + 10)},${n(sy + 7)}L${n(x + 16)},${n(sy + 1)}Z" fill="${theme.muted}"/>`);
  wrapText(it.label, w - 30, SIZE).forEach((l, i) => out.push(text(x + 30, cy + 10 + i * LINE, l, { size: SIZE })));
  return out.join('');
}
