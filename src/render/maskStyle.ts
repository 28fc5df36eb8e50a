/**
 * How masked cells look: a neutral grey with a hatch that differs by reason, so the reason can be read from the
 * image with the legend. Code 255 is used for cells that are empty without a stated reason.
 *
 * The hatch is drawn as explicit line segments clipped to each run of masked cells (not as an SVG <pattern>):
 * librsvg renders a pattern fill several times slower than plain strokes, and explicit lines can be checked in
 * the SVG. Lines sit at multiples of the spacing in figure units, so runs next to each other continue one hatch.
 */
import { n } from './svg.ts';
import { theme } from './theme.ts';

export const NO_VALUE_CODE = 255;

export type Hatch = 'none' | 'diag' | 'antidiag' | 'cross' | 'horizontal' | 'vertical' | 'dots';

const HATCH_BY_CODE: Record<number, Hatch> = { 1: 'none', 2: 'diag', 3: 'antidiag', 4: 'cross', 5: 'dots', 6: 'horizontal' };

/** Spacing of hatch lines, figure units. */
export const HATCH_SPACING = 6;

export function hatchOf(code: number): Hatch {
  return code === NO_VALUE_CODE ? 'none' : (HATCH_BY_CODE[code] ?? 'vertical');
}

export function maskFill(code: number): string {
  return code === NO_VALUE_CODE ? theme.faint : theme.masked;
}

/**
 * Path data of the hatch of one rectangle [x0, x1] x [y0, y1] (figure units, y down): "/" lines x + y = c,
 * "\" lines x - y = c, horizontal y = c or vertical x = c for c at multiples of `s`; dots as tiny squares.
 */
export function hatchPath(kind: Hatch, x0: number, y0: number, x1: number, y1: number, s = HATCH_SPACING): string {
  let d = '';
  const seg = (ax: number, ay: number, bx: number, by: number) => (d += `M${n(ax)},${n(ay)}L${n(bx)},${n(by)}`);
  if (kind === 'diag' || kind === 'cross') {
    for (let c = Math.ceil((x0 + y0) / s) * s; c <= x1 + y1; c += s) {
      const xa = Math.max(x0, c - y1), xb = Math.min(x1, c - y0);
      if (xb - xa > 0.05) seg(xa, c - xa, xb, c - xb);
    }
  }
  if (kind === 'antidiag' || kind === 'cross') {
    for (let c = Math.ceil((x0 - y1) / s) * s; c <= x1 - y0; c += s) {
      const xa = Math.max(x0, c + y0), xb = Math.min(x1, c + y1);
      if (xb - xa > 0.05) seg(xa, xa - c, xb, xb - c);
    }
  }
  if (kind === 'horizontal') for (let c = Math.ceil(y0 / s) * s + s / 2; c < y1; c += s) if (c > y0) seg(x0, c, x1, c);
  if (kind === 'vertical') for (let c = Math.ceil(x0 / s) * s + s / 2; c < x1; c += s) if (c > x0) seg(c, y0, c, y1);
  if (kind === 'dots') {
    for (let cy = Math.ceil(y0 / s) * s + s / 2; cy < y1; cy += s) {
      for (let cx = Math.ceil(x0 / s) * s + s / 2; cx < x1; cx += s) if (cy > y0 && cx > x0) d += `M${n(cx - 0.7)},${n(cy - 0.7)}h1.4v1.4h-1.4Z`;
    }
  }
  return d;
}

/** Stroke attributes of hatch lines (dots are filled squares drawn with the same path). */
export function hatchStyle(kind: Hatch): string {
  return kind === 'dots' ? `fill="${theme.maskedInk}" stroke="none"` : `fill="none" stroke="${theme.maskedInk}" stroke-width="0.9"`;
}

/** A legend swatch (22 x 12 units) drawn like the map's masked cells of this code. */
export function maskSwatch(code: number, x: number, y: number): string {
  const kind = hatchOf(code);
  const h = hatchPath(kind, x, y, x + 22, y + 12);
  return `<rect class="swatch m${code}" x="${n(x)}" y="${n(y)}" width="22" height="12" fill="${maskFill(code)}" stroke="${theme.maskedInk}" stroke-width="0.5"/>` +
    (h ? `<path d="${h}" ${hatchStyle(kind)}/>` : '');
}
