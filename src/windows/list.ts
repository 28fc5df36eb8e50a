/**
 * Listed windows: explicit [start, end) intervals with optional labels, inline in the campaign or from a CSV file
 * (the experiment's log). The file has a header row with the columns start, end and optionally label (renamed by
 * `columns`); times are ISO 8601 UTC (or with an offset) or Unix seconds. Errors name the file and line, or the
 * campaign key: unparsable times, end not after start, and overlapping windows unless overlap is allowed.
 */
import { readFileSync } from 'node:fs';
import { ConfigError, InputError } from '../errors.ts';
import { splitCsvLine } from '../io/series.ts';
import { parseTime } from '../io/time.ts';
import type { WindowDef } from './plan.ts';

export interface ListItem {
  start: string | number;
  end: string | number;
  label?: string;
}

type Listed = Omit<WindowDef, 'id'> & { where: string };

function toTime(v: string | number): number {
  return typeof v === 'number' ? v : parseTime(v);
}

/** Windows given inline (campaign key windows.items). */
export function windowsFromItems(items: ListItem[], campaignFile: string, allowOverlap: boolean): Omit<WindowDef, 'id'>[] {
  const out: Listed[] = items.map((it, i) => {
    const key = `windows.items[${i}]`;
    const start_s = toTime(it.start), end_s = toTime(it.end);
    if (!Number.isFinite(start_s)) throw new ConfigError(campaignFile, `${key}.start`, 'not a time (ISO 8601 UTC or Unix seconds)', it.start);
    if (!Number.isFinite(end_s)) throw new ConfigError(campaignFile, `${key}.end`, 'not a time (ISO 8601 UTC or Unix seconds)', it.end);
    if (!(end_s > start_s)) throw new ConfigError(campaignFile, key, 'end must be after start', it);
    return { start_s, end_s, kind: 'list', label: it.label ?? '', level: NaN, where: key };
  });
  checkOverlap(out, allowOverlap, (w, prev) => new ConfigError(campaignFile, w.where, `overlaps ${prev.where} (set windows.allowOverlap: true if intended)`));
  return out.map(({ where: _w, ...w }) => w);
}

/** Windows from a CSV file. `columns` maps start/end/label to the file's headers. */
export function windowsFromFile(file: string, columns: Record<string, string>, allowOverlap: boolean): Omit<WindowDef, 'id'>[] {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new InputError(file, undefined, `cannot read the window list: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  const header = splitCsvLine(lines[0] ?? '').map((h) => h.trim());
  const col = (name: string, required: boolean) => {
    const c = header.indexOf(columns[name] ?? name);
    if (c < 0 && required) throw new InputError(file, 1, `window list: missing column "${columns[name] ?? name}" (has: ${header.slice(0, 8).join(', ')})`);
    return c;
  };
  const cs = col('start', true), ce = col('end', true), cl = col('label', false);
  const out: Listed[] = [];
  for (let i = 1; i < lines.length; i++) {
    if (lines[i].trim() === '') continue;
    const cells = splitCsvLine(lines[i]);
    const s = (cells[cs] ?? '').trim(), e = (cells[ce] ?? '').trim();
    const start_s = parseTime(s), end_s = parseTime(e);
    const excerpt = (x: string) => JSON.stringify(x.length > 40 ? x.slice(0, 40) + '...' : x);
    if (!Number.isFinite(start_s)) throw new InputError(file, i + 1, `window list: start is not a time: ${excerpt(s)}`);
    if (!Number.isFinite(end_s)) throw new InputError(file, i + 1, `window list: end is not a time: ${excerpt(e)}`);
    if (!(end_s > start_s)) throw new InputError(file, i + 1, `window list: end ${excerpt(e)} is not after start ${excerpt(s)}`);
    out.push({ start_s, end_s, kind: 'list', label: cl >= 0 ? (cells[cl] ?? '').trim() : '', level: NaN, where: `line ${i + 1}` });
  }
  if (out.length === 0) throw new InputError(file, undefined, 'window list: no windows');
  checkOverlap(out, allowOverlap, (w, prev) => new InputError(file, Number(w.where.slice(5)), `window list: overlaps the window on ${prev.where} (set windows.allowOverlap: true if intended)`));
  return out.map(({ where: _w, ...w }) => w);
}

function checkOverlap(list: Listed[], allow: boolean, err: (w: Listed, prev: Listed) => Error): void {
  if (allow) return;
  const sorted = [...list].sort((a, b) => a.start_s - b.start_s);
  for (let i = 1; i < sorted.length; i++) if (sorted[i].start_s < sorted[i - 1].end_s) throw err(sorted[i], sorted[i - 1]);
}
