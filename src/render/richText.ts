/**
 * Figure text with real subscripts and superscripts. A label is written with a small markup: `_{...}` for a
 * subscript and `^{...}` for a superscript (`u/u_{∞}`, `z_{hub}`, `σ_{y}`, `Δy_{c}`, `m^{2}`); everything else is
 * literal text (a lone `_` stays an underscore). In SVG the pieces become <tspan> elements at 70 % size shifted
 * by `dy` (which librsvg, and so the PNG, draws the same as a browser); `plainText` gives the same label for places
 * without markup (titles of the SVG document, CSV, the terminal).
 *
 * Widths are estimated from the advance widths of DejaVu Sans (glyphWidths.ts), the one typeface of the figures,
 * so that layouts can keep labels apart; kerning is ignored (DejaVu's kerning changes a label by a few per cent).
 */
import { esc } from './escape.ts';
import { GLYPH_WIDTHS } from './glyphWidths.ts';

export type Shift = 'base' | 'sub' | 'sup';

export interface Span {
  text: string;
  shift: Shift;
}

/** Size of sub- and superscripts relative to the text around them. */
export const SCRIPT_SCALE = 0.7;
/** Baseline shifts in em of the surrounding text (positive = down, as SVG's dy). */
const SHIFT_EM: Record<Shift, number> = { base: 0, sub: 0.28, sup: -0.38 };

/** Splits a label into runs of base text, subscripts and superscripts. Unclosed braces are taken literally. */
export function spans(label: string): Span[] {
  const out: Span[] = [];
  let base = '';
  let i = 0;
  while (i < label.length) {
    const c = label[i];
    if ((c === '_' || c === '^') && label[i + 1] === '{') {
      const end = label.indexOf('}', i + 2);
      if (end > i + 1) {
        if (base) out.push({ text: base, shift: 'base' });
        base = '';
        out.push({ text: label.slice(i + 2, end), shift: c === '_' ? 'sub' : 'sup' });
        i = end + 1;
        continue;
      }
    }
    base += c;
    i++;
  }
  if (base) out.push({ text: base, shift: 'base' });
  return out;
}

/** The label without markup: subscripts joined with an underscore, superscripts with a caret ("z_hub", "m^2"). */
export function plainText(label: string): string {
  return spans(label).map((s) => (s.shift === 'base' ? s.text : `${s.shift === 'sub' ? '_' : '^'}${s.text}`)).join('');
}

/** The label as a reader sees it, without markers ("zhub"), for searching text in tests and documents. */
export function visibleText(label: string): string {
  return spans(label).map((s) => s.text).join('');
}

/** SVG content for a <text> element of font size `size`: escaped text and tspans for the scripts. */
export function richSvg(label: string, size: number): string {
  const parts = spans(label);
  if (parts.length === 1 && parts[0].shift === 'base') return esc(parts[0].text);
  let out = '';
  let offset = 0; // current baseline shift, user units
  for (const p of parts) {
    const target = SHIFT_EM[p.shift] * size;
    const dy = target - offset;
    offset = target;
    const attrs = `${dy ? ` dy="${round(dy)}"` : ''}${p.shift === 'base' ? '' : ` font-size="${round(size * SCRIPT_SCALE)}"`}`;
    out += attrs ? `<tspan${attrs}>${esc(p.text)}</tspan>` : esc(p.text);
  }
  return out;
}

/** Estimated advance width of a label in user units at font size `size` (DejaVu Sans metrics). */
export function textWidth(label: string, size: number, bold = false): number {
  const table = bold ? GLYPH_WIDTHS.bold : GLYPH_WIDTHS.regular;
  let w = 0;
  for (const p of spans(label)) {
    let em = 0;
    for (const ch of p.text) em += table[ch] ?? 0.62;
    w += em * size * (p.shift === 'base' ? 1 : SCRIPT_SCALE);
  }
  return w;
}

/**
 * Splits a label into lines no wider than `maxWidth` user units at font size `size`, breaking only at ordinary
 * spaces: a no-break space (U+00A0) or narrow no-break space (U+202F) keeps a number with its unit, and script
 * markup is never split. A single word wider than the line stays whole.
 */
export function wrapText(label: string, maxWidth: number, size: number, bold = false): string[] {
  const words = splitWords(label).flatMap((w) => (textWidth(w, size, bold) > maxWidth ? splitLongWord(w, maxWidth, size, bold) : [w]));
  const lines: string[] = [];
  let cur = '';
  for (const w of words) {
    const next = cur ? `${cur} ${w}` : w;
    if (cur && textWidth(next, size, bold) > maxWidth) {
      lines.push(cur);
      cur = w;
    } else cur = next;
  }
  if (cur) lines.push(cur);
  return lines.length ? lines : [''];
}

/**
 * A word wider than the line (a time span "09:01:30\u201309:09:30" over a narrow panel) cut after its dashes, slashes
 * or commas, as few pieces as fit; a word without such a place stays whole (and overflows, as before).
 */
function splitLongWord(word: string, maxWidth: number, size: number, bold: boolean): string[] {
  if (word.includes('_{') || word.includes('^{')) return [word];
  const pieces: string[] = [];
  let start = 0, lastBreak = -1;
  for (let i = 0; i < word.length; i++) {
    // not a leading sign: a break place follows a character of the word that is not a (no-break) space
    if ('\u2013-/,'.includes(word[i]) && i > 0 && i < word.length - 1 && !/\s/.test(word[i - 1])) {
      if (lastBreak >= start && textWidth(word.slice(start, i + 1), size, bold) > maxWidth) {
        pieces.push(word.slice(start, lastBreak + 1));
        start = lastBreak + 1;
      }
      lastBreak = i;
    }
  }
  if (lastBreak >= start && textWidth(word.slice(start), size, bold) > maxWidth) {
    pieces.push(word.slice(start, lastBreak + 1));
    start = lastBreak + 1;
  }
  pieces.push(word.slice(start));
  return pieces;
}

/** Words separated by ordinary spaces (tabs, newlines), not inside `_{...}` or `^{...}`. */
function splitWords(label: string): string[] {
  const out: string[] = [];
  let cur = '';
  let depth = 0;
  for (let i = 0; i < label.length; i++) {
    const c = label[i];
    if ((c === '_' || c === '^') && label[i + 1] === '{') depth++;
    else if (c === '}' && depth > 0) depth--;
    if (depth === 0 && (c === ' ' || c === '\t' || c === '\n' || c === '\r')) {
      if (cur) out.push(cur);
      cur = '';
    } else cur += c;
  }
  if (cur) out.push(cur);
  return out;
}

function round(v: number): string {
  return String(Math.round(v * 100) / 100);
}
