/**
 * The shard side of the command line: `wakeplane run --partial` (a shard by files and time range, or one shard of
 * a shard manifest with --shard-plan/--shard), the campaign a partial names (for `wakeplane merge`) and
 * `wakeplane slurm`.
 */
import { readFileSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { OptionError, PartialError } from '../errors.ts';
import { PartialReader } from '../io/partialFile.ts';
import { parseTime } from '../io/time.ts';
import { campaignFirstSample } from '../pipeline/ingest.ts';
import { runShard, settingsKey, type ShardSpec } from '../pipeline/partial.ts';
import { preflight } from '../pipeline/preflight.ts';
import type { ShardPlanFile } from '../pipeline/slurm.ts';

function timeOption(name: string, v: string | undefined, dflt: number): number {
  if (v === undefined) return dflt;
  const t = parseTime(v);
  if (!Number.isFinite(t)) throw new OptionError(name, `not a time (ISO 8601 UTC, e.g. 2026-05-01T12:00:00Z): ${JSON.stringify(v)}`);
  return t;
}

interface ShardArgs {
  partial?: string;
  files?: string[];
  from?: string;
  until?: string;
  'shard-plan'?: string;
  shard?: number;
  cores?: number;
  quiet: boolean;
}

export async function runShardFromOptions(c: Campaign, a: ShardArgs): Promise<string> {
  let spec: ShardSpec;
  let partial: string;
  let firstSample: number | undefined;
  if (a['shard-plan'] !== undefined || a.shard !== undefined) {
    if (a['shard-plan'] === undefined || a.shard === undefined) throw new OptionError('shard', '--shard-plan and --shard go together');
    if (a.files || a.from || a.until) throw new OptionError('shard-plan', 'the shard manifest gives the files and times: leave out --files, --from and --until');
    let plan: ShardPlanFile;
    try {
      plan = JSON.parse(readFileSync(a['shard-plan'], 'utf8')) as ShardPlanFile;
    } catch (e) {
      throw new OptionError('shard-plan', `${a['shard-plan']}: not a readable shard manifest (${(e as Error).message})`);
    }
    if (plan.kind !== 'shard-plan' || plan.campaign?.name !== c.name) throw new OptionError('shard-plan', `${a['shard-plan']}: not a shard manifest of campaign "${c.name}"`);
    if (plan.campaign.settingsKey !== settingsKey(c)) throw new OptionError('shard-plan', `${a['shard-plan']}: written for other settings of "${c.name}" (the campaign changed since): run wakeplane slurm again`);
    const s = plan.shards[a.shard];
    if (!s || !Number.isInteger(a.shard)) throw new OptionError('shard', `no shard ${a.shard} in ${a['shard-plan']} (0 to ${plan.shards.length - 1})`);
    spec = { files: s.files, from_s: s.from_s ?? -Infinity, to_s: s.to_s ?? Infinity };
    partial = a.partial ? resolve(a.partial) : s.partial;
    firstSample = plan.firstSample_s ?? NaN;
  } else {
    if (a.partial === undefined) throw new OptionError('partial', '--files, --from and --until make a shard: name its partial result file with --partial');
    partial = resolve(a.partial);
    spec = { files: a.files?.flatMap((f) => f.split(',')).filter(Boolean).map((f) => resolve(f)), from_s: timeOption('from', a.from, -Infinity), to_s: timeOption('until', a.until, Infinity) };
    if (!(spec.from_s < spec.to_s)) throw new OptionError('until', 'must be later than --from');
  }
  const r = await runShard(c, spec, partial, { firstSample_s: firstSample });
  return `wrote the partial result ${relative(process.cwd(), r.partial) || r.partial}: ${r.read.toLocaleString('en')} samples read, ${r.windows} windows`;
}

/** The campaign file a partial result was made from. */
export function campaignOfPartial(path: string): string {
  let r: PartialReader;
  try {
    r = PartialReader.open(path);
  } catch (e) {
    throw new PartialError(`${path}: ${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'partial result not found' : (e as Error).message}`);
  }
  try {
    return (r.read(r.index.header as number).meta.campaign as { file: string }).file;
  } finally {
    r.close();
  }
}

interface SlurmArgs {
  dir?: string;
  groups?: number;
  cuts?: string[];
  partition?: string;
  time?: string;
  'merge-time'?: string;
  mem?: string;
  'merge-mem'?: string;
  cpus?: number;
  sbatch?: string[];
  command?: string;
  out?: string;
  'keep-partials'?: boolean;
}

export async function prepareSlurmFromOptions(c: Campaign, a: SlurmArgs): Promise<string> {
  const { prepareSlurm } = await import('../pipeline/slurm.ts');
  const pre = await preflight(c, { outRoot: resolve(a.out ?? c.output.dir), folder: c.name, kind: 'run', data: true, output: false });
  if (pre.errors.length) throw pre.errors[0];
  if (a.groups !== undefined && !(Number.isInteger(a.groups) && a.groups >= 1)) throw new OptionError('groups', 'must be a whole number >= 1');
  const cuts = (a.cuts ?? []).flatMap((x) => x.split(',')).filter(Boolean).map((x) => timeOption('cuts', x, NaN));
  const first = await campaignFirstSample(pre.campaign);
  const dir = a.dir ? resolve(a.dir) : join(resolve(c.output.dir), `${c.name}-slurm`);
  const r = prepareSlurm(c, pre.files.map((f) => f.file), first, {
    dir, fileGroups: a.groups, cuts, partition: a.partition, time: a.time, mergeTime: a['merge-time'], mem: a.mem, mergeMem: a['merge-mem'],
    cpus: a.cpus, extra: a.sbatch, command: a.command, out: a.out, keepPartials: a['keep-partials'],
  });
  const rel = relative(process.cwd(), r.dir) || r.dir;
  return `prepared ${r.shards} shards in ${rel}/ (shards.json, array.sh, merge.sh); submit with: sh ${rel}/submit.sh`;
}
