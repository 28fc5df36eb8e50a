/**
 * Every core of one machine: a run's data files shared out to child processes (the command itself, started with
 * the hidden `_shard` command and a job file), each reading its files as a shard (partial.ts). Child processes
 * rather than threads: each has its own heap (memory per shard bounded as for a run) and runs exactly the code of a
 * shard on a cluster.
 *
 * Live merge: a child sends each window's unfiltered accumulators to the parent as soon as it finishes the window
 * (IPC, structured clone of the typed arrays), with the time up to which it has finished every window. The parent
 * finishes a window (merge, robust filter, retrieval, tables, stages) once every child has passed its end, in the
 * order a single run uses (end, start, id), so finishing overlaps reading. Rows that could not be read are kept in a
 * file per child and written in child order at the end; counters and evidence come with each child's last message.
 * The parent holds the windows that some child has finished and the slowest has not yet passed.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { appendFileSync, existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { deserialize, serialize } from 'node:v8';
import type { Campaign } from '../campaign/types.ts';
import { PartialError } from '../errors.ts';
import type { TypedArray } from '../grid/accumulatorState.ts';
import type { RejectedRow } from '../io/batch.ts';
import type { EvidenceState, SuspicionInspector } from '../qc/suspicion.ts';
import type { FinishedWindow } from './finishWindows.ts';
import type { Counters } from './ingest.ts';
import { addInto, fileSink, mergeWindowRecords, overlapWarnings, runShardTo, type ShardSink, type ShardSpec } from './partial.ts';

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
  /** A partial file to write, or undefined: send to the parent (IPC). */
  partial?: string;
  firstSample_s: number;
}

type Message =
  | { type: 'window'; meta: Record<string, unknown>; arrays: Record<string, TypedArray> }
  | { type: 'finishedTo'; t: number }
  | { type: 'rejected'; rows: RejectedRow[] }
  | { type: 'end'; counters: Record<string, Float64Array>; evidence: [string, EvidenceState][]; spans: [string, [number, number]][] };

function startChild(job: ShardJob, jobFile: string, ipc: boolean): { child: ChildProcess; done: Promise<void> } {
  writeFileSync(jobFile, serialize(job));
  const child = spawn(process.execPath, [entryScript(), '_shard', jobFile], {
    stdio: ipc ? ['ignore', 'ignore', 'pipe', 'ipc'] : ['ignore', 'ignore', 'pipe'],
    serialization: ipc ? 'advanced' : 'json',
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
 * overlap in time across shards).
 */
export async function runShardsLive(c: Campaign, specs: ShardSpec[], dir: string, firstSample_s: number, to: LiveTargets, show: (f: string) => string): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const wm = specs.map(() => -Infinity);
  const ended = specs.map(() => false);
  const rejectedFile = (k: number) => join(dir, `shard-${k}.rejected`);
  const pending = new Map<number, { id: number; start_s: number; end_s: number; recs: { meta: Record<string, unknown>; arrays: Record<string, TypedArray> }[] }>();
  const spans: { file: string; span: [number, number]; k: number }[] = [];
  let chain = Promise.resolve();
  let failed: unknown;
  const drain = () => {
    let W = Infinity;
    for (let k = 0; k < specs.length; k++) if (!ended[k]) W = Math.min(W, wm[k]);
    const ready = [...pending.values()].filter((w) => w.end_s <= W).sort((a, b) => a.end_s - b.end_s || a.start_s - b.start_s || a.id - b.id);
    if (!ready.length) return;
    for (const w of ready) pending.delete(w.id);
    chain = chain.then(async () => {
      if (failed) return;
      for (const w of ready) await to.onWindow(mergeWindowRecords(w.recs, w.start_s, w.end_s));
    }).catch((e) => { failed ??= e; });
  };
  const procs: ChildProcess[] = [];
  const children = specs.map((spec, k) => {
    const { child, done } = startChild({ campaign: c, spec, firstSample_s }, join(dir, `shard-${k}.job`), true);
    procs.push(child);
    // One failed: the others' work is lost anyway, stop them (only the processes started here, by their handles).
    done.catch(() => { for (const p of procs) if (p !== child && p.exitCode === null) p.kill(); });
    child.on('message', (m: Message) => {
      switch (m.type) {
        case 'window': {
          const def = m.meta.def as { id: number };
          const w = pending.get(def.id);
          const start = m.meta.start_s as number, end = m.meta.end_s as number;
          if (w) { w.start_s = Math.min(w.start_s, start); w.end_s = Math.max(w.end_s, end); w.recs.push(m); }
          else pending.set(def.id, { id: def.id, start_s: start, end_s: end, recs: [m] });
          break;
        }
        case 'finishedTo': wm[k] = m.t; drain(); break;
        case 'rejected': appendFileSync(rejectedFile(k), serializeRows(m.rows)); break;
        case 'end':
          addInto(to.counters.read, m.counters.read);
          addInto(to.counters.accepted, m.counters.accepted);
          addInto(to.counters.rejected, m.counters.rejected);
          for (const [file, e] of m.evidence) to.inspector.absorb(file, e);
          for (const [file, span] of m.spans) spans.push({ file, span, k });
          break;
      }
    });
    return done.then(() => { ended[k] = true; drain(); });
  });
  const settled = await Promise.allSettled(children);
  const bad = settled.find((r) => r.status === 'rejected');
  if (bad) throw (bad as PromiseRejectedResult).reason;
  drain();
  await chain;
  if (failed) throw failed;
  if (pending.size) throw new Error(`internal: ${pending.size} windows left unfinished by the live merge`);
  for (let k = 0; k < specs.length; k++) {
    if (!existsSync(rejectedFile(k))) continue;
    for (const rows of readRows(readFileSync(rejectedFile(k)))) to.onRejectedRows(rows);
  }
  return overlapWarnings(c, spans, show);
}

/** Rejected rows as length-prefixed v8-serialised batches (appended as they come). */
function serializeRows(rows: RejectedRow[]): Buffer {
  const body = serialize(rows);
  const head = Buffer.alloc(4);
  head.writeUInt32LE(body.length, 0);
  return Buffer.concat([head, body]);
}

function* readRows(b: Buffer): Generator<RejectedRow[]> {
  let o = 0;
  while (o + 4 <= b.length) {
    const n = b.readUInt32LE(o);
    yield deserialize(b.subarray(o + 4, o + 4 + n)) as RejectedRow[];
    o += 4 + n;
  }
}

/** The sink of a child sending to its parent over IPC (each send waits until the channel took the message). */
function ipcSink(): ShardSink {
  const send = (m: Message) => new Promise<void>((resolve, reject) => process.send!(m, undefined, {}, (e) => (e ? reject(e) : resolve())));
  let last: Promise<void> = Promise.resolve();
  const queue = (m: Message) => (last = last.then(() => send(m)));
  return {
    begin() {},
    window(meta, arrays) { return queue({ type: 'window', meta, arrays }); },
    finishedTo(t) { void queue({ type: 'finishedTo', t }); },
    rejected(rows) { void queue({ type: 'rejected', rows }); },
    async end(counters, evidence, spans) {
      await queue({ type: 'end', counters, evidence, spans });
      await queue({ type: 'finishedTo', t: Infinity });
    },
    abort() {},
  };
}

/** The child's side: runs the shard described by a job file (the hidden `_shard` command). */
export async function runShardJob(jobFile: string): Promise<void> {
  const job = deserialize(readFileSync(jobFile)) as ShardJob;
  // A child sending to its parent stops when the parent is gone (stopped by a signal, or failed).
  if (!job.partial) process.once('disconnect', () => process.exit(1));
  const sink = job.partial ? fileSink(job.partial) : ipcSink();
  await runShardTo(job.campaign, job.spec, sink, { firstSample_s: job.firstSample_s });
  if (!job.partial) {
    process.removeAllListeners('disconnect');
    process.disconnect?.();
  }
}
