/**
 * Small time-series files (wind direction, turbine yaw and power, inflow reference): CSV with a header row, read
 * whole (they hold one row per second or per minute, not the raw samples). Column names are ours; `columns` maps
 * them to the file's headers. Errors name the file, the line and the column.
 *
 * A missing value is an empty cell or the text NaN (any case; what pandas and numpy write for a missing float). It
 * is NaN in an optional column and in a required column the caller lists in `holes` (a logger's dropout in the
 * yaw or direction: consumers treat it as a gap); elsewhere in a required column it is an error.
 */
import { readFileSync } from 'node:fs';
import { InputError } from '../errors.ts';
import { excerpt } from './excerpt.ts';
import { fileProblem } from './fileKind.ts';
import { parseTime } from './time.ts';

export interface Series {
  file: string;
  /** Unix seconds, ascending. */
  time: Float64Array;
  /** One array per requested column (NaN where an optional column is absent or a cell is empty). */
  values: Record<string, Float64Array>;
  /** Line of each row in the file (1 = header), for messages naming a row; absent for series made in code. */
  lines?: Int32Array;
}

export function splitCsvLine(line: string): string[] {
  if (!line.includes('"')) return line.split(',');
  const out: string[] = [];
  let cur = '', q = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (q) {
      if (ch === '"' && line[i + 1] === '"') { cur += '"'; i++; }
      else if (ch === '"') q = false;
      else cur += ch;
    } else if (ch === '"') q = true;
    else if (ch === ',') { out.push(cur); cur = ''; }
    else cur += ch;
  }
  out.push(cur);
  return out;
}

/** An empty cell or NaN in any case: a missing value. */
const isMissing = (s: string) => s === '' || /^nan$/i.test(s);

export function readSeries(
  file: string,
  columns: Record<string, string>,
  required: string[],
  optional: string[] = [],
  opts: {
    holes?: readonly string[];
    /** The campaign key that asked for a required column, named when the file lacks it (e.g. a condition bin's). */
    keyOf?: (name: string) => string | undefined;
  } = {},
): Series {
  const bad = fileProblem(file);
  if (bad) throw new InputError(file, undefined, `series file ${bad.reason}`);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new InputError(file, undefined, `cannot read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  const lines = text.split(/\r?\n/);
  const header = splitCsvLine(lines[0] ?? '').map((h) => h.trim());
  const colOf = (name: string) => header.indexOf(columns[name] ?? name);
  const tCol = colOf('time');
  const has = `; the header has: ${excerpt(header.join(','), 100)}`;
  if (tCol < 0) throw new InputError(file, 1, `missing required column "${columns.time ?? 'time'}"${has}`);
  const idx: Record<string, number> = {};
  for (const name of required) {
    idx[name] = colOf(name);
    if (idx[name] < 0) {
      const key = opts.keyOf?.(name);
      throw new InputError(file, 1, key ? `${key}: no column "${columns[name] ?? name}"${has}` : `missing required column "${columns[name] ?? name}"${has}`);
    }
  }
  for (const name of optional) {
    idx[name] = colOf(name);
    // An optional column the campaign maps by name must be there: read as empty, it would lose every row's value.
    if (idx[name] < 0 && columns[name] !== undefined) throw new InputError(file, 1, `missing column "${columns[name]}" (columns.${name})${has}`);
  }
  const rows: { t: number; v: number[]; line: number }[] = [];
  const names = [...required, ...optional];
  for (let i = 1; i < lines.length; i++) {
    const line = lines[i];
    if (line.trim() === '') continue;
    const cells = splitCsvLine(line);
    const t = parseTime(cells[tCol] ?? '');
    if (!Number.isFinite(t)) throw new InputError(file, i + 1, `column ${excerpt(header[tCol], 40)}: not a time: ${excerpt(cells[tCol] ?? '')}`);
    const v = names.map((name) => {
      const c = idx[name];
      if (c < 0) return NaN;
      const s = (cells[c] ?? '').trim();
      if (isMissing(s)) {
        if (required.includes(name) && !opts.holes?.includes(name)) throw new InputError(file, i + 1, `column ${excerpt(header[c], 40)}: ${s === '' ? 'empty' : `missing value ${excerpt(s)}`}`);
        return NaN;
      }
      const x = Number(s);
      if (!Number.isFinite(x)) throw new InputError(file, i + 1, `column ${excerpt(header[c], 40)}: not a number: ${excerpt(s)}`);
      return x;
    });
    rows.push({ t, v, line: i + 1 });
  }
  rows.sort((a, b) => a.t - b.t);
  const values: Record<string, Float64Array> = {};
  names.forEach((name, k) => (values[name] = Float64Array.from(rows, (r) => r.v[k])));
  return { file, time: Float64Array.from(rows, (r) => r.t), values, lines: Int32Array.from(rows, (r) => r.line) };
}

/** Indices [lo, hi) of the rows with start <= time < end (time ascending). */
export function rowsInWindow(s: Series, start: number, end: number): [number, number] {
  const lower = (x: number) => {
    let lo = 0, hi = s.time.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (s.time[mid] < x) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  return [lower(start), lower(end)];
}

/** Vector (circular) mean of directions in degrees over rows [lo, hi); NaN when none. */
export function circularMeanDeg(values: Float64Array, lo: number, hi: number): number {
  let s = 0, c = 0, n = 0;
  for (let i = lo; i < hi; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) continue;
    s += Math.sin((v * Math.PI) / 180);
    c += Math.cos((v * Math.PI) / 180);
    n++;
  }
  if (n === 0) return NaN;
  const d = (Math.atan2(s, c) * 180) / Math.PI;
  return d < 0 ? d + 360 : d;
}

/** The rows of a series inside any of the intervals [start, end) (sorted by start, not overlapping). */
export function seriesWithin(s: Series, intervals: [number, number][]): Series {
  const keep: number[] = [];
  for (const [a, b] of intervals) {
    const [lo, hi] = rowsInWindow(s, a, b);
    for (let i = lo; i < hi; i++) keep.push(i);
  }
  const values: Record<string, Float64Array> = {};
  for (const [k, v] of Object.entries(s.values)) values[k] = Float64Array.from(keep, (i) => v[i]);
  return { file: s.file, time: Float64Array.from(keep, (i) => s.time[i]), values };
}
