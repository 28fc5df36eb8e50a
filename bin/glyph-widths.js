#!/usr/bin/env node
// Development tool: regenerates src/render/glyphWidths.ts, the advance widths of the characters our figures use,
// read from the installed DejaVu Sans fonts (regular and bold; Debian package fonts-dejavu-core). The figures
// estimate text extents from this table to lay out labels without overlap; the browser test checks the estimates
// against chromium's own text measurement. Usage: node bin/glyph-widths.js [--check]
import { readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const FONTS = { regular: '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf', bold: '/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf' };
const EXTRA = '\u00a0\u00b0\u00b1\u00b2\u00b3\u00b5\u00b7\u00d7\u00e1\u00e9\u00f3\u00f6\u00f8\u00fc\u0107\u0394\u03a3\u03b1\u03b2\u03b3\u03b4\u03b5\u03b8\u03ba\u03bb\u03bc\u03c0\u03c3\u03c6\u03c9\u1d40\u2009\u2013\u2014\u2018\u2019\u201c\u201d\u2026\u202f\u207b\u00b9\u2190\u2191\u2192\u2193\u2212\u221a\u221e\u2248\u2264\u2265\u25b2\u25bc\u25c7\u2715';

/** Advance widths in em of the given characters, from the font's cmap (format 4) and hmtx tables. */
function widths(path, chars) {
  const b = readFileSync(path);
  const tables = {};
  const n = b.readUInt16BE(4);
  for (let i = 0; i < n; i++) {
    const o = 12 + 16 * i;
    tables[b.toString('latin1', o, o + 4)] = b.readUInt32BE(o + 8);
  }
  const unitsPerEm = b.readUInt16BE(tables.head + 18);
  const nMetrics = b.readUInt16BE(tables.hhea + 34);
  const advance = (gid) => b.readUInt16BE(tables.hmtx + 4 * Math.min(gid, nMetrics - 1));
  // cmap: the Unicode BMP subtable (platform 3 encoding 1, or platform 0), format 4.
  const cmap = tables.cmap;
  let sub = -1;
  for (let i = 0; i < b.readUInt16BE(cmap + 2); i++) {
    const p = b.readUInt16BE(cmap + 4 + 8 * i), e = b.readUInt16BE(cmap + 6 + 8 * i), off = b.readUInt32BE(cmap + 8 + 8 * i);
    if (b.readUInt16BE(cmap + off) === 4 && ((p === 3 && e === 1) || p === 0)) sub = cmap + off;
  }
  if (sub < 0) throw new Error(`${path}: no format-4 cmap`);
  const segX2 = b.readUInt16BE(sub + 6);
  const ends = sub + 14, starts = ends + segX2 + 2, deltas = starts + segX2, ranges = deltas + segX2;
  const glyph = (code) => {
    for (let s = 0; s < segX2 / 2; s++) {
      if (b.readUInt16BE(ends + 2 * s) < code) continue;
      const start = b.readUInt16BE(starts + 2 * s);
      if (start > code) return 0;
      const ro = b.readUInt16BE(ranges + 2 * s), delta = b.readInt16BE(deltas + 2 * s);
      if (ro === 0) return (code + delta) & 0xffff;
      const g = b.readUInt16BE(ranges + 2 * s + ro + 2 * (code - start));
      return g === 0 ? 0 : (g + delta) & 0xffff;
    }
    return 0;
  };
  const out = {};
  for (const ch of chars) {
    const g = glyph(ch.codePointAt(0));
    if (g) out[ch] = Math.round((advance(g) / unitsPerEm) * 10000) / 10000;
  }
  return out;
}

const chars = [...Array.from({ length: 95 }, (_, k) => String.fromCharCode(32 + k)), ...EXTRA];
const table = Object.fromEntries(Object.entries(FONTS).map(([k, p]) => [k, widths(p, chars)]));
const lit = (o) => `{\n${Object.entries(o).map(([c, w]) => `    ${JSON.stringify(c)}: ${w},`).join('\n')}\n  }`;
const text = `/**
 * Advance widths (em) of the characters the figures use, in DejaVu Sans regular and bold, read from the font files by
 * bin/glyph-widths.js (generated: do not edit by hand). Used to estimate text extents for layout.
 */
export const GLYPH_WIDTHS: { regular: Record<string, number>; bold: Record<string, number> } = {
  regular: ${lit(table.regular)},
  bold: ${lit(table.bold)},
};
`;
const target = join(dirname(fileURLToPath(import.meta.url)), '..', 'src', 'render', 'glyphWidths.ts');
if (process.argv.includes('--check')) {
  process.exit(readFileSync(target, 'utf8') === text ? 0 : 1);
}
writeFileSync(target, text);
console.log(`wrote ${target}: ${Object.keys(table.regular).length} regular, ${Object.keys(table.bold).length} bold`);
