/**
 * Terminal progress: one status line, rewritten in place, showing the stage, the current file with its percentage
 * and running counters. Only on a terminal (TTY) and never with quiet; otherwise every call does nothing, so logs
 * and pipes stay clean.
 */

export interface Progress {
  /** A new stage begins (e.g. "reading", "retrieving", "rendering images"). */
  stage(name: string): void;
  /** Progress within a file (or another unit of work): done of total (bytes, rows, ...); without a total, done is
   * shown as a count of rows. (So a Progress also serves where only file(path, rows) is called.) */
  file(path: string, done: number, total?: number): void;
  /** A running counter shown after the file, e.g. count('samples', 1234567). */
  count(label: string, value: number): void;
  /** A message that stays on screen above the status line. */
  note(message: string): void;
  /** Clears the status line (call once at the end, also after an error). */
  done(): void;
}

export interface ProgressOptions {
  /** Print nothing; default false. */
  quiet?: boolean;
  /** Least time between redraws of the same stage, ms; default 100. */
  intervalMs?: number;
  /** Clock for tests, ms; default Date.now. */
  now?: () => number;
}

const SILENT: Progress = { stage() {}, file() {}, count() {}, note() {}, done() {} };

export function createProgress(stream: NodeJS.WriteStream, opts: ProgressOptions = {}): Progress {
  if (opts.quiet || !stream.isTTY) return SILENT;
  const now = opts.now ?? Date.now;
  const interval = opts.intervalMs ?? 100;
  let stage = '';
  let file = '';
  let pct = NaN;
  let rows = NaN;
  const counters = new Map<string, number>();
  let last = -Infinity;
  let shown = false;

  const line = (): string => {
    const parts = [stage ? `[${stage}]` : ''];
    if (file) parts.push(`${shorten(file, 48)}${Number.isFinite(pct) ? ` ${pct.toFixed(0)} %` : Number.isFinite(rows) ? ` ${compact(rows)} rows` : ''}`);
    for (const [k, v] of counters) parts.push(`${k} ${compact(v)}`);
    return parts.filter(Boolean).join('  ');
  };
  const draw = (force: boolean) => {
    const t = now();
    if (!force && t - last < interval) return;
    last = t;
    const width = Math.max(20, (stream.columns || 80) - 1);
    stream.write(`\r\x1b[2K${line().slice(0, width)}`);
    shown = true;
  };
  const clear = () => {
    if (shown) stream.write('\r\x1b[2K');
    shown = false;
  };

  return {
    stage(name) {
      stage = name;
      file = '';
      pct = NaN;
      rows = NaN;
      counters.clear();
      draw(true);
    },
    file(path, done, total) {
      const changed = path !== file;
      file = path;
      pct = total !== undefined && total > 0 ? Math.min(100, (100 * done) / total) : NaN;
      rows = total === undefined ? done : NaN;
      draw(changed);
    },
    count(label, value) {
      counters.set(label, value);
      draw(false);
    },
    note(message) {
      clear();
      stream.write(`${message}\n`);
      draw(true);
    },
    done() {
      clear();
    },
  };
}

/** 1234567 -> "1.23 M". */
export function compact(v: number): string {
  if (!Number.isFinite(v)) return '\u2013';
  const a = Math.abs(v);
  if (a >= 1e9) return `${(v / 1e9).toFixed(2)} G`;
  if (a >= 1e6) return `${(v / 1e6).toFixed(2)} M`;
  if (a >= 1e4) return `${(v / 1e3).toFixed(1)} k`;
  return String(Math.round(v));
}

/** Keeps the end of a long path: "…/data/instrument-a/day-03.csv". */
function shorten(path: string, max: number): string {
  return path.length <= max ? path : `\u2026${path.slice(path.length - max + 1)}`;
}
