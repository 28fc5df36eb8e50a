/**
 * End-to-end check of `wakeplane slurm` against a real single-node SLURM cluster (not in the fast suite):
 *   node bin/run-ts.js test/integration/slurm.ts [--keep]
 * 1. Installs slurm-wlm and munge from Debian when sbatch, slurmctld, slurmd or munged is missing (apt-get update
 *    once, then install by name; needs root).
 * 2. Writes a one-node slurm.conf in a temporary folder (its own ports, state and log files; SLURM_CONF points the
 *    client commands at it, /etc/slurm is not touched), creates a munge key if there is none and starts munged,
 *    slurmctld and slurmd unless already running.
 * 3. Simulates a small campaign (three scanners, each instrument's file split in two: six files), runs it once
 *    with --cores 1, prepares the cluster job with `wakeplane slurm` (three file groups, one time cut inside a
 *    window: six array tasks), submits it with submit.sh (the array, then the merge with --dependency=afterok),
 *    waits for both jobs and compares the merged outputs with the single run: every field table byte-identical
 *    (but for the uncertainty budget's columns, which a cut inside a window changes by design: reported),
 *    the sample accounting and the window list equal. Stops the daemons it started. Exits 1 on any mismatch.
 */
import { execFileSync, execSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import { hostname, tmpdir, totalmem } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { stringify } from 'yaml';
import { loadCampaignFile } from '../../src/campaign/load.ts';
import { simulateCampaign } from '../../src/sim/simulate.ts';
import { tinyCampaignObject } from '../helpers/tinyCampaign.ts';
import { BUDGET_COLUMNS } from '../../src/records/tables/fields.ts';

const ROOT = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const keep = process.argv.includes('--keep');
const log = (s: string) => console.log(`[slurm-check] ${s}`);
const have = (cmd: string) => spawnSync('sh', ['-c', `command -v ${cmd}`]).status === 0;
const sh = (cmd: string, env: NodeJS.ProcessEnv = process.env) => execSync(cmd, { encoding: 'utf8', env }).trim();

// 1. Packages.
if (!['sbatch', 'slurmctld', 'slurmd', 'munged'].every(have)) {
  log('installing slurm-wlm and munge from Debian');
  execSync('apt-get update', { stdio: 'inherit' });
  execSync('DEBIAN_FRONTEND=noninteractive apt-get install -y slurm-wlm munge', { stdio: 'inherit' });
}

// 2. A one-node cluster.
const work = mkdtempSync(join(tmpdir(), 'wakeplane-slurm-'));
const conf = join(work, 'slurm.conf');
const host = hostname().split('.')[0];
const cpus = Number(sh('nproc'));
const memMB = Math.floor((totalmem() / 2 ** 20) * 0.8);
for (const d of ['state', 'spool']) mkdirSync(join(work, d));
writeFileSync(conf, [
  'ClusterName=wpcheck', `SlurmctldHost=${host}`, 'SlurmUser=root', 'SlurmdUser=root',
  'SlurmctldPort=16817', 'SlurmdPort=16818', 'AuthType=auth/munge', 'CredType=cred/munge',
  `StateSaveLocation=${work}/state`, `SlurmdSpoolDir=${work}/spool`,
  `SlurmctldPidFile=${work}/slurmctld.pid`, `SlurmdPidFile=${work}/slurmd.pid`,
  `SlurmctldLogFile=${work}/slurmctld.log`, `SlurmdLogFile=${work}/slurmd.log`,
  'ProctrackType=proctrack/linuxproc', 'TaskPlugin=task/none', 'MpiDefault=none', 'ReturnToService=2',
  'SchedulerType=sched/builtin', 'SelectType=select/cons_tres', 'SelectTypeParameters=CR_CPU',
  'JobCompType=jobcomp/none', 'AccountingStorageType=accounting_storage/none', 'JobAcctGatherType=jobacct_gather/none',
  `NodeName=${host} CPUs=${cpus} RealMemory=${memMB} State=UNKNOWN`,
  `PartitionName=wpcheck Nodes=${host} Default=YES MaxTime=INFINITE State=UP`, '',
].join('\n'));
const env = { ...process.env, SLURM_CONF: conf };
log(`${sh('sbatch --version', env)}; ${sh('munged --version 2>&1 | head -1')}`);
const started: string[] = [];
if (!existsSync('/etc/munge/munge.key')) {
  log('creating /etc/munge/munge.key');
  execSync('mkdir -p /etc/munge && dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 2>/dev/null && chown munge:munge /etc/munge/munge.key && chmod 0400 /etc/munge/munge.key');
}
if (spawnSync('pgrep', ['-x', 'munged']).status !== 0) {
  execSync('mkdir -p /run/munge && chown munge:munge /run/munge && runuser -u munge -- /usr/sbin/munged');
  log('started munged');
  started.push('munged');
}
execFileSync('/usr/sbin/slurmctld', ['-f', conf], { env });
execFileSync('/usr/sbin/slurmd', ['-f', conf], { env });
started.push('slurmctld', 'slurmd');
/** Stops the daemons this script started (by their pid files) and waits until they are gone. */
const stop = () => {
  const pids: number[] = [];
  for (const name of ['slurmd', 'slurmctld']) {
    const pidFile = join(work, `${name}.pid`);
    if (existsSync(pidFile)) pids.push(Number(readFileSync(pidFile, 'utf8').trim()));
  }
  if (started.includes('munged')) {
    const pid = sh('cat /run/munge/munged.pid 2>/dev/null || true');
    if (pid) pids.push(Number(pid));
  }
  for (const pid of pids) { try { process.kill(pid); } catch { /* gone */ } }
  const alive = (pid: number) => { try { process.kill(pid, 0); return true; } catch { return false; } };
  for (let k = 0; k < 100 && pids.some(alive); k++) spawnSync('sleep', ['0.1']);
};
let failures = 0;
try {
  for (let k = 0; ; k++) {
    const info = spawnSync('sinfo', ['-h', '-o', '%T'], { env, encoding: 'utf8' });
    if (info.status === 0 && /idle/.test(info.stdout)) break;
    if (k > 60) throw new Error(`the node did not come up: ${info.stdout}${info.stderr}\n${readFileSync(join(work, 'slurmctld.log'), 'utf8').slice(-2000)}`);
    spawnSync('sleep', ['1']);
  }
  log(`one-node cluster up: ${sh('sinfo -h', env)}`);

  // 3. A small campaign, run once, then as a cluster job.
  const dir = join(work, 'campaign');
  mkdirSync(join(dir, 'data'), { recursive: true });
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(tinyCampaignObject({ name: 'slurm-check', windows: { kind: 'fixed', length_s: 600, anchor: 'first-sample' } })));
  await simulateCampaign(loadCampaignFile(file));
  // Each instrument's file in two, listed under the instrument, so that file groups split instruments too.
  const doc = tinyCampaignObject({ name: 'slurm-check', windows: { kind: 'fixed', length_s: 600, anchor: 'first-sample' } }) as { instruments: { id: string; files: string[] }[] };
  for (const ins of doc.instruments) {
    const [head, ...rows] = readFileSync(join(dir, 'data', `${ins.id}.csv`), 'utf8').trimEnd().split('\n');
    const cut = Math.floor(rows.length / 2);
    writeFileSync(join(dir, 'data', `${ins.id}1.csv`), [head, ...rows.slice(0, cut)].join('\n') + '\n');
    writeFileSync(join(dir, 'data', `${ins.id}2.csv`), [head, ...rows.slice(cut)].join('\n') + '\n');
    ins.files = [`data/${ins.id}1.csv`, `data/${ins.id}2.csv`];
  }
  writeFileSync(file, stringify(doc));
  const cli = (args: string[]) => execFileSync(process.execPath, [join(ROOT, 'bin', 'wakeplane.js'), ...args], { encoding: 'utf8', env }).trim();
  cli(['run', file, '--cores', '1', '--no-images', '--quiet', '--out', join(work, 'single')]);
  log('single run done');
  const c = loadCampaignFile(file);
  const firstLine = readFileSync(join(dir, 'data', 'a1.csv'), 'utf8').split('\n')[1];
  const cut = new Date((Number(firstLine.split(',')[0]) + 905) * 1000).toISOString(); // inside the second window
  log(cli(['slurm', file, '--dir', join(work, 'job'), '--groups', '3', '--cuts', cut, '--partition', 'wpcheck', '--time', '00:10:00',
    '--mem', '1G', '--cpus', '1', '--out', join(work, 'merged')]));
  const submitted = sh(`sh ${join(work, 'job', 'submit.sh')}`, env);
  log(submitted);
  const [, arrayId, mergeId] = /array job (\d+) and merge job (\d+)/.exec(submitted) ?? [];
  // The merge job waits for the array: its dependency as the controller holds it, and the array's tasks.
  const mergeInfo = spawnSync('scontrol', ['show', 'job', '-o', mergeId], { env, encoding: 'utf8' }).stdout;
  log(`merge job ${mergeId}: ${/Dependency=\S+/.exec(mergeInfo)?.[0] ?? '(already finished: no dependency listed)'}; array job ${arrayId}: ${/ArrayTaskId=\S+/.exec(spawnSync('scontrol', ['show', 'job', '-o', arrayId], { env, encoding: 'utf8' }).stdout)?.[0] ?? ''}`);
  if (!/Dependency=afterok:/.test(mergeInfo)) { failures++; log('MISMATCH: the merge job does not depend on the array (afterok)'); }
  const t0 = Date.now();
  for (;;) {
    const q = sh(`squeue -h -j ${arrayId},${mergeId} -o '%i %T' 2>/dev/null || true`, env);
    if (!q) break;
    if (Date.now() - t0 > 600_000) throw new Error(`jobs still queued after 10 minutes:\n${q}`);
    spawnSync('sleep', ['1']);
  }
  log(`jobs finished in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  const mergeLog = join(work, 'job', 'logs', 'merge.log');
  if (existsSync(mergeLog)) log(`merge log: ${readFileSync(mergeLog, 'utf8').trim().split('\n').join(' | ')}`);
  const single = join(work, 'single', c.name), merged = join(work, 'merged', c.name);
  if (!existsSync(join(merged, 'manifest.json'))) {
    for (const f of readdirSync(join(work, 'job', 'logs'))) log(`${f}: ${readFileSync(join(work, 'job', 'logs', f), 'utf8').trim()}`);
    throw new Error('the merge job left no result');
  }
  const tables = (d: string) => readdirSync(join(d, 'fields')).filter((f) => f.endsWith('.csv')).sort();
  const a = tables(single), b = tables(merged);
  if (a.join() !== b.join()) { failures++; log(`MISMATCH: field tables ${a.length} vs ${b.length}`); }
  // Every column byte-identical but the uncertainty budget's (the last BUDGET_COLUMNS): its lag and burst sums lose
  // the pairs across a shard cut (grid/accumulator.ts), and this job cuts windows in time; those are reported.
  const nb = BUDGET_COLUMNS.length;
  const strip = (t: string) => t.split('\n').map((l) => (l ? l.split(',').slice(0, -nb).join(',') : l)).join('\n');
  let same = 0, sameBudget = 0;
  for (const f of a) {
    const x = readFileSync(join(single, 'fields', f), 'utf8'), y = readFileSync(join(merged, 'fields', f), 'utf8');
    if (x === y) sameBudget++;
    if (strip(x) === strip(y)) same++;
    else { failures++; log(`MISMATCH: fields/${f} differs outside the budget columns`); }
  }
  log(`field tables with the budget columns too: ${sameBudget} of ${a.length} byte-identical (windows cut in time may differ there, by design)`);
  const ma = JSON.parse(readFileSync(join(single, 'manifest.json'), 'utf8')), mb = JSON.parse(readFileSync(join(merged, 'manifest.json'), 'utf8'));
  const accountsSame = JSON.stringify(ma.samples) === JSON.stringify(mb.samples);
  const windowsSame = JSON.stringify(ma.windows) === JSON.stringify(mb.windows);
  if (!accountsSame) { failures++; log('MISMATCH: sample accounting'); }
  if (!windowsSame) { failures++; log('MISMATCH: window list'); }
  const plan = JSON.parse(readFileSync(join(work, 'job', 'shards.json'), 'utf8'));
  const left = readdirSync(join(work, 'job', 'partials')).filter((f) => f.endsWith('.wpart'));
  log(`${plan.shards.length} array tasks (3 file groups x 2 time slices) + 1 merge job (afterok)`);
  log(`field tables: ${same} of ${a.length} byte-identical (all columns but the ${nb} budget columns); accounting ${accountsSame ? 'equal' : 'DIFFERENT'} (read ${ma.samples.total.read}, accepted ${mb.samples.total.accepted}); windows ${windowsSame ? 'equal' : 'DIFFERENT'} (${ma.windows.length})`);
  log(`partials left after the merge: ${left.length}`);
} catch (e) {
  failures++;
  log(`FAILED: ${(e as Error).message}`);
} finally {
  stop();
  if (!keep && failures === 0) rmSync(work, { recursive: true, force: true, maxRetries: 10, retryDelay: 200 });
  else log(`work folder kept: ${work}`);
}
log(failures === 0 ? 'PASS' : `FAIL (${failures} problems)`);
process.exit(failures === 0 ? 0 : 1);
