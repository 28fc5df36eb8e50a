/**
 * The field table: one CSV per plane and window, one row per cell, written by `writeFieldTable` and read back by
 * `readFieldTable` (for `wakeplane render` and the images of single windows). Its columns, units and precision are
 * declared in records/tables/fields.ts (the data dictionary); writer and reader both take them from there, in the
 * order written below, so a renamed column changes in one place.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { PlaneSpec } from '../campaign/types.ts';
import { InputError } from '../errors.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { isoTime, parseTime } from '../io/time.ts';
import { BUDGET_COLUMNS, fieldTable } from '../records/tables/fields.ts';
import { emptyFieldBudget } from '../retrieval/budget.ts';
import { budgetArrays } from './budgetValues.ts';
import { headerLine, rowLineSplit, tableLayout, type TableLayout } from '../records/tableText.ts';
import { W_ZERO_ASSUMPTION } from '../retrieval/settings.ts';
import { MaskReason, maskReasonName, type FieldResult, type WindowInfo } from '../retrieval/types.ts';

export function fieldTableName(f: FieldResult, ordinal: number): string {
  if (f.window.kind === 'ensemble') return join('fields', `${f.planeId}_bin${String(ordinal).padStart(3, '0')}.csv`);
  const stamp = isoTime(f.window.start_s).replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  return join('fields', `${f.planeId}_w${String(ordinal).padStart(3, '0')}_${stamp}.csv`);
}

const layouts = { cross: tableLayout(fieldTable, { orientation: 'cross' }), horizontal: tableLayout(fieldTable, { orientation: 'horizontal' }) };
/** Their header lines, made once. */
const headers = { cross: headerLine(layouts.cross), horizontal: headerLine(layouts.horizontal) };

/** Positions of the values fieldTableCsv writes (the reader finds each by its header). */
const C = {
  plane: 0, window_start: 1, window_end: 2, y: 3, second: 4, yD: 5, secondD: 6, u: 7, v: 8, w: 9, su: 10, sv: 11, sw: 12,
  dopU: 13, dopV: 14, dopW: 15, cond: 16, minCrossing: 17, samples: 18, instruments: 19, maskU: 20, maskV: 21, maskW: 22,
  masked: 23, direction: 24, yEff: 25, secondEff: 26,
} as const;

/** The field table's text. */
export function fieldTableCsv(f: FieldResult, diameter_m: number): string {
  const L: TableLayout = layouts[f.orientation];
  const parts: string[] = [headers[f.orientation]];
  const ws = isoTime(f.window.start_s), we = isoTime(f.window.end_s);
  const n = f.grid.ny * f.grid.nz;
  const extra = budgetArrays(f);
  // One row for every cell, filled in place (no array per cell), its numbers in a Float64Array (a mixed array would
  // box each of them) and its text apart; the values in column order.
  const ncol = C.secondEff + 1 + extra.length;
  const row = new Float64Array(ncol), text = new Array<string | null>(ncol).fill(null);
  text[C.plane] = f.planeId; text[C.window_start] = ws; text[C.window_end] = we; row[C.direction] = f.direction_deg;
  const g = f.grid;
  for (let c = 0; c < n; c++) {
    const iy = c % g.ny; // cellCentre, without its pair
    const y = g.y0 + iy * g.dy, z = g.z0 + ((c - iy) / g.ny) * g.dz;
    const masked = f.maskU[c] !== 0 || f.maskV[c] !== 0 || f.maskW[c] !== 0;
    row[C.y] = y; row[C.second] = z; row[C.yD] = y / diameter_m; row[C.secondD] = z / diameter_m;
    row[C.u] = f.u[c]; row[C.v] = f.v[c]; row[C.w] = f.w[c]; row[C.su] = f.su[c]; row[C.sv] = f.sv[c]; row[C.sw] = f.sw[c];
    row[C.dopU] = f.dopU[c]; row[C.dopV] = f.dopV[c]; row[C.dopW] = f.dopW[c]; row[C.cond] = f.cond[c];
    row[C.minCrossing] = f.minCrossing_deg[c]; row[C.samples] = f.samples[c]; row[C.instruments] = f.instruments[c];
    text[C.maskU] = maskReasonName[f.maskU[c]]; text[C.maskV] = maskReasonName[f.maskV[c]]; text[C.maskW] = maskReasonName[f.maskW[c]];
    row[C.masked] = masked ? 1 : 0; row[C.yEff] = f.yEff[c]; row[C.secondEff] = f.zEff[c];
    for (let k = 0; k < extra.length; k++) row[C.secondEff + 1 + k] = extra[k][c];
    parts.push(rowLineSplit(L, text, row));
  }
  return parts.join('');
}

/**
 * Writes one table (temporary file, then rename). Built in memory and written synchronously: a table holds one row
 * per cell (tens of kilobytes for a typical grid), and a synchronous write to the page cache costs far less than
 * the round trips of a stream, during which the ingest would stall (measured 5 ms per table with a stream).
 */
export async function writeFieldTable(f: FieldResult, path: string, diameter_m: number): Promise<void> {
  writeFileAtomic(path, fieldTableCsv(f, diameter_m));
}

const MASK_CODE: Record<string, number> = Object.fromEntries(Object.entries(maskReasonName).map(([code, name]) => [name, Number(code)]));

/** The field table's column headers in writing order for a plane orientation (from the data dictionary). */
export function fieldTableColumns(orientation: 'cross' | 'horizontal'): string[] {
  return [...layouts[orientation].headers];
}

/**
 * Reads a field table back into a FieldResult on the plane's grid (values as written, rounded as the dictionary
 * states).
 * @param plane the plane the table belongs to (grid, orientation, position)
 * @param window its window (index and times; default: index 0 and the times in the table)
 * @throws InputError naming the file and line when a column is missing, a row is short or the cell count differs
 */
export function readFieldTable(path: string, plane: PlaneSpec, window?: WindowInfo): FieldResult {
  const text = readFileSync(path, 'utf8');
  const lines = text.split(/\r?\n/);
  if (lines.at(-1) === '') lines.pop();
  const header = splitCsv(lines[0] ?? '');
  const all = fieldTableColumns(plane.orientation);
  // The budget's columns are read when present (tables of runs before the budget existed have none).
  const cols = all.slice(0, all.length - BUDGET_COLUMNS.length);
  const budgetAt = all.slice(cols.length).map((c) => header.indexOf(c));
  const at = new Int32Array(cols.length);
  cols.forEach((c, k) => {
    at[k] = header.indexOf(c);
    if (at[k] < 0) throw new InputError(path, 1, `field table without the column "${c}" (expected for a ${plane.orientation} plane)`);
  });
  const g = gridSpecOf(plane);
  const n = g.ny * g.nz;
  if (lines.length - 1 !== n) throw new InputError(path, lines.length, `field table has ${lines.length - 1} rows, plane ${plane.id} has ${n} cells`);
  const f64 = () => new Float64Array(n);
  const f: FieldResult = {
    planeId: plane.id, planeIndex: plane.index, orientation: plane.orientation, x_m: plane.x_m, z_m: plane.z_m,
    window: window ?? { index: 0, start_s: NaN, end_s: NaN }, direction_deg: NaN, grid: g,
    u: f64(), v: f64(), w: f64(), su: f64(), sv: f64(), sw: f64(), dopU: f64(), dopV: f64(), dopW: f64(), cond: f64(), minCrossing_deg: f64(),
    yEff: f64(), zEff: f64(), samples: new Uint32Array(n), instruments: new Uint8Array(n),
    maskU: new Uint8Array(n), maskV: new Uint8Array(n), maskW: new Uint8Array(n), assumptions: [],
  };
  const num = (cells: string[], k: number) => {
    const t = cells[at[k]];
    return t === '' || t === undefined ? NaN : Number(t);
  };
  const code = (cells: string[], k: number, line: number) => {
    const t = cells[at[k]] ?? '';
    const v = MASK_CODE[t];
    if (v === undefined) throw new InputError(path, line, `unknown mask reason "${t}" in column ${cols[k]}`);
    return v;
  };
  let budget: Float64Array[] | undefined;
  if (budgetAt.every((k) => k >= 0)) {
    f.budget = emptyFieldBudget(n);
    budget = budgetArrays(f); // the budget's own arrays, in column order
  }
  for (let i = 0; i < n; i++) {
    const cells = splitCsv(lines[i + 1]);
    if (cells.length < header.length) throw new InputError(path, i + 2, `row has ${cells.length} fields, the header ${header.length}`);
    if (budget) budgetAt.forEach((k, j) => { const t = cells[k]; budget![j][i] = t === '' || t === undefined ? NaN : Number(t); });
    if (i === 0) {
      f.direction_deg = num(cells, C.direction);
      if (!window) f.window = { index: 0, start_s: parseTime(cells[at[C.window_start]]), end_s: parseTime(cells[at[C.window_end]]) };
    }
    f.u[i] = num(cells, C.u); f.v[i] = num(cells, C.v); f.w[i] = num(cells, C.w);
    f.su[i] = num(cells, C.su); f.sv[i] = num(cells, C.sv); f.sw[i] = num(cells, C.sw);
    f.dopU[i] = num(cells, C.dopU); f.dopV[i] = num(cells, C.dopV); f.dopW[i] = num(cells, C.dopW);
    f.cond[i] = num(cells, C.cond); f.minCrossing_deg[i] = num(cells, C.minCrossing);
    f.samples[i] = num(cells, C.samples) || 0; f.instruments[i] = num(cells, C.instruments) || 0;
    f.maskU[i] = code(cells, C.maskU, i + 2); f.maskV[i] = code(cells, C.maskV, i + 2); f.maskW[i] = code(cells, C.maskW, i + 2);
    f.yEff[i] = num(cells, C.yEff); f.zEff[i] = num(cells, C.secondEff);
  }
  if (f.maskW.includes(MaskReason.assumedZero)) f.assumptions.push(W_ZERO_ASSUMPTION);
  return f;
}

/** One CSV line split into fields (RFC 4180 quoting, as csvRow writes). */
function splitCsv(line: string): string[] {
  if (!line.includes('"')) return line.split(',');
  const out: string[] = [];
  let cur = '', quoted = false;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (quoted) {
      if (c === '"' && line[i + 1] === '"') (cur += '"'), i++;
      else if (c === '"') quoted = false;
      else cur += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') (out.push(cur), (cur = ''));
    else cur += c;
  }
  out.push(cur);
  return out;
}
