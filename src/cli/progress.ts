/**
 * Progress on stderr, never on stdout (results and summaries stay clean for pipes).
 *
 * In a terminal (TTY): one status line, rewritten in place, showing the stage, the current file with its
 * percentage or row count, the estimated share of the reading done, running counters (windows, images, files) and,
 * after the first second, the stage's elapsed time, so every stage shows a counter.
 *
 * Without a terminal (CI, a log file, a pipe): nothing for short runs; from `logIntervalMs` (10 s) on, one plain
 * line at that steady pace: elapsed time, stage, share of the rows read (estimated from file sizes), rows per second
 * since the last line, and the counters. With quiet: nothing at all.
 */

export interface Progress {
  /** A new stage begins (e.g. "reading", "retrieving", "rendering images"). */
  stage(name: string): void;
  /** Progress within a file (or another unit of work): done of total (bytes, rows, ...); without a total, done is
   * shown as a count of rows. (So a Progress also serves where only file(path, rows) is called.) */
  file(path: string, done: number, total?: number): void;
  /** A running counter shown after the file, e.g. count('samples', 1234567). */
  count(label: string, value: number): void;
  /** The expected total of rows over all files (an estimate), for the share done. */
  expect(rows: number): void;
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
  /** Without a terminal: time between progress lines, ms; default 10000. */
  logIntervalMs?: number;
  /** Clock for tests, ms; default Date.now. */
  now?: () => number;
  /** Draw from a timer as well as on calls (so a long step still shows time passing); default true. */
  timer?: boolean;
}

const SILENT: Progress = { stage() {}, file() {}, count() {}, expect() {}, note() {}, done() {} };

/** Rows done over all files: the latest count per file, summed. */
class RowTally {
  private perFile = new Map<string, number>();
  total = 0;
  set(file: string, rows: number): void {
    this.total += rows - (this.perFile.get(file) ?? 0);
    this.perFile.set(file, rows);
  }
}

function clock(ms: number): string {
  const s = Math.floor(ms / 1000);
  const p = (n: number) => String(n).padStart(2, '0');
  return `${p(Math.floor(s / 3600))}:${p(Math.floor(s / 60) % 60)}:${p(s % 60)}`;
}

/** Plain progress lines at a steady pace, for logs and pipes. */
function logProgress(stream: NodeJS.WriteStream, opts: ProgressOptions): Progress {
  const now = opts.now ?? Date.now;
  const every = opts.logIntervalMs ?? 10_000;
  const t0 = now();
  let last = t0, lastRows = 0;
  let stage = '';
  let rowsStage = '';
  let expected = NaN;
  const rows = new RowTally();
  const counters = new Map<string, number>();
  const line = () => {
    const t = now();
    const parts = [`wakeplane: [${clock(t - t0)}] ${stage || 'working'}`];
    if (rows.total > 0 && stage === rowsStage) {
      const share = expected > 0 ? ` (~${Math.min(99, (100 * rows.total) / expected).toFixed(0)} % of ~${compact(expected)} rows)` : '';
      const rate = t > last ? (1000 * (rows.total - lastRows)) / (t - last) : NaN;
      parts.push(`${compact(rows.total)} rows read${share}, ${compact(rate)} rows/s`);
    }
    for (const [k, v] of counters) parts.push(`${k} ${compact(v)}`);
    stream.write(parts.join('; ') + '\n');
    last = t;
    lastRows = rows.total;
  };
  const tick = () => {
    if (now() - last >= every) line();
  };
  const timer = opts.timer === false ? undefined : setInterval(tick, Math.min(every, 1000));
  timer?.unref();
  return {
    stage(name) {
      stage = name;
      counters.clear();
      tick();
    },
    file(path, done) {
      rows.set(path, done);
      rowsStage = stage;
      tick();
    },
    count(label, value) {
      counters.set(label, value);
      tick();
    },
    expect(n) {
      expected = n;
    },
    note(message) {
      stream.write(`${message}\n`);
    },
    done() {
      if (timer) clearInterval(timer);
    },
  };
}

export function createProgress(stream: NodeJS.WriteStream, opts: ProgressOptions = {}): Progress {
  if (opts.quiet) return SILENT;
  if (!stream.isTTY) return logProgress(stream, opts);
  const now = opts.now ?? Date.now;
  const interval = opts.intervalMs ?? 100;
  let stage = '';
  let stageStart = now();
  let file = '';
  let pct = NaN;
  let rows = NaN;
  let expected = NaN;
  const tally = new RowTally();
  const counters = new Map<string, number>();
  let last = -Infinity;
  let shown = false;

  const line = (): string => {
    const parts = [stage ? `[${stage}]` : ''];
    if (file) parts.push(`${shorten(file, 48)}${Number.isFinite(pct) ? ` ${pct.toFixed(0)} %` : Number.isFinite(rows) ? ` ${compact(rows)} rows` : ''}`);
    if (expected > 0 && tally.total > 0) parts.push(`~${Math.min(99, (100 * tally.total) / expected).toFixed(0)} % of all`);
    for (const [k, v] of counters) parts.push(`${k} ${compact(v)}`);
    const el = now() - stageStart;
    if (el >= 1000) parts.push(`${Math.floor(el / 1000)} s`);
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

  const timer = opts.timer === false ? undefined : setInterval(() => shown && draw(true), 1000);
  timer?.unref();
  return {
    stage(name) {
      stage = name;
      stageStart = now();
      file = '';
      pct = NaN;
      rows = NaN;
      counters.clear();
      draw(true);
    },
    file(path, done, total) {
      if (total === undefined) tally.set(path, done);
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
    expect(n) {
      expected = n;
    },
    note(message) {
      clear();
      stream.write(`${message}\n`);
      draw(true);
    },
    done() {
      if (timer) clearInterval(timer);
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
