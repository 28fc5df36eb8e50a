/**
 * The commands. Each handler loads and validates its inputs, calls the library, and prints a short summary. Every
 * positional and option carries a description (test/faults/cli.test.ts checks the help).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Argv } from 'yargs';
import { loadCampaignFile, campaignJsonSchema } from '../campaign/load.ts';
import type { Campaign } from '../campaign/types.ts';
import { OptionError, Problems } from '../errors.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { campaignInputs, openStaging } from '../pipeline/outputFolder.ts';
import { preflight } from '../pipeline/preflight.ts';
import { defaultCores, PARALLEL_MIN_BYTES, runCampaign, type RunResult } from '../pipeline/run.ts';
import { formatRunSummary } from './summary.ts';
import { defaultStages } from '../pipeline/stages.ts';
import { createProgress } from './progress.ts';
import type { PlanSummary } from '../plan/index.ts';
import type { WindowImages } from '../campaign/figures.ts';

// The simulator, the planner and (through the stages) the image stack load only in the commands that use them.
const simulator = () => import('../sim/simulate.ts');
const planner = () => import('../pipeline/plan.ts');

/** Every command, in the order of the help. */
export const COMMAND_NAMES = ['demo', 'run', 'merge', 'slurm', 'render', 'check', 'plan', 'simulate', 'schema'];
/** Commands not in the help: the child process of a run on several cores. */
export const HIDDEN_COMMANDS = ['_shard'];

/** The package's own folder: the nearest one above this module holding package.json (src/cli/ or dist/). */
function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return dir;
}
const REPO_ROOT = packageRoot();
export const DEMO_CAMPAIGN = join(REPO_ROOT, 'scenarios', 'quillmoor', 'campaign.yaml');
/**
 * The demos, in order: three scanners crossing in planes behind one turbine; a site with profilers, nacelle
 * instruments and a tracker; a row of three turbines on rolling ground with their power series.
 */
export const DEMO_CAMPAIGNS = [DEMO_CAMPAIGN, join(REPO_ROOT, 'scenarios', 'fernhollow', 'campaign.yaml'), join(REPO_ROOT, 'scenarios', 'tarnwick', 'campaign.yaml')];

interface Common {
  out?: string;
  images?: boolean;
  quiet: boolean;
  clean: boolean;
  'window-images'?: string | string[];
}

/** The --window-images choices (none | all | every:N | 0,3,7, and bins:...), parsed; {} when not given. */
async function windowImagesOption(a: { 'window-images'?: string | string[] }): Promise<{ windowImages?: WindowImages; binImages?: WindowImages }> {
  // Given twice (windows and bins), yargs collects the values in an array.
  const t = a['window-images'];
  if (t === undefined || t.length === 0) return {};
  const { parseImageSelection } = await import('../render/figureSelection.ts');
  return parseImageSelection(t);
}

const WINDOW_IMAGES_HELP = 'images of single windows: none, all, every:N or a list such as 0,3,7; of condition bins: bins:all, bins:0,2 (repeat the option for both; default: the campaign\'s output.figures)';

function say(quiet: boolean, text: string): void {
  if (!quiet) process.stdout.write(text.endsWith('\n') ? text : text + '\n');
}

function dataMissing(c: Campaign): boolean {
  return c.instruments.some((i) => i.files.some((f) => !existsSync(f))) || (c.site.terrain !== undefined && !existsSync(c.site.terrain.file))
    || c.turbines.some((t) => t.series !== undefined && !existsSync(t.series.file));
}

/** The output root: --out against the working directory, else the campaign's output.dir (already absolute). */
function outRootOf(c: Campaign, out: string | undefined): string {
  return resolve(out ?? c.output.dir);
}

/** The --cores option: a whole number >= 1, or undefined (every core). */
function coresOption(v: unknown): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1) throw new OptionError('cores', `must be a whole number >= 1 (got ${JSON.stringify(v)})`);
  return n;
}

async function runAndReport(c: Campaign, a: Common & { plan?: boolean; cores?: number; parallelMinBytes?: number; partials?: string[]; keepPartials?: boolean }): Promise<RunResult> {
  const progress = createProgress(process.stderr, { quiet: a.quiet });
  const plan = a.plan === true;
  const selection = await windowImagesOption(a);
  const res = await runCampaign(c, { outRoot: a.out, images: a.images, clean: a.clean, progress, stages: defaultStages({ plan, ...selection }), cores: a.cores, parallelMinBytes: a.parallelMinBytes, partials: a.partials, keepPartials: a.keepPartials });
  say(a.quiet, formatRunSummary(res));
  const summary = res.shared.plan as PlanSummary | undefined;
  if (summary) say(a.quiet, (await planner()).formatPlanSummary(summary, relative(process.cwd(), res.runDir) || res.runDir));
  return res;
}

const CAMPAIGN = { type: 'string', describe: 'campaign file (YAML or JSON)' } as const;

export function commands(y: Argv): Argv {
  const common = (yy: Argv) =>
    yy
      .option('out', { type: 'string', describe: 'output root folder, relative to the working directory (default: the campaign\'s output.dir, relative to the campaign file)' })
      .option('images', { type: 'boolean', describe: 'render images and the report (default: the campaign\'s output.images; --no-images to skip)' })
      .option('clean', { type: 'boolean', default: false, describe: 'also remove unfinished folders of stopped runs whose state cannot be proven (another host, an unknown process)' })
      .option('quiet', { type: 'boolean', default: false, describe: 'print nothing but errors' })
      .option('window-images', { type: 'string', describe: WINDOW_IMAGES_HELP });
  return y
    .command(
      'demo',
      'simulate the built-in demo campaigns if their data are missing, then run the whole job and the planner on each',
      (yy) => common(yy).option('regenerate', { type: 'boolean', default: false, describe: 'simulate again even if the data exist' }),
      async (a) => {
        for (const file of DEMO_CAMPAIGNS) {
          const c = loadCampaignFile(file);
          if (a.regenerate || dataMissing(c)) {
            say(a.quiet, `simulating the demo campaign "${c.name}" (deterministic from its seed) ...`);
            const s = await (await simulator()).simulateCampaign(c);
            (await import('../pipeline/simulatedFiles.ts')).recordSimulation(c); // so that `simulate` may redo them
            say(a.quiet, `  wrote ${Object.values(s.rows).reduce((x, y) => x + y, 0).toLocaleString('en')} samples in ${s.windows} windows; truth in ${relative(process.cwd(), s.truthDir)}`);
          }
          await runAndReport(c, { ...(a as unknown as Common), plan: true });
        }
      },
    )
    .command(
      'run <campaign>',
      'process a campaign: read, quality-control, grid, retrieve, analyse the wake, write tables, images and report',
      (yy) =>
        common(yy)
          .positional('campaign', CAMPAIGN)
          .option('plan', { type: 'boolean', default: false, describe: 'also run the planner on the campaign and put its outputs in the report' })
          .option('cores', { type: 'number', describe: 'processes reading the data files (default: every core on machines with 4 or more, when the data files hold 32 MiB or more; 1 reads them in this process)' })
          .option('partial', { type: 'string', describe: 'read only a shard (--files, --from, --until) and write its partial result to this file, for `wakeplane merge`' })
          .option('files', { type: 'string', array: true, describe: 'with --partial: the data files of the shard (paths as in the campaign, relative to the working directory; default: all)' })
          .option('from', { type: 'string', describe: 'with --partial: the shard\'s first time (ISO 8601 UTC, inclusive; default: the beginning)' })
          .option('until', { type: 'string', describe: 'with --partial: the shard\'s end time (ISO 8601 UTC, exclusive; default: the end)' })
          .option('shard-plan', { type: 'string', describe: 'a shard manifest (shards.json written by `wakeplane slurm`); with --shard, run that shard' })
          .option('shard', { type: 'number', describe: 'with --shard-plan: the shard to run (0-based; a job array\'s task id)' }),
      async (a) => {
        const c = loadCampaignFile(a.campaign as string);
        const shardOpts = ['partial', 'files', 'from', 'until', 'shard-plan', 'shard'].filter((k) => a[k] !== undefined);
        if (shardOpts.length) {
          const { runShardFromOptions } = await import('./shardCommand.ts');
          const r = await runShardFromOptions(c, a as never);
          say(a.quiet as boolean, r);
          return;
        }
        // Every core by default, for campaigns large enough to gain from it; --cores N as asked.
        const cores = coresOption(a.cores);
        await runAndReport(c, { ...(a as unknown as Common & { plan: boolean }), cores: cores ?? defaultCores(availableParallelism()), parallelMinBytes: cores === undefined ? PARALLEL_MIN_BYTES : 0 });
      },
    )
    .command(
      'merge <partials..>',
      'merge the partial results of a sharded run into the outputs of one run over everything (field tables identical)',
      (yy) =>
        common(yy)
          .positional('partials', { type: 'string', array: true, describe: 'partial result files (.wpart) written by `wakeplane run --partial` or a cluster job' })
          .option('campaign', { type: 'string', describe: 'the campaign file (default: the one the partials name)' })
          .option('keep-partials', { type: 'boolean', default: false, describe: 'keep the partial files after a successful merge (default: removed)' }),
      async (a) => {
        const { campaignOfPartial } = await import('./shardCommand.ts');
        const partials = (a.partials as string[]).map((p) => resolve(p));
        const c = loadCampaignFile((a.campaign as string | undefined) ?? campaignOfPartial(partials[0]));
        await runAndReport(c, { ...(a as unknown as Common), partials, keepPartials: a['keep-partials'] as boolean });
      },
    )
    .command(
      'slurm <campaign>',
      'prepare a SLURM job: shard manifest, a job-array script (one shard per task) and a merge job that waits for the array',
      (yy) =>
        yy
          .positional('campaign', CAMPAIGN)
          .option('dir', { type: 'string', describe: 'folder for the scripts, partials and logs (default: <output.dir>/<name>-slurm)' })
          .option('groups', { type: 'number', describe: 'groups of data files, of about equal size (default: one per file, at most 64)' })
          .option('cuts', { type: 'string', array: true, describe: 'times (ISO 8601 UTC) at which each group is also cut into time slices' })
          .option('partition', { type: 'string', describe: 'SLURM partition of both jobs' })
          .option('time', { type: 'string', describe: 'time limit of each shard task (SLURM format, e.g. 02:00:00)' })
          .option('merge-time', { type: 'string', describe: 'time limit of the merge job (default: --time)' })
          .option('mem', { type: 'string', describe: 'memory of each shard task (e.g. 4G)' })
          .option('merge-mem', { type: 'string', describe: 'memory of the merge job (default: --mem)' })
          .option('cpus', { type: 'number', describe: 'CPUs per task (default 1)' })
          .option('sbatch', { type: 'string', array: true, describe: 'further #SBATCH options for both jobs, e.g. --sbatch=--account=wind' })
          .option('command', { type: 'string', describe: 'how the nodes start wakeplane (default: this node and entry script)' })
          .option('out', { type: 'string', describe: 'output root of the merged results (default: the campaign\'s output.dir)' })
          .option('keep-partials', { type: 'boolean', default: false, describe: 'keep the partial files after the merge' })
          .option('quiet', { type: 'boolean', default: false, describe: 'print nothing but errors' }),
      async (a) => {
        const c = loadCampaignFile(a.campaign as string);
        const { prepareSlurmFromOptions } = await import('./shardCommand.ts');
        say(a.quiet as boolean, await prepareSlurmFromOptions(c, a as never));
      },
    )
    .command(
      '_shard <job>',
      false,
      (yy) => yy.positional('job', { type: 'string', describe: 'job file' }),
      async (a) => {
        const { runShardJob } = await import('../pipeline/shardProcesses.ts');
        await runShardJob(a.job as string);
      },
    )
    .command(
      'render <folder>',
      'redo the figures and the report of a finished run folder from its tables, without reading the samples again',
      (yy) =>
        yy
          .positional('folder', { type: 'string', describe: 'run folder (holding manifest.json)' })
          .option('window-images', { type: 'string', describe: WINDOW_IMAGES_HELP })
          .option('quiet', { type: 'boolean', default: false, describe: 'print nothing but errors' }),
      async (a) => {
        const selection = await windowImagesOption(a as { 'window-images'?: string | string[] });
        const { renderRunFolder } = await import('../pipeline/renderFolder.ts');
        const progress = createProgress(process.stderr, { quiet: a.quiet as boolean });
        const r = await renderRunFolder(a.folder as string, { ...selection, progress });
        const rel = relative(process.cwd(), r.runDir);
        const where = rel && !rel.startsWith('..') ? rel : r.runDir;
        say(a.quiet as boolean, `rendered ${where}/: ${r.images} figures (SVG and PNG) and report.html in ${r.seconds.toFixed(1)} s${r.removed ? `; ${r.removed} files of images no longer drawn removed` : ''}${r.kept ? `; ${r.kept} files of figures it does not redo (profiles, nacelle, trackers, power gain) kept as the run drew them` : ''}`);
      },
    )
    .command(
      'check <campaign>',
      'validate a campaign and everything a run would read (data files, headers, series, output folder); print it as resolved; exit 1 when a run would fail',
      (yy) =>
        yy
          .positional('campaign', CAMPAIGN)
          .option('out', { type: 'string', describe: 'output root folder to check, as for run (default: the campaign\'s output.dir)' }),
      async (a) => {
        const c = loadCampaignFile(a.campaign as string);
        const outRoot = outRootOf(c, a.out as string | undefined);
        const pre = await preflight(c, { outRoot, folder: c.name, kind: 'run', data: true, scan: true });
        const target = join(outRoot, c.name);
        const lines = [
          `campaign ${c.name}: ${pre.errors.length ? `${pre.errors.length} problem${pre.errors.length > 1 ? 's' : ''}: a run would stop (below)` : 'valid'}`,
          ...c.turbines.map((t) => `  turbine ${t.id}: rotor ${t.rotorDiameter_m} m, hub ${t.hubHeight_m} m at (${t.position.join(', ')})${t.series ? ', series' : ''}`),
          ...(c.site.terrain ? [`  terrain ${c.site.terrain.format} ${c.site.terrain.file}${c.site.terrain.crs ? ` (${c.site.terrain.crs})` : ''}`] : []),
          ...c.instruments.map((i) => `  instrument ${i.id} (${i.kind}${i.role === 'plane' ? '' : `, ${i.role}`}) ${i.beamFrame === 'nacelle' ? `on the nacelle, mount forward ${i.mount[0]} left ${i.mount[1]} up ${i.mount[2]} m, beams relative to the nacelle axis` : `at E ${i.position[0].toFixed(2)} N ${i.position[1].toFixed(2)} U ${i.position[2].toFixed(2)} m`}, ${i.files.length} file(s)${i.files.some((f) => !existsSync(f)) ? ' [missing]' : ''}`),
          ...c.planes.map((p) => `  plane ${p.id}: ${p.orientation === 'cross' ? `cross at x = ${p.x_m.toFixed(1)} m` : `horizontal at z = ${p.z_m.toFixed(1)} m`}, y ${p.y.min}..${p.y.max} m, cells ${p.cell_m.join(' x ')} m`),
          `  results: ${relative(process.cwd(), target) || target}${existsSync(target) ? ' (an earlier result there would be kept as .replaced-...)' : ''}`,
          ...pre.warnings.map((w) => `warning: ${w}`),
          ...pre.notes.map((n) => `note: ${n}`),
        ];
        process.stdout.write(lines.join('\n') + '\n');
        if (pre.errors.length) throw new Problems(pre.errors);
      },
    )
    .command(
      'plan <campaign>',
      'before deployment: trust maps, probe volumes, pointing tables and a layout ranking, written to <output.dir>/<name>-plan/plan/',
      (yy) => common(yy).positional('campaign', CAMPAIGN),
      async (a) => {
        const c = loadCampaignFile(a.campaign as string);
        const outRoot = outRootOf(c, a.out as string | undefined);
        const folder = `${c.name}-plan`;
        const pre = await preflight(c, { outRoot, folder, kind: 'plan', data: false });
        if (pre.errors.length) throw new Problems(pre.errors);
        for (const w of pre.warnings) say(a.quiet as boolean, `warning: ${w}`);
        const { createHash } = await import('node:crypto');
        const { readFileSync } = await import('node:fs');
        const sha = c.sourceFile === '<memory>' ? '' : createHash('sha256').update(readFileSync(c.sourceFile)).digest('hex');
        const staging = openStaging({ root: outRoot, folder, kind: 'plan', campaign: c.name, campaignSha256: sha, clean: a.clean as boolean, inputs: campaignInputs(c) });
        let notes: string[];
        let summary: string;
        try {
          const res = await (await planner()).planAndWrite(c, staging.dir, { images: (a.images as boolean | undefined) ?? c.output.images });
          notes = [...staging.notices, ...staging.commit()];
          summary = res.summary.replace(relative(process.cwd(), staging.dir) || staging.dir, relative(process.cwd(), staging.finalDir) || staging.finalDir);
        } catch (e) {
          staging.abort();
          throw e;
        }
        say(a.quiet as boolean, summary);
        for (const n of notes) say(a.quiet as boolean, `note: ${n}`);
      },
    )
    .command(
      'simulate <campaign>',
      'write synthetic raw samples and their truth for a campaign with a `simulation` section',
      (yy) =>
        yy
          .positional('campaign', { type: 'string', describe: 'campaign file (YAML or JSON) with a `simulation` section' })
          .option('quiet', { type: 'boolean', default: false, describe: 'print nothing but errors' }),
      async (a) => {
        const c = loadCampaignFile(a.campaign as string);
        if (!c.simulation) throw new OptionError('campaign', `${c.sourceFile} has no "simulation" section to simulate from`);
        // Never over files the simulator did not write (real measurements the campaign names, say).
        const { checkSimulationTargets, recordSimulation } = await import('../pipeline/simulatedFiles.ts');
        checkSimulationTargets(c);
        const s = await (await simulator()).simulateCampaign(c);
        recordSimulation(c);
        say(a.quiet as boolean, `wrote ${s.files.length} files (${Object.entries(s.rows).map(([k, v]) => `${k}: ${v.toLocaleString('en')} samples`).join(', ')}); truth in ${s.truthDir}`);
      },
    )
    .command(
      'schema',
      'print the JSON Schema of the campaign file (or write it with --write FILE)',
      (yy) => yy.option('write', { type: 'string', describe: 'write the schema to this file instead of printing it' }),
      (a) => {
        const text = JSON.stringify(campaignJsonSchema(), null, 2) + '\n';
        if (a.write) writeFileAtomic(resolve(a.write as string), text);
        else process.stdout.write(text);
      },
    );
}
