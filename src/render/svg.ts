/**
 * Small SVG building blocks shared by the map and plot renderers. Figures are laid out in user units; the document
 * declares its size in inches (theme.unitsPerInch units per inch), so a browser shows it at print size and sharp
 * renders it at any density (dots per inch).
 */
import { esc } from './escape.ts';
import { plainText, richSvg, textWidth, wrapText } from './richText.ts';
import { theme } from './theme.ts';

/** A coordinate for markup: at most two decimals, no trailing zeros. */
export function n(v: number): string {
  if (!Number.isFinite(v)) return '0';
  const r = Math.round(v * 100) / 100;
  return String(Object.is(r, -0) ? 0 : r);
}

/** A complete standalone SVG document with a paper background. */
export function svgDocument(width: number, height: number, title: string, body: string, defs = ''): string {
  const w = width / theme.unitsPerInch, h = height / theme.unitsPerInch;
  return (
    `<?xml version="1.0" encoding="UTF-8"?>\n` +
    `<svg xmlns="http://www.w3.org/2000/svg" width="${w.toFixed(3)}in" height="${h.toFixed(3)}in" ` +
    `viewBox="0 0 ${n(width)} ${n(height)}" font-family="${esc(theme.font)}" fill="${theme.ink}">\n` +
    `<title>${esc(plainText(title))}</title>\n` +
    (defs ? `<defs>${defs}</defs>\n` : '') +
    `<rect x="0" y="0" width="${n(width)}" height="${n(height)}" fill="${theme.paper}"/>\n` +
    body +
    `</svg>\n`
  );
}

export interface TextOptions {
  size?: number;
  anchor?: 'start' | 'middle' | 'end';
  weight?: 'normal' | 'bold';
  fill?: string;
  rotate?: number;
  cls?: string;
  /** Vertical alignment via dy in em: 0.35 centres digits on y. */
  dy?: number;
}

/** A <text> element. `content` may carry sub- and superscript markup (`z_{hub}`, see richText.ts). */
export function text(x: number, y: number, content: string, o: TextOptions = {}): string {
  const size = o.size ?? 11;
  const attrs = [
    `x="${n(x)}"`,
    `y="${n(y)}"`,
    `font-size="${size}"`,
    o.anchor && o.anchor !== 'start' ? `text-anchor="${o.anchor}"` : '',
    o.weight === 'bold' ? 'font-weight="bold"' : '',
    o.fill ? `fill="${o.fill}"` : '',
    o.rotate ? `transform="rotate(${o.rotate} ${n(x)} ${n(y)})"` : '',
    o.cls ? `class="${o.cls}"` : '',
    o.dy ? `dy="${o.dy}em"` : '',
  ].filter(Boolean);
  const inner = richSvg(content, size);
  // librsvg drops spaces at the edges of a <tspan> (even no-break spaces) unless white space is preserved.
  if (inner.includes('<tspan')) attrs.push('xml:space="preserve"');
  return `<text ${attrs.join(' ')}>${inner}</text>\n`;
}

/** Splits a label into lines at most `width` user units wide at font size `size` (see richText.wrapText). */
export function wrap(label: string, width: number, size = 11, bold = false): string[] {
  return wrapText(label, width, size, bold);
}

/** A linear map from [d0, d1] to [r0, r1]. */
export function linear(d0: number, d1: number, r0: number, r1: number): (v: number) => number {
  const k = d1 === d0 ? 0 : (r1 - r0) / (d1 - d0);
  return (v) => r0 + (v - d0) * k;
}

/** Arrow from (x1, y1) to (x2, y2) as a shaft line (class "arrow" + extra) and a filled head. */
export function arrow(x1: number, y1: number, x2: number, y2: number, colour: string, cls = 'arrow', width = 1.1, dash?: string): string {
  const dx = x2 - x1, dy = y2 - y1;
  const len = Math.hypot(dx, dy);
  let s = `<line class="${cls}" x1="${n(x1)}" y1="${n(y1)}" x2="${n(x2)}" y2="${n(y2)}" stroke="${colour}" stroke-width="${width}" stroke-linecap="round"${dash ? ` stroke-dasharray="${dash}"` : ''}/>`;
  if (len >= 2) {
    const head = Math.min(6, Math.max(2.5, len * 0.3));
    const ux = dx / len, uy = dy / len;
    const bx = x2 - ux * head, by = y2 - uy * head;
    const hw = head * 0.45;
    s += `<path d="M${n(x2)},${n(y2)}L${n(bx - uy * hw)},${n(by + ux * hw)}L${n(bx + uy * hw)},${n(by - ux * hw)}Z" fill="${colour}"/>`;
  }
  return s + '\n';
}

/**
 * Lines of `label` within `width`: wrapped at spaces (and after dashes in long words, wrapText), and a word still
 * wider than the line (a long id without such places) cut where it must, so that nothing runs off the figure.
 */
export function wrapHard(label: string, width: number, size: number, bold = false): string[] {
  const out: string[] = [];
  for (const line of wrapText(label, width, size, bold)) {
    if (textWidth(line, size, bold) <= width || line.includes('_{') || line.includes('^{')) {
      out.push(line);
      continue;
    }
    let rest = line;
    while (rest && textWidth(rest, size, bold) > width) {
      let k = rest.length - 1;
      while (k > 1 && textWidth(rest.slice(0, k), size, bold) > width) k--;
      out.push(rest.slice(0, k));
      rest = rest.slice(k);
    }
    if (rest) out.push(rest);
  }
  return out;
}

/**
 * A figure's title (bold, 16 units, at most three lines) and subtitle (muted, 11.5 units) from the top-left corner,
 * both wrapped within `width`. `extra` is the height the title takes beyond its first line, to add to the layout's
 * top; `subLines` the subtitle's lines.
 */
export function figureHead(x: number, width: number, title: string, subtitle?: string): { markup: string; extra: number; subLines: string[] } {
  const titleLines = wrapHard(title, width, 16, true).slice(0, 3);
  const subLines = subtitle ? wrapHard(subtitle, width, 11.5) : [];
  const extra = (titleLines.length - 1) * 20;
  const markup = titleLines.map((l, i) => text(x, 26 + i * 20, l, { size: 16, weight: 'bold', cls: 'title' })).join('') +
    subLines.map((l, i) => text(x, 45 + extra + i * 15, l, { size: 11.5, fill: theme.muted, cls: 'subtitle' })).join('');
  return { markup, extra, subLines };
}
