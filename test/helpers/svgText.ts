/**
 * Text of an SVG figure as the tests see it: every <text> element with its words and an estimated bounding box in
 * figure units. The box uses the advance widths of DejaVu Sans (src/render/glyphWidths.ts, read from the font
 * file; the browser test checks these estimates against chromium's own measurement), the anchor, sub/superscript
 * spans and a rotation by +-90 degrees. Vertical extent: DejaVu Sans ascends about 0.76 em above the baseline
 * (cap height 0.73 em) and descends 0.24 em below it (the font's hhea metrics, from memory).
 */
import { GLYPH_WIDTHS } from '../../src/render/glyphWidths.ts';

export interface SvgText {
  text: string;
  x: number;
  y: number;
  size: number;
  rotate: number;
  cls: string;
  /** Box [x0, y0, x1, y1] in figure units. */
  box: [number, number, number, number];
}

const ENT: Record<string, string> = { '&amp;': '&', '&lt;': '<', '&gt;': '>', '&quot;': '"', '&#39;': "'" };
const unescape = (s: string) => s.replace(/&(amp|lt|gt|quot|#39);/g, (m) => ENT[m]);
const num = (tag: string, name: string) => {
  const m = new RegExp(`\\s${name}="([-0-9.]+)"`).exec(tag);
  return m ? Number(m[1]) : NaN;
};

function widthOf(s: string, size: number, bold: boolean): number {
  const t = bold ? GLYPH_WIDTHS.bold : GLYPH_WIDTHS.regular;
  let w = 0;
  for (const ch of s) w += t[ch] ?? 0.62;
  return w * size;
}

export function svgTexts(svg: string): SvgText[] {
  const out: SvgText[] = [];
  for (const m of svg.matchAll(/<text([^>]*)>([\s\S]*?)<\/text>/g)) {
    const attrs = m[1], inner = m[2];
    const size = num(attrs, 'font-size') || 11;
    const bold = /font-weight="bold"/.test(attrs);
    const x = num(attrs, 'x'), y0 = num(attrs, 'y');
    const dyEm = /\sdy="([-0-9.]+)em"/.exec(attrs);
    const y = y0 + (dyEm ? Number(dyEm[1]) * size : 0);
    const anchor = /text-anchor="(middle|end)"/.exec(attrs)?.[1] ?? 'start';
    const rot = /transform="rotate\(([-0-9.]+)/.exec(attrs);
    const cls = /class="([^"]*)"/.exec(attrs)?.[1] ?? '';
    // Pieces: plain text at the element's size, tspans at theirs with their baseline shift.
    // Each piece spans from 0.76 em above to 0.24 em below its own (shifted) baseline at its own size.
    let w = 0, text = '', top = Infinity, bottom = -Infinity, shift = 0;
    for (const p of inner.matchAll(/<tspan([^>]*)>([\s\S]*?)<\/tspan>|([^<]+)/g)) {
      let t: string, ts = size;
      if (p[3] !== undefined) t = unescape(p[3]);
      else {
        ts = num(p[1], 'font-size') || size;
        shift += num(p[1], 'dy') || 0;
        t = unescape(p[2]);
      }
      text += t;
      w += widthOf(t, ts, bold);
      top = Math.min(top, shift - 0.76 * ts);
      bottom = Math.max(bottom, shift + 0.24 * ts);
    }
    if (!Number.isFinite(top)) (top = -0.76 * size), (bottom = 0.24 * size);
    const xa = anchor === 'middle' ? x - w / 2 : anchor === 'end' ? x - w : x;
    let box: [number, number, number, number] = [xa, y + top, xa + w, y + bottom];
    const angle = rot ? Number(rot[1]) : 0;
    if (Math.abs(Math.abs(angle) - 90) < 1e-9) {
      // Rotation about (x, y0) (the element's own x, y): a point (px, py) goes to (x - (py - y0) sin a ..., ...).
      const s = Math.sign(angle);
      const corners = [[box[0], box[1]], [box[2], box[1]], [box[0], box[3]], [box[2], box[3]]].map(([px, py]) => [x - s * (py - y0), y0 + s * (px - x)]);
      box = [Math.min(...corners.map((c) => c[0])), Math.min(...corners.map((c) => c[1])), Math.max(...corners.map((c) => c[0])), Math.max(...corners.map((c) => c[1]))];
    }
    out.push({ text, x, y, size, rotate: angle, cls, box });
  }
  return out;
}

/** Pairs of texts whose boxes overlap by more than `tol` units in both directions. */
export function overlaps(texts: SvgText[], tol = 0.5): [SvgText, SvgText][] {
  const out: [SvgText, SvgText][] = [];
  for (let i = 0; i < texts.length; i++) {
    for (let j = i + 1; j < texts.length; j++) {
      const a = texts[i].box, b = texts[j].box;
      const ox = Math.min(a[2], b[2]) - Math.max(a[0], b[0]);
      const oy = Math.min(a[3], b[3]) - Math.max(a[1], b[1]);
      if (ox > tol && oy > tol && texts[i].text.trim() && texts[j].text.trim()) out.push([texts[i], texts[j]]);
    }
  }
  return out;
}

/** The figure's size in user units (viewBox). */
export function viewBox(svg: string): [number, number] {
  const m = /viewBox="0 0 ([0-9.]+) ([0-9.]+)"/.exec(svg)!;
  return [Number(m[1]), Number(m[2])];
}
