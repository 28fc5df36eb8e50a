/**
 * A campaign prepared for a SLURM cluster: a shard manifest (shards.json), a job-array script whose task k runs
 * shard k (`wakeplane run <campaign> --shard-plan shards.json --shard k`, writing partials/shard-k.wpart), a merge
 * script (`wakeplane merge`), and submit.sh, which submits the array and then the merge with
 * `--dependency=afterok:<array job>` so that the merge starts only when every task succeeded.
 * Shards: the data files shared into `fileGroups` groups of about equal size (partial.ts, shardProcesses.ts), each
 * optionally cut at the given times into time slices; every shard reads its files' rows of its slice.
 * The scripts call the same node and entry script as the command that wrote them (override with `command`), so the
 * cluster's nodes must see this installation, the campaign and its data at the same paths (a shared file system).
 */
import { chmodSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { existsSync } from 'node:fs';
import type { Campaign } from '../campaign/types.ts';
import { OptionError, OutputError } from '../errors.ts';
import { isoTime } from '../io/time.ts';
import type { ShardSpec } from './partial.ts';
import { settingsKey } from './partial.ts';
import { shareFiles } from './shardProcesses.ts';

export interface SlurmOptions {
  /** Folder for the scripts, shard manifest, partials and logs. */
  dir: string;
  /** Groups of data files (default: as many as files, at most 64). */
  fileGroups?: number;
  /** Time cuts, Unix s, ascending: each file group is read in slices between them. */
  cuts?: number[];
  partition?: string;
  /** Time limit per task, SLURM format (e.g. 01:00:00). */
  time?: string;
  mergeTime?: string;
  /** Memory per task, SLURM format (e.g. 4G). */
  mem?: string;
  mergeMem?: string;
  cpus?: number;
  /** Further `#SBATCH` lines for both jobs (e.g. --account=...). */
  extra?: string[];
  /** How the nodes start wakeplane (default: this node and entry script). */
  command?: string;
  /** The merged results' output root (default: the campaign's output.dir). */
  out?: string;
  /** Keep the partials after the merge. */
  keepPartials?: boolean;
}

export interface ShardPlanFile {
  tool: 'wakeplane';
  kind: 'shard-plan';
  campaign: { name: string; file: string; settingsKey: string };
  firstSample_s: number | null;
  shards: { index: number; files: string[]; from_s: number | null; to_s: number | null; from: string | null; to: string | null; partial: string }[];
}

function entryCommand(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return `${sh(process.execPath)} ${sh(join(dir, 'bin', 'wakeplane.js'))}`;
}

/** A word quoted for sh. */
function sh(s: string): string {
  return /^[\w@%+=:,./-]+$/.test(s) ? s : `'${s.replace(/'/g, `'\\''`)}'`;
}

const RESOURCE = /^[\w:.,=+-]+$/;

/** Shards of a campaign: file groups times time slices. */
export function planShards(files: string[], fileGroups: number, cuts: number[]): ShardSpec[] {
  const bounds = [-Infinity, ...cuts, Infinity];
  for (let k = 1; k < bounds.length; k++) if (!(bounds[k] > bounds[k - 1])) throw new OptionError('cuts', 'time cuts must be ascending and distinct');
  const groups = shareFiles(files, fileGroups);
  const out: ShardSpec[] = [];
  for (const g of groups) for (let k = 0; k + 1 < bounds.length; k++) out.push({ files: g, from_s: bounds[k], to_s: bounds[k + 1] });
  return out;
}

/** Writes the shard manifest and the scripts; returns what was written. */
export function prepareSlurm(c: Campaign, files: string[], firstSample_s: number, o: SlurmOptions): { dir: string; shards: number; files: string[] } {
  if (c.sourceFile === '<memory>') throw new OptionError('campaign', 'a cluster job needs the campaign in a file');
  for (const [k, v] of Object.entries({ partition: o.partition, time: o.time, 'merge-time': o.mergeTime, mem: o.mem, 'merge-mem': o.mergeMem })) {
    if (v !== undefined && !RESOURCE.test(v)) throw new OptionError(k, `not a SLURM value: ${JSON.stringify(v)}`);
  }
  if (o.cpus !== undefined && !(Number.isInteger(o.cpus) && o.cpus >= 1)) throw new OptionError('cpus', 'must be a whole number >= 1');
  const dir = resolve(o.dir);
  // Never touch files the tool did not make: the folder must be new, empty, or one this command wrote before.
  if (existsSync(dir) && readdirSync(dir).length > 0) {
    let ours = false;
    try { ours = (JSON.parse(readFileSync(join(dir, 'shards.json'), 'utf8')) as { kind?: string }).kind === 'shard-plan'; } catch { /* not ours */ }
    if (!ours) throw new OutputError(dir, 'exists and is not a folder wakeplane slurm wrote; left alone. Choose another --dir');
  }
  const specs = planShards(files, o.fileGroups ?? Math.min(files.length, 64), o.cuts ?? []);
  mkdirSync(join(dir, 'partials'), { recursive: true });
  mkdirSync(join(dir, 'logs'), { recursive: true });
  const plan: ShardPlanFile = {
    tool: 'wakeplane', kind: 'shard-plan',
    campaign: { name: c.name, file: c.sourceFile, settingsKey: settingsKey(c) },
    firstSample_s: Number.isFinite(firstSample_s) ? firstSample_s : null,
    shards: specs.map((s, k) => ({
      index: k, files: s.files!, from_s: Number.isFinite(s.from_s) ? s.from_s : null, to_s: Number.isFinite(s.to_s) ? s.to_s : null,
      from: Number.isFinite(s.from_s) ? isoTime(s.from_s) : null, to: Number.isFinite(s.to_s) ? isoTime(s.to_s) : null,
      partial: join(dir, 'partials', `shard-${k}.wpart`),
    })),
  };
  const cmd = o.command ?? entryCommand();
  const common = (name: string, time?: string, mem?: string) => [
    '#!/bin/sh',
    `#SBATCH --job-name=${name}`,
    ...(o.partition ? [`#SBATCH --partition=${o.partition}`] : []),
    ...(time ? [`#SBATCH --time=${time}`] : []),
    ...(mem ? [`#SBATCH --mem=${mem}`] : []),
    `#SBATCH --cpus-per-task=${o.cpus ?? 1}`,
    ...(o.extra ?? []).map((e) => `#SBATCH ${e}`),
  ];
  const jobName = `wp-${c.name}`.replace(/[^\w.-]/g, '_').slice(0, 40);
  const array = [
    ...common(jobName, o.time, o.mem),
    `#SBATCH --array=0-${specs.length - 1}`,
    `#SBATCH --output=${join(dir, 'logs', 'shard-%a.log')}`,
    '# One shard of the campaign per array task (wakeplane slurm wrote this; see shards.json).',
    'set -e',
    `exec ${cmd} run ${sh(c.sourceFile)} --shard-plan ${sh(join(dir, 'shards.json'))} --shard "$SLURM_ARRAY_TASK_ID" --quiet`,
    '',
  ].join('\n');
  const merge = [
    ...common(`${jobName}-merge`, o.mergeTime ?? o.time, o.mergeMem ?? o.mem),
    `#SBATCH --output=${join(dir, 'logs', 'merge.log')}`,
    '# Merges the partial results of every shard into the outputs of one run (after the whole array succeeded).',
    'set -e',
    `exec ${cmd} merge ${specs.map((_, k) => sh(join(dir, 'partials', `shard-${k}.wpart`))).join(' ')} --campaign ${sh(c.sourceFile)}${o.out ? ` --out ${sh(resolve(o.out))}` : ''}${o.keepPartials ? ' --keep-partials' : ''}`,
    '',
  ].join('\n');
  const submit = [
    '#!/bin/sh',
    '# Submits the shard array, then the merge, which waits for every task to succeed (afterok).',
    'set -e',
    `cd ${sh(dir)}`,
    'array=$(sbatch --parsable array.sh)',
    'array=${array%%;*}',
    'merge=$(sbatch --parsable --dependency=afterok:$array merge.sh)',
    'merge=${merge%%;*}',
    'echo "submitted array job $array and merge job $merge"',
    '',
  ].join('\n');
  const written = ['shards.json', 'array.sh', 'merge.sh', 'submit.sh'].map((f) => join(dir, f));
  writeFileSync(written[0], JSON.stringify(plan, null, 2) + '\n');
  writeFileSync(written[1], array);
  writeFileSync(written[2], merge);
  writeFileSync(written[3], submit);
  for (const f of written.slice(1)) chmodSync(f, 0o755);
  return { dir, shards: specs.length, files: written };
}
