/**
 * Every core of one machine: a run's data files shared out to child processes (the command itself, started with
 * the hidden `_shard` command and a job file), each reading its files as a shard (partial.ts). Child processes
 * rather than threads: each has its own heap (memory per shard bounded as for a run) and runs exactly the code of a
 * shard on a cluster.
 *
 * Live merge: a child writes its partial file as a shard on a cluster would, and tells the parent (IPC, a few
 * numbers) where each finished window's record lies and the time up to which it has finished every window. The
 * parent reads a window's records from the children's files and finishes it (merge, robust filter, retrieval,
 * tables, stages) once every child has passed its end, in the order a single run uses (end, start, id), so finishing
 * overlaps reading; large messages never cross the IPC channel. Counters, evidence and unreadable rows are taken
 * from each finished file at the end, in child order. The parent holds only offsets.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { deserialize, serialize } from 'node:v8';
import type { Campaign } from '../campaign/types.ts';
import { PartialError } from '../errors.ts';
import type { RejectedRow } from '../io/batch.ts';
import type { SuspicionInspector } from '../qc/suspicion.ts';
import { PartialReader } from '../io/partialFile.ts';
import type { FinishedWindow } from './finishWindows.ts';
import type { Counters } from './ingest.ts';
import { absorbTail, fileSink, mergeWindowRecords, overlapWarnings, runShardTo, type ShardSpec, type SinkNote } from './partial.ts';

/**
 * Files shared into at most `parts` groups of about equal size (largest first, each to the lightest group); each
 * group keeps the campaign's file order. Deterministic.
 */
export function shareFiles(files: string[], parts: number): string[][] {
  const n = Math.max(1, Math.min(parts, files.length));
  const size = files.map((f) => { try { return statSync(f).size; } catch { return 0; } });
  const order = files.map((_, k) => k).sort((a, b) => size[b] - size[a] || a - b);
  const load = new Float64Array(n);
  const member: number[][] = Array.from({ length: n }, () => []);
  for (const k of order) {
    let g = 0;
    for (let j = 1; j < n; j++) if (load[j] < load[g]) g = j;
    load[g] += size[k];
    member[g].push(k);
  }
  return member.filter((m) => m.length).map((m) => m.sort((a, b) => a - b).map((k) => files[k]));
}

/** The command's entry script (bin/wakeplane.js), found from this module in src/pipeline/ or dist/. */
function entryScript(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return join(dir, 'bin', 'wakeplane.js');
}

interface ShardJob {
  campaign: Campaign;
  spec: ShardSpec;
  /** The partial file to write. */
  partial: string;
  /** Tell the parent (IPC) where each window's record lies. */
  live?: boolean;
  firstSample_s: number;
  /** The run's resolved CNR limits per instrument, dB (computed once by the parent). */
  cnrMin_db?: Float64Array;
}

/**
 * How a child starts: from the bundle, node imports this very module and runs the job (the command's start-up and
 * argument parsing skipped); from the sources, through the command's entry (`_shard`), which loads them with tsx.
 */
function childArgs(jobFile: string): string[] {
  const self = import.meta.url;
  if (!self.endsWith('.js')) return [entryScript(), '_shard', jobFile];
  const code = `import(${JSON.stringify(self)}).then((m) => m.runShardJob(${JSON.stringify(jobFile)})).catch((e) => { process.stderr.write('wakeplane: ' + String(e && e.message || e).split('\\n')[0] + '\\n'); process.exit(1); });`;
  return ['--input-type=module', '-e', code];
}

function startChild(job: ShardJob, jobFile: string, ipc: boolean): { child: ChildProcess; done: Promise<void> } {
  writeFileSync(jobFile, serialize(job));
  const child = spawn(process.execPath, childArgs(jobFile), {
    // the processes share the cores already: no reader thread of their own (pipeline/ingest.ts)
    env: { ...process.env, WAKEPLANE_READER_THREAD: '0' },
    stdio: ipc ? ['ignore', 'ignore', 'pipe', 'ipc'] : ['ignore', 'ignore', 'pipe'],
  });
  let err = '';
  child.stderr!.on('data', (d: Buffer) => { if (err.length < 20000) err += d.toString(); });
  const done = new Promise<void>((resolve, reject) => {
    child.once('error', reject);
    child.once('close', (code, signal) => {
      if (code === 0) resolve();
      else {
        const line = err.split('\n').find((l) => l.startsWith('wakeplane: ')) ?? err.trim().split('\n').filter(Boolean).pop() ?? '';
        reject(new PartialError(line.replace(/^wakeplane: (error: )?/, '') || `a reading process stopped (${signal ?? `exit ${code}`})`));
      }
    });
  });
  return { child, done };
}

export interface LiveTargets {
  onWindow(w: FinishedWindow): Promise<void>;
  onRejectedRows(rows: RejectedRow[]): void;
  counters: Counters;
  inspector: SuspicionInspector;
}

/**
 * Runs each shard in a child process and finishes the merged windows here while they read (see the file header).
 * Resolves when every child has ended and every window is finished; returns warnings (files of one instrument that
 * overlap in time across shards). The partial files are left in `dir` (the caller removes it).
 */
export async function runShardsLive(c: Campaign, specs: ShardSpec[], dir: string, firstSample_s: number, to: LiveTargets, show: (f: string) => string, cnrMin_db?: Float64Array): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const wm = specs.map(() => -Infinity);
  const ended = specs.map(() => false);
  const follow: (PartialReader | undefined)[] = specs.map(() => undefined);
  const partial = (k: number) => join(dir, `shard-${k}.wpart`);
  const pending = new Map<number, { id: number; start_s: number; end_s: number; parts: { k: number; at: number }[] }>();
  let chain = Promise.resolve();
  let failed: unknown;
  let spare: import('../grid/accumulator.ts').CellAccumulator[] | undefined;
  const drain = () => {
    let W = Infinity;
    for (let k = 0; k < specs.length; k++) if (!ended[k]) W = Math.min(W, wm[k]);
    const ready = [...pending.values()].filter((w) => w.end_s <= W).sort((a, b) => a.end_s - b.end_s || a.start_s - b.start_s || a.id - b.id);
    if (!ready.length) return;
    for (const w of ready) pending.delete(w.id);
    chain = chain.then(async () => {
      if (failed) return;
      for (const w of ready) {
        const win = mergeWindowRecords(w.parts.map((p) => follow[p.k]!.read(p.at)), w.start_s, w.end_s, spare);
        await to.onWindow(win);
        spare = win.accs; // reused for the next window: the finishing keeps none of them
      }
    }).catch((e) => { failed ??= e; });
  };
  const procs: ChildProcess[] = [];
  const children = specs.map((spec, k) => {
    const { child, done } = startChild({ campaign: c, spec, partial: partial(k), live: true, firstSample_s, cnrMin_db }, join(dir, `shard-${k}.job`), true);
    procs.push(child);
    // One failed: the others' work is lost anyway, stop them (only the processes started here, by their handles).
    done.catch(() => { for (const p of procs) if (p !== child && p.exitCode === null) p.kill(); });
    child.on('message', (m: SinkNote) => {
      try {
        switch (m.type) {
          case 'begin': follow[k] = PartialReader.follow(m.tmp); break;
          case 'window': {
            const w = pending.get(m.id);
            if (w) { w.start_s = Math.min(w.start_s, m.start_s); w.end_s = Math.max(w.end_s, m.end_s); w.parts.push({ k, at: m.at }); }
            else pending.set(m.id, { id: m.id, start_s: m.start_s, end_s: m.end_s, parts: [{ k, at: m.at }] });
            break;
          }
          case 'finishedTo': wm[k] = m.t; drain(); break;
        }
      } catch (e) {
        failed ??= e;
      }
    });
    return done.then(() => { ended[k] = true; drain(); });
  });
  try {
    const settled = await Promise.allSettled(children);
    const bad = settled.find((r) => r.status === 'rejected');
    if (bad) throw (bad as PromiseRejectedResult).reason;
    drain();
    await chain;
    if (failed) throw failed;
    if (pending.size) throw new Error(`internal: ${pending.size} windows left unfinished by the live merge`);
    // Counters, evidence and unreadable rows, from each finished file in child order.
    const spans: { file: string; span: [number, number]; k: number }[] = [];
    for (let k = 0; k < specs.length; k++) {
      const r = PartialReader.open(partial(k));
      try {
        absorbTail(r, to);
        for (const [file, span] of r.index.spans as [string, [number, number]][]) spans.push({ file, span, k });
      } finally {
        r.close();
      }
    }
    return overlapWarnings(c, spans, show);
  } finally {
    for (const r of follow) r?.close();
  }
}

/** The child's side: runs the shard described by a job file (the hidden `_shard` command). */
export async function runShardJob(jobFile: string): Promise<void> {
  const job = deserialize(readFileSync(jobFile)) as ShardJob;
  let notify: ((n: SinkNote) => Promise<void>) | undefined;
  if (job.live) {
    // A child reporting to its parent stops when the parent is gone (stopped by a signal, or failed).
    process.once('disconnect', () => process.exit(1));
    notify = (n) => new Promise<void>((resolve, reject) => process.send!(n, undefined, {}, (e) => (e ? reject(e) : resolve())));
  }
  await runShardTo(job.campaign, job.spec, fileSink(job.partial, notify), { firstSample_s: job.firstSample_s, cnrMin_db: job.cnrMin_db });
  if (job.live) {
    process.removeAllListeners('disconnect');
    process.disconnect?.();
  }
}
