/**
 * Every core of one machine: a run's data files shared out to child processes (the command itself, started with
 * the hidden `_shard` command and a job file), each reading its files into a partial result (partial.ts) that the
 * parent merges exactly. Child processes rather than threads: each has its own heap (memory per shard bounded as
 * for a run) and runs the same code as a shard on a cluster.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { deserialize, serialize } from 'node:v8';
import type { Campaign } from '../campaign/types.ts';
import { PartialError } from '../errors.ts';
import { runShard, type ShardSpec } from './partial.ts';

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
  partial: string;
  firstSample_s: number;
}

/** Runs each shard in a child process; resolves with the partial files (in shard order) or rejects with the first failure. */
export async function runShardProcesses(c: Campaign, specs: ShardSpec[], dir: string, firstSample_s: number): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const entry = entryScript();
  const runs = specs.map((spec, k) => {
    const job = join(dir, `shard-${k}.job`);
    const partial = join(dir, `shard-${k}.wpart`);
    writeFileSync(job, serialize({ campaign: c, spec, partial, firstSample_s } satisfies ShardJob));
    return new Promise<string>((resolve, reject) => {
      const child = spawn(process.execPath, [entry, '_shard', job], { stdio: ['ignore', 'ignore', 'pipe'] });
      let err = '';
      child.stderr.on('data', (d: Buffer) => { if (err.length < 20000) err += d.toString(); });
      child.once('error', reject);
      child.once('close', (code, signal) => {
        if (code === 0 && existsSync(partial)) resolve(partial);
        else {
          const line = err.split('\n').find((l) => l.startsWith('wakeplane: ')) ?? err.trim().split('\n').filter(Boolean).pop() ?? '';
          reject(new PartialError(line.replace(/^wakeplane: (error: )?/, '') || `reading shard ${k + 1} of ${specs.length} stopped (${signal ?? `exit ${code}`})`));
        }
      });
    });
  });
  const settled = await Promise.allSettled(runs);
  const bad = settled.find((r) => r.status === 'rejected');
  if (bad) throw (bad as PromiseRejectedResult).reason;
  return settled.map((r) => (r as PromiseFulfilledResult<string>).value);
}

/** The child's side: runs the shard described by a job file (the hidden `_shard` command). */
export async function runShardJob(jobFile: string): Promise<void> {
  const job = deserialize(readFileSync(jobFile)) as ShardJob;
  await runShard(job.campaign, job.spec, job.partial, { firstSample_s: job.firstSample_s });
}
