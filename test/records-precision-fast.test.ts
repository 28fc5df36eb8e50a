/**
 * The number formatting of records/precision.ts takes integer fast paths; its text must be that of the plain
 * definitions, which are ECMAScript's own conversions (ECMA-262, Number.prototype.toFixed, toPrecision and
 * Number::toString): those are the outside reference here, written out below as the rule in precision.ts states it.
 */
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../src/math/random.ts';
import { decimalsForUncertainty, formatDecimals, formatSignificant } from '../src/records/precision.ts';

function plainDecimals(v: number, d: number, keep: boolean): string {
  if (!Number.isFinite(v)) return '';
  if (d <= 0) {
    const step = 10 ** -d;
    const r = Math.round(v / step) * step;
    return String(r === 0 ? 0 : r);
  }
  const r = Math.round(v * 10 ** d) / 10 ** d;
  if (r === 0) return keep ? (0).toFixed(d) : '0';
  return keep ? r.toFixed(d) : String(r);
}
function plainSignificant(v: number, n: number, keep: boolean): string {
  if (!Number.isFinite(v)) return '';
  if (v === 0) return '0';
  const t = v.toPrecision(n);
  return keep ? t : String(Number(t));
}
function plainDecimalsForUncertainty(s: number, finest: number): number {
  if (!(s > 0) || !Number.isFinite(s)) return finest;
  const s2 = Number(s.toPrecision(2));
  return Math.min(1 - Math.floor(Math.log10(s2)), finest);
}

/** Values of every size and sign, with exact ties (k + 1/2 at some place), powers of ten and their neighbours. */
function values(count: number): number[] {
  const r = mulberry32(101);
  const out: number[] = [0, -0, NaN, Infinity, -Infinity, 0.5, 1.5, 2.5, 0.125, 0.0996, 0.995, 9.995, 99.95, 1e-7, 1e-6, 9.99e-7, 1e15, 1e21];
  for (let k = -12; k <= 16; k++) { const p = 10 ** k; out.push(p, -p, p * (1 + 1e-15), p * (1 - 1e-16), 5 * p, 2.5 * p, 0.95 * p, 0.9995 * p); }
  for (let i = 0; i < count; i++) {
    const mag = 10 ** (Math.floor(r() * 20) - 10);
    const x = r() * mag * (r() < 0.3 ? -1 : 1);
    out.push(x);
    if (i % 4 === 0) {
      // a tie in decimal (an integer plus one half at a random place), as far as a double holds one
      const place = 10 ** (Math.floor(r() * 8) - 4);
      out.push((Math.floor(r() * 10000) + 0.5) * place);
    }
    if (i % 8 === 0) out.push(Math.round(r() * 1e6) / 1e3); // values already on a decimal grid
  }
  return out;
}

describe('fast number formatting gives the text of the plain conversions', () => {
  const vs = values(60000);
  it('formatDecimals, d = -3 .. 9, zeros kept or dropped: identical strings', () => {
    for (const v of vs) for (let d = -3; d <= 9; d++) for (const keep of [false, true]) {
      const a = formatDecimals(v, d, keep), b = plainDecimals(v, d, keep);
      if (a !== b) expect(`${v} d=${d} keep=${keep}: ${a}`).toBe(`${v} d=${d} keep=${keep}: ${b}`); // exact text
    }
  });
  it('formatSignificant, 1 .. 10 digits, zeros kept or dropped: identical strings', () => {
    for (const v of vs) for (let n = 1; n <= 10; n++) for (const keep of [false, true]) {
      const a = formatSignificant(v, n, keep), b = plainSignificant(v, n, keep);
      if (a !== b) expect(`${v} n=${n} keep=${keep}: ${a}`).toBe(`${v} n=${n} keep=${keep}: ${b}`);
    }
  });
  it('decimalsForUncertainty: identical places', () => {
    for (const v of vs) for (const finest of [2, 4, 9]) {
      const a = decimalsForUncertainty(v, finest), b = plainDecimalsForUncertainty(v, finest);
      if (a !== b) expect(`${v} finest=${finest}: ${a}`).toBe(`${v} finest=${finest}: ${b}`); // exact integers
    }
  });
});

describe('rowLineSplit (numbers apart from text) writes what rowLine writes', () => {
  it('on the field table layout with random numbers, NaN, empty and quoted text', async () => {
    const { tableLayout, rowLine, rowLineSplit } = await import('../src/records/tableText.ts');
    const { fieldTable } = await import('../src/records/tables/fields.ts');
    const L = tableLayout(fieldTable, { orientation: 'cross' });
    const r = mulberry32(9);
    const textCols = new Set([0, 1, 2, 20, 21, 22]);
    for (let t = 0; t < 3000; t++) {
      const nums = new Float64Array(L.columns.length), text: (string | null)[] = new Array(L.columns.length).fill(null);
      const mixed: (string | number)[] = [];
      for (let k = 0; k < L.columns.length; k++) {
        if (textCols.has(k)) {
          const s = r() < 0.2 ? 'a "quoted", text' : r() < 0.5 ? '' : 'x3D';
          text[k] = s; mixed.push(s);
        } else {
          const v = r() < 0.15 ? NaN : r() < 0.05 ? 0 : (r() - 0.3) * 10 ** (Math.floor(r() * 8) - 4);
          nums[k] = v; mixed.push(v);
        }
      }
      expect(rowLineSplit(L, text, nums)).toBe(rowLine(L, mixed)); // exact text
    }
  });
});
