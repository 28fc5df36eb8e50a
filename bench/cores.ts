/**
 * Every core against one (`npm run bench` prints it; alone: `node bin/run-ts.js bench/cores.ts [--rows N] [--runs N]`).
 *
 * The benchmark campaign (bench/generate.ts: six data files) run as a child process, end to end, alternately with
 * `--cores 1` (one process reads every file) and with the machine's cores (os.availableParallelism(): the files
 * shared out to child processes, partial results merged exactly), --runs times each (default 3), so that a drift
 * of the machine's speed touches both alike. Prints the medians with their range, the speed-up of the medians and
 * pair by pair, the load average before and after (the machine may be shared), and whether the two runs' field
 * tables are byte-identical (they must be). Target: a speed-up >= 1.7 on two cores.
 */
import { spawn } from 'node:child_process';
import { existsSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse } from 'yaml';
import { median } from '../src/qc/robust.ts';
import { BUDGET_COLUMNS } from '../src/records/tables/fields.ts';
import { generateBench, rowsFromArgs, type BenchData } from './generate.ts';

const ROOT = resolve(fileURLToPath(new URL('..', import.meta.url)));
export const TARGET_SPEEDUP = 1.7;

/** Wall seconds, and CPU seconds (user + system of the command and its children, from /usr/bin/time when present). */
function run(args: string[]): Promise<{ wall: number; cpu: number }> {
  const timed = existsSync('/usr/bin/time');
  const cmd = [process.execPath, join(ROOT, 'bin', 'wakeplane.js'), ...args];
  return new Promise((res, rej) => {
    const t0 = process.hrtime.bigint();
    const p = timed ? spawn('/usr/bin/time', ['-f', 'cpu %U %S', ...cmd], { cwd: ROOT, stdio: ['ignore', 'ignore', 'pipe'] })
      : spawn(cmd[0], cmd.slice(1), { cwd: ROOT, stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    p.stderr.on('data', (d) => (err += d));
    p.on('error', rej);
    p.on('close', (code) => {
      if (code !== 0) return rej(new Error(`wakeplane ${args.join(' ')}: exit ${code}: ${err.slice(-600)}`));
      const m = /cpu ([\d.]+) ([\d.]+)\s*$/.exec(err);
      res({ wall: Number(process.hrtime.bigint() - t0) / 1e9, cpu: m ? Number(m[1]) + Number(m[2]) : NaN });
    });
  });
}

function tables(dir: string): Map<string, string> {
  const m = new Map<string, string>();
  for (const f of readdirSync(join(dir, 'fields')).sort()) if (f.endsWith('.csv')) m.set(f, readFileSync(join(dir, 'fields', f), 'utf8'));
  return m;
}

const fmt = (x: number, d = 2) => x.toFixed(d);
const spread = (xs: number[], d = 2) => `${fmt(median(xs), d)} [${fmt(Math.min(...xs), d)} - ${fmt(Math.max(...xs), d)}]`;

export async function coresBench(d: BenchData, runs: number, out: (s: string) => void): Promise<void> {
  const cores = availableParallelism();
  const doc = parse(readFileSync(d.campaign, 'utf8')) as { name: string };
  const one = join(d.dir, 'cores-1'), all = join(d.dir, `cores-${cores}`);
  const t1: number[] = [], tn: number[] = [], c1: number[] = [], cn: number[] = [];
  const load0 = loadavg();
  console.log(`5. every core: whole job (--no-images) with --cores 1 and --cores ${cores}, alternately, ${runs} runs each`);
  for (let k = 0; k < runs; k++) {
    rmSync(one, { recursive: true, force: true });
    rmSync(all, { recursive: true, force: true });
    const a1 = await run(['run', d.campaign, '--quiet', '--no-images', '--cores', '1', '--out', one]);
    const an = await run(['run', d.campaign, '--quiet', '--no-images', '--cores', String(cores), '--out', all]);
    t1.push(a1.wall); tn.push(an.wall); c1.push(a1.cpu); cn.push(an.cpu);
    console.log(`  run ${k + 1}: --cores 1 ${fmt(a1.wall, 3)} s (CPU ${fmt(a1.cpu)} s), --cores ${cores} ${fmt(an.wall, 3)} s (CPU ${fmt(an.cpu)} s): ${fmt(a1.wall / an.wall)}x; load ${loadavg().map((x) => fmt(x)).join(' ')}`);
  }
  const load1 = loadavg();
  const a = tables(join(one, doc.name)), b = tables(join(all, doc.name));
  // All columns but the uncertainty budget's (the last BUDGET_COLUMNS) must match; those follow each key's sample
  // order and differ where one instrument's files went to different processes (README, sharded runs).
  const strip = (t: string) => t.split('\n').map((l) => (l ? l.split(',').slice(0, -BUDGET_COLUMNS.length).join(',') : l)).join('\n');
  const same = a.size === b.size && [...a].every(([n, t]) => b.has(n) && strip(b.get(n)!) === strip(t));
  const sameBudget = [...a].filter(([n, t]) => b.get(n) === t).length;
  const speedup = median(t1) / median(tn);
  out(`every core (${cores} available; ${d.files.length} data files; load average 1/5/15 min ${load0.map((x) => fmt(x)).join(' ')} before, ${load1.map((x) => fmt(x)).join(' ')} after)`);
  out(`  --cores 1              ${spread(t1, 3)} s wall, CPU ${spread(c1)} s (${fmt(median(c1) / median(t1))} cores busy on average)`);
  out(`  --cores ${cores}              ${spread(tn, 3)} s wall, CPU ${spread(cn)} s`);
  // With every core busy the wall time cannot fall below the CPU time over the cores; --cores 1 itself keeps more
  // than one core busy part of the time (hashing, NetCDF writing and garbage collection on other threads), so this
  // ratio of CPU seconds is an upper bound of the speed-up on an otherwise idle machine, independent of other load.
  out(`  bound                  ${fmt(median(c1) / (median(cn) / cores))}x = CPU of --cores 1 / (CPU of --cores ${cores} / ${cores}): the speed-up cannot exceed it`);
  out(`  speed-up               ${fmt(speedup)} on the medians; pair by pair ${spread(t1.map((x, k) => x / tn[k]))}   ${speedup >= TARGET_SPEEDUP ? 'PASS' : 'MISS'} (>= ${TARGET_SPEEDUP})`);
  out(`  field tables           ${a.size} files, ${same ? 'byte-identical' : 'DIFFERENT'} between --cores 1 and --cores ${cores} but for the budget columns; with them ${sameBudget} of ${a.size}`);
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const k = process.argv.indexOf('--runs');
  const runs = k > 0 ? Number(process.argv[k + 1]) : 3;
  const d = await generateBench(rowsFromArgs(process.argv), undefined, (s) => console.log(s));
  const lines: string[] = [];
  await coresBench(d, runs, (s) => lines.push(s));
  console.log(lines.join('\n'));
}
