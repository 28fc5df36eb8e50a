/**
 * Writing a declared table as CSV: the header from the declarations (units in the names), each value with the
 * precision its declaration states (precision.ts), text quoted as RFC 4180 asks (a quote, comma or line break).
 */
import type { Column, Table } from './dictionary.ts';
import { header } from './dictionary.ts';
import { decimalsForUncertainty, formatDecimals, formatSignificant } from './precision.ts';

export type Cell = string | number | boolean | null | undefined;

const K_TEXT = 0, K_INT = 1, K_DEC = 2, K_SIG = 3, K_UNC = 4;

export interface TableLayout {
  table: Table;
  /** The columns in writing order (per-instrument columns expanded at the end, instrument by instrument). */
  columns: Column[];
  headers: string[];
  kind: Uint8Array;
  /** Decimals (K_DEC), digits (K_SIG) or finest decimals (K_UNC). */
  digits: Int8Array;
  keep: Uint8Array;
  /** K_UNC: index of the uncertainty column in the row. */
  by: Int32Array;
}

/**
 * The columns of `t` for one file: those of the plane's orientation, and per-instrument columns for `instruments`.
 * @throws Error when a column's uncertainty column is not in the table (a declaration bug, caught by the tests).
 */
export function tableLayout(t: Table, opts: { orientation?: 'cross' | 'horizontal'; instruments?: readonly string[] } = {}): TableLayout {
  const plain = t.columns.filter((c) => !c.perInstrument && (!c.only || !opts.orientation || c.only === opts.orientation));
  const each = t.columns.filter((c) => c.perInstrument);
  const columns: Column[] = [...plain];
  const headers = plain.map(header);
  for (const id of opts.instruments ?? []) for (const c of each) { columns.push(c); headers.push(`${id}_${header(c)}`); }
  const n = columns.length;
  const L: TableLayout = { table: t, columns, headers, kind: new Uint8Array(n), digits: new Int8Array(n), keep: new Uint8Array(n), by: new Int32Array(n).fill(-1) };
  columns.forEach((c, k) => {
    const p = c.precision;
    if (p.kind === 'integer') L.kind[k] = K_INT;
    else if (p.kind === 'decimals') { L.kind[k] = K_DEC; L.digits[k] = p.decimals; }
    else if (p.kind === 'significant') { L.kind[k] = K_SIG; L.digits[k] = p.digits; L.keep[k] = p.keepZeros ? 1 : 0; }
    else if (p.kind === 'uncertainty') {
      L.kind[k] = K_UNC; L.digits[k] = p.finest;
      // the uncertainty of a per-instrument column is that instrument's; others are looked up among plain columns
      L.by[k] = headers.indexOf(p.by);
      if (L.by[k] < 0) throw new Error(`table ${t.id}: column ${headers[k]} is rounded by "${p.by}", which the table does not have`);
    } else L.kind[k] = K_TEXT;
  });
  return L;
}

const NEEDS_QUOTES = /[",\n\r]/;

function text(v: Cell): string {
  if (v === undefined || v === null) return '';
  if (typeof v === 'string') return NEEDS_QUOTES.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
  if (typeof v === 'boolean') return v ? '1' : '0';
  return Number.isFinite(v) ? String(v) : '';
}

/** One value as its column writes it. */
export function formatCell(L: TableLayout, k: number, v: Cell, row: readonly Cell[]): string {
  if (typeof v !== 'number') return text(v);
  const s = L.kind[k] === K_UNC ? row[L.by[k]] : NaN;
  return numberText(L, k, v, typeof s === 'number' ? s : NaN);
}

/**
 * A number as column k writes it; `s` is the value of the column whose uncertainty rounds it (uncertainty columns;
 * NaN when that value is not a number).
 */
function numberText(L: TableLayout, k: number, v: number, s: number): string {
  switch (L.kind[k]) {
    case K_INT: return Number.isFinite(v) ? String(Math.round(v)) : '';
    case K_DEC: return formatDecimals(v, L.digits[k], false);
    case K_SIG: return formatSignificant(v, L.digits[k], L.keep[k] === 1);
    case K_UNC: {
      const known = s > 0 && Number.isFinite(s);
      return formatDecimals(v, known ? decimalsForUncertainty(s, L.digits[k]) : L.digits[k], known);
    }
    default: return Number.isFinite(v) ? String(v) : '';
  }
}

/**
 * One CSV line (with its line break) from a row split in two: text[k] for the text values (null where the value is
 * a number) and nums[k] for the numbers. The same text as rowLine of the row with text[k] ?? nums[k] in column k;
 * for tables written per cell, where a mixed array would hold every number boxed (one heap object per value).
 */
export function rowLineSplit(L: TableLayout, text_: readonly (string | null)[], nums: Float64Array): string {
  const n = L.columns.length;
  if (text_.length !== n || nums.length !== n) throw new Error(`table ${L.table.id}: ${nums.length} values for ${n} columns`);
  let out = '';
  for (let k = 0; k < n; k++) {
    if (k > 0) out += ',';
    const t = text_[k];
    if (t !== null) out += text(t);
    else {
      const by = L.kind[k] === K_UNC ? L.by[k] : -1;
      out += numberText(L, k, nums[k], by >= 0 && text_[by] === null ? nums[by] : NaN);
    }
  }
  return out + '\n';
}

export function headerLine(L: TableLayout): string {
  return L.headers.map((h) => text(h)).join(',') + '\n';
}

/** One CSV line (with its line break) from values in column order. */
export function rowLine(L: TableLayout, row: readonly Cell[]): string {
  if (row.length !== L.columns.length) throw new Error(`table ${L.table.id}: ${row.length} values for ${L.columns.length} columns`);
  let out = '';
  for (let k = 0; k < row.length; k++) {
    if (k > 0) out += ',';
    out += formatCell(L, k, row[k], row);
  }
  return out + '\n';
}
