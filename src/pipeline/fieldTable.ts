/**
 * The field table: one CSV per plane and window, one row per cell, written by `writeFieldTable` and read back by
 * `readFieldTable` (for `wakeplane render` and the images of single windows). Both take the column names from
 * FIELD_TABLE_COLUMNS, so a renamed column changes in one place.
 *
 * Columns: plane, window_start, window_end (ISO 8601 UTC), y_m and z_m (cross plane: lateral and height above
 * ground; horizontal plane: y_m and x_m downstream), the same in rotor diameters (y_D, z_D or x_D), u, v, w (m/s,
 * rotor frame), su, sv, sw (standard uncertainties, m/s), dop_u, dop_v, dop_w (error amplification), cond
 * (condition number), min_crossing_deg, samples, instruments, mask_u, mask_v, mask_w (reason names, empty when
 * valid), masked (1 when any component is masked or assumed), direction_deg (window wind direction), y_eff_m and
 * z_eff_m (x_eff_m on a horizontal plane): the effective position of the retrieved u within the cell, metres (see
 * FieldResult.yEff).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { PlaneSpec } from '../campaign/types.ts';
import { InputError } from '../errors.ts';
import { cellCentre, gridSpecOf } from '../grid/grid.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import { isoTime, parseTime } from '../io/time.ts';
import { W_ZERO_ASSUMPTION } from '../retrieval/settings.ts';
import { MaskReason, maskReasonName, type FieldResult, type WindowInfo } from '../retrieval/types.ts';

/** The field table's columns in order; `second` is z for cross planes and x for horizontal ones. */
export function fieldTableColumns(orientation: 'cross' | 'horizontal'): string[] {
  const second = orientation === 'cross' ? 'z' : 'x';
  return [
    'plane', 'window_start', 'window_end', 'y_m', `${second}_m`, 'y_D', `${second}_D`, 'u', 'v', 'w', 'su', 'sv', 'sw',
    'dop_u', 'dop_v', 'dop_w', 'cond', 'min_crossing_deg', 'samples', 'instruments', 'mask_u', 'mask_v', 'mask_w',
    'masked', 'direction_deg', 'y_eff_m', `${second}_eff_m`,
  ];
}

export function fieldTableName(f: FieldResult, ordinal: number): string {
  if (f.window.kind === 'ensemble') return join('fields', `${f.planeId}_bin${String(ordinal).padStart(3, '0')}.csv`);
  const stamp = isoTime(f.window.start_s).replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  return join('fields', `${f.planeId}_w${String(ordinal).padStart(3, '0')}_${stamp}.csv`);
}

/**
 * Writes one table (temporary file, then rename). Built in memory and written synchronously: a table holds one row
 * per cell (tens of kilobytes for a typical grid), and a synchronous write to the page cache costs far less than
 * the round trips of a stream, during which the ingest would stall (measured 5 ms per table with a stream).
 */
export async function writeFieldTable(f: FieldResult, path: string, diameter_m: number): Promise<void> {
  const parts: string[] = [csvRow(fieldTableColumns(f.orientation))];
  const ws = isoTime(f.window.start_s), we = isoTime(f.window.end_s);
  const n = f.grid.ny * f.grid.nz;
  for (let c = 0; c < n; c++) {
    const [y, z] = cellCentre(f.grid, c);
    const masked = f.maskU[c] !== 0 || f.maskV[c] !== 0 || f.maskW[c] !== 0;
    parts.push(csvRow([
      f.planeId, ws, we, y, z, y / diameter_m, z / diameter_m, f.u[c], f.v[c], f.w[c], f.su[c], f.sv[c], f.sw[c],
      f.dopU[c], f.dopV[c], f.dopW[c], f.cond[c], f.minCrossing_deg[c], f.samples[c], f.instruments[c],
      maskReasonName[f.maskU[c]], maskReasonName[f.maskV[c]], maskReasonName[f.maskW[c]], masked ? 1 : 0, f.direction_deg, f.yEff[c], f.zEff[c],
    ]));
  }
  writeFileAtomic(path, parts.join(''));
}

const MASK_CODE: Record<string, number> = Object.fromEntries(Object.entries(maskReasonName).map(([code, name]) => [name, Number(code)]));

/**
 * Reads a field table back into a FieldResult on the plane's grid (values as written: 9 significant digits).
 * @param plane the plane the table belongs to (grid, orientation, position)
 * @param window its window (index and times; default: index 0 and the times in the table)
 * @throws InputError naming the file and line when a column is missing, a row is short or the cell count differs
 */
export function readFieldTable(path: string, plane: PlaneSpec, window?: WindowInfo): FieldResult {
  const text = readFileSync(path, 'utf8');
  const lines = text.split(/\r?\n/);
  if (lines.at(-1) === '') lines.pop();
  const header = splitCsv(lines[0] ?? '');
  const cols = fieldTableColumns(plane.orientation);
  const at: Record<string, number> = {};
  for (const c of cols) {
    const k = header.indexOf(c);
    if (k < 0) throw new InputError(path, 1, `field table without the column "${c}" (expected for a ${plane.orientation} plane)`);
    at[c] = k;
  }
  const g = gridSpecOf(plane);
  const n = g.ny * g.nz;
  if (lines.length - 1 !== n) throw new InputError(path, lines.length, `field table has ${lines.length - 1} rows, plane ${plane.id} has ${n} cells`);
  const f64 = () => new Float64Array(n);
  const second = plane.orientation === 'cross' ? 'z' : 'x';
  const f: FieldResult = {
    planeId: plane.id, planeIndex: plane.index, orientation: plane.orientation, x_m: plane.x_m, z_m: plane.z_m,
    window: window ?? { index: 0, start_s: NaN, end_s: NaN }, direction_deg: NaN, grid: g,
    u: f64(), v: f64(), w: f64(), su: f64(), sv: f64(), sw: f64(), dopU: f64(), dopV: f64(), dopW: f64(), cond: f64(), minCrossing_deg: f64(),
    yEff: f64(), zEff: f64(), samples: new Uint32Array(n), instruments: new Uint8Array(n),
    maskU: new Uint8Array(n), maskV: new Uint8Array(n), maskW: new Uint8Array(n), assumptions: [],
  };
  const num = (cells: string[], c: string) => {
    const t = cells[at[c]];
    return t === '' || t === undefined ? NaN : Number(t);
  };
  const code = (cells: string[], c: string, line: number) => {
    const t = cells[at[c]] ?? '';
    const v = MASK_CODE[t];
    if (v === undefined) throw new InputError(path, line, `unknown mask reason "${t}" in column ${c}`);
    return v;
  };
  for (let i = 0; i < n; i++) {
    const cells = splitCsv(lines[i + 1]);
    if (cells.length < header.length) throw new InputError(path, i + 2, `row has ${cells.length} fields, the header ${header.length}`);
    if (i === 0) {
      f.direction_deg = num(cells, 'direction_deg');
      if (!window) f.window = { index: 0, start_s: parseTime(cells[at.window_start]), end_s: parseTime(cells[at.window_end]) };
    }
    f.u[i] = num(cells, 'u'); f.v[i] = num(cells, 'v'); f.w[i] = num(cells, 'w');
    f.su[i] = num(cells, 'su'); f.sv[i] = num(cells, 'sv'); f.sw[i] = num(cells, 'sw');
    f.dopU[i] = num(cells, 'dop_u'); f.dopV[i] = num(cells, 'dop_v'); f.dopW[i] = num(cells, 'dop_w');
    f.cond[i] = num(cells, 'cond'); f.minCrossing_deg[i] = num(cells, 'min_crossing_deg');
    f.samples[i] = num(cells, 'samples') || 0; f.instruments[i] = num(cells, 'instruments') || 0;
    f.maskU[i] = code(cells, 'mask_u', i + 2); f.maskV[i] = code(cells, 'mask_v', i + 2); f.maskW[i] = code(cells, 'mask_w', i + 2);
    f.yEff[i] = num(cells, 'y_eff_m'); f.zEff[i] = num(cells, `${second}_eff_m`);
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
