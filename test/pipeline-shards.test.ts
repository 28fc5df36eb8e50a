/**
 * Sharded runs merged exactly: random shardings of small simulated campaigns (by files, by time ranges that cut
 * windows in two, both at once; fixed windows anchored at the first sample, condition bins with ensembles) must give
 * field tables byte-identical to one run over everything and the sample accounting summed exactly; partials that
 * cannot be merged (missing, duplicated, overlapping, of another campaign, settings or version, unfinished) are
 * one-line errors naming the file, before any output.
 *
 * The reference here is the single-process run of the same code, so these are exactness checks of the merge (an
 * identity that must hold to the byte), not outside checks of the physics; those live in the retrieval, geometry
 * and histogram tests (qc-histogram.test.ts checks the histograms' median and MAD against the exact sample
 * statistics, and the exact-merge property of the integer sums against numpy in retrieval-ensemble.test.ts).
 */
import { appendFileSync, existsSync, readdirSync, readFileSync, writeFileSync, mkdirSync, copyFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import type { Campaign } from '../src/campaign/types.ts';
import { CellAccumulator } from '../src/grid/accumulator.ts';
import { accumulatorFromState, accumulatorFromStates, accumulatorState } from '../src/grid/accumulatorState.ts';
import { PARTIAL_FORMAT, PartialWriter, PartialReader } from '../src/io/partialFile.ts';
import { campaignFirstSample } from '../src/pipeline/ingest.ts';
import { runShard, type ShardSpec } from '../src/pipeline/partial.ts';
import { defaultCores, runCampaign, type RunResult } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { REJECT_REASONS } from '../src/qc/reasons.ts';
import { BUDGET_COLUMNS } from '../src/records/tables/fields.ts';
import { mulberry32 } from '../src/math/random.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { runCli } from './faults/helpers.ts';
import { stringify, parse } from 'yaml';

/** Every field table (plane windows and bins) of a run folder: name -> bytes. */
function fieldTables(runDir: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const f of readdirSync(join(runDir, 'fields')).sort()) if (f.endsWith('.csv')) out.set(f, readFileSync(join(runDir, 'fields', f), 'utf8'));
  return out;
}

/** Splits every instrument's file in two (header repeated) so that one instrument's files can go to different shards. */
function splitFiles(dir: string): void {
  for (const id of ['a', 'b', 'c']) {
    const text = readFileSync(join(dir, 'data', `${id}.csv`), 'utf8').trimEnd().split('\n');
    const [head, ...rows] = text;
    const cut = Math.floor(rows.length * 0.45);
    writeFileSync(join(dir, 'data', `${id}1.csv`), [head, ...rows.slice(0, cut)].join('\n') + '\n');
    writeFileSync(join(dir, 'data', `${id}2.csv`), [head, ...rows.slice(cut)].join('\n') + '\n');
  }
}

function withFiles(c: Campaign, dir: string): Campaign {
  return { ...c, instruments: c.instruments.map((i) => ({ ...i, files: [join(dir, 'data', `${i.id}1.csv`), join(dir, 'data', `${i.id}2.csv`)] })) };
}

/** A random sharding: files into 1..3 groups, each group cut at 0..2 random times inside the record. */
function randomShards(files: string[], t0: number, t1: number, rnd: () => number): ShardSpec[] {
  const groups = 1 + Math.floor(rnd() * 3);
  const member: string[][] = Array.from({ length: groups }, () => []);
  files.forEach((f, k) => member[k < groups ? k : Math.floor(rnd() * groups)].push(f));
  const specs: ShardSpec[] = [];
  for (const g of member) {
    const cuts = Array.from({ length: Math.floor(rnd() * 3) }, () => t0 + rnd() * (t1 - t0)).sort((a, b) => a - b);
    const bounds = [-Infinity, ...cuts, Infinity];
    for (let k = 0; k + 1 < bounds.length; k++) if (bounds[k] < bounds[k + 1]) specs.push({ files: g, from_s: bounds[k], to_s: bounds[k + 1] });
  }
  return specs;
}

async function shardAndMerge(c: Campaign, specs: ShardSpec[], dir: string, out: string): Promise<RunResult> {
  mkdirSync(dir, { recursive: true });
  const parts: string[] = [];
  for (const [k, s] of specs.entries()) {
    const p = join(dir, `s${k}.wpart`);
    await runShard(c, s, p);
    parts.push(p);
  }
  return runCampaign(c, { outRoot: out, images: false, partials: parts, stages: defaultStages() });
}

/** Each line without its last BUDGET_COLUMNS columns (the uncertainty budget's and turbulence statistics'). */
function withoutBudget(tables: Map<string, string>): Map<string, string> {
  const n = BUDGET_COLUMNS.length;
  return new Map([...tables].map(([k, text]) => [k, text.split('\n').map((l) => (l ? l.split(',').slice(0, -n).join(',') : l)).join('\n')]));
}

/**
 * The merged run equals the single run. `budget`: also the uncertainty budget's columns and what follows from them
 * (wake table). They are byte-identical only when no sequence of a key's samples is cut between shards: the budget's
 * lag and burst sums follow the order of each key's samples and lose the pairs across a cut (grid/accumulator.ts
 * states the bound), which happens when a window is cut in time or one instrument's files, read interleaved by one
 * run, go to different shards. Every other column is a sum independent of order: byte-identical always.
 */
function expectSameRun(single: RunResult, merged: RunResult, budget = false): void {
  const fa = fieldTables(single.runDir), fb = fieldTables(merged.runDir);
  const a = budget ? fa : withoutBudget(fa), b = budget ? fb : withoutBudget(fb);
  expect(a.size).toBeGreaterThan(0);
  expect(single.manifest.samples.total.accepted).toBeGreaterThan(0);
  expect([...b.keys()]).toEqual([...a.keys()]);
  // Byte-identical: the merge must reproduce the single run exactly (no tolerance).
  for (const [name, text] of a) expect(b.get(name), name).toBe(text);
  // Accounting: exact integer sums, per instrument and reason.
  expect(merged.manifest.samples).toEqual(single.manifest.samples);
  expect(merged.manifest.windows).toEqual(single.manifest.windows);
  if (budget) expect(readFileSync(join(merged.runDir, 'wake', 'wake_table.csv'), 'utf8')).toBe(readFileSync(join(single.runDir, 'wake', 'wake_table.csv'), 'utf8'));
  // The NetCDF outputs (written on another thread, awaited before the manifest): present and complete in both.
  const ncs = readdirSync(join(single.runDir, 'fields')).filter((f) => f.endsWith('.nc'));
  expect(ncs.length).toBeGreaterThan(0);
  for (const f of ncs) expect(readFileSync(join(merged.runDir, 'fields', f)).length, f).toBe(readFileSync(join(single.runDir, 'fields', f)).length);
  const listed = (r: RunResult) => r.manifest.outputs.map((o) => o.path).sort();
  expect(listed(merged)).toEqual(listed(single));
}

describe('sharded runs merge exactly', () => {
  let dir: string, file: string;
  let c: Campaign;
  let t0: number, t1: number;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({ simulation: { seed: 21, start: '2026-03-01T12:00:00Z', windows: 4, hubSpeed_ms: 8, yawOffsets_deg: [0, 15, -15, 15], rayRate_hz: 4, dwell_s: 1 } }));
    await simulateCampaign(loadCampaignFile(file));
    // Unreadable rows in two files (one per shard group): they must be counted and listed once.
    for (const f of ['a.csv', 'c.csv']) appendFileSync(join(dir, 'data', f), '1772366500.5,a,12.5,abc,300,1.2,-10\n1772366500.6,c,12.5,3.0\n');
    splitFiles(dir);
    c = withFiles(loadCampaignFile(file), dir);
    // Fixed windows anchored at the first sample: every shard must use the campaign's first sample, not its own.
    c.windows = { kind: 'fixed', length_s: 600, anchor: 'first-sample' };
    t0 = await campaignFirstSample(c);
    t1 = t0 + 4 * 600;
  }, 60_000);

  it('random shardings by files and time ranges give the single run\'s field tables byte for byte', async () => {
    const single = await runCampaign(c, { outRoot: join(dir, 'single'), images: false, stages: defaultStages() });
    expect(single.manifest.windows.length).toBeGreaterThanOrEqual(4);
    const files = c.instruments.flatMap((i) => i.files);
    const rnd = mulberry32(1301);
    let cutWindows = 0;
    for (let trial = 0; trial < 3; trial++) {
      const specs = randomShards(files, t0, t1, rnd);
      // Cuts that fall strictly inside a window split its samples between shards (the case that needs the merge).
      for (const s of specs) if (Number.isFinite(s.from_s) && (s.from_s - t0) % 600 > 1) cutWindows++;
      const merged = await shardAndMerge(c, specs, join(dir, `parts${trial}`), join(dir, `merged${trial}`));
      expectSameRun(single, merged);
      // The partials are removed after a successful merge (not asked to keep them).
      expect(readdirSync(join(dir, `parts${trial}`)).filter((f) => f.endsWith('.wpart'))).toEqual([]);
    }
    expect(cutWindows).toBeGreaterThan(0);
  }, 120_000);

  it('one whole-record window: its bounds are the first and last sample over all shards', async () => {
    const cr: Campaign = { ...c, windows: { kind: 'record' } } as Campaign;
    const single = await runCampaign(cr, { outRoot: join(dir, 'single-rec'), images: false, stages: defaultStages() });
    expect(single.manifest.windows).toHaveLength(1);
    const files = cr.instruments.flatMap((i) => i.files);
    const specs: ShardSpec[] = [
      { files: files.filter((_, k) => k % 2 === 0), from_s: -Infinity, to_s: t0 + 777 },
      { files: files.filter((_, k) => k % 2 === 0), from_s: t0 + 777, to_s: Infinity },
      { files: files.filter((_, k) => k % 2 === 1), from_s: -Infinity, to_s: Infinity },
    ];
    expectSameRun(single, await shardAndMerge(cr, specs, join(dir, 'parts-rec'), join(dir, 'merged-rec')));
  }, 120_000);

  it('condition bins: ensembles of merged windows equal the single run\'s', async () => {
    const cb: Campaign = { ...c, conditions: { bins: [{ variable: 'yaw_offset_deg', edges: [-20, -5, 5, 20] }], minWindows: 1 } } as Campaign;
    const single = await runCampaign(cb, { outRoot: join(dir, 'single-bins'), images: false, stages: defaultStages() });
    expect(single.manifest.ensembles?.length).toBe(3);
    const files = cb.instruments.flatMap((i) => i.files);
    const specs: ShardSpec[] = [
      { files: files.slice(0, 3), from_s: -Infinity, to_s: t0 + 905 },
      { files: files.slice(0, 3), from_s: t0 + 905, to_s: Infinity },
      { files: files.slice(3), from_s: -Infinity, to_s: Infinity },
    ];
    const merged = await shardAndMerge(cb, specs, join(dir, 'parts-bins'), join(dir, 'merged-bins'));
    expectSameRun(single, merged);
    expect(merged.manifest.ensembles).toEqual(single.manifest.ensembles);
    expect([...fieldTables(merged.runDir).keys()].some((n) => n.includes('_bin'))).toBe(true);
  }, 120_000);

  it('the command\'s default number of reading processes: one on two cores (measured slower split), every core from four', () => {
    expect(defaultCores(1)).toBe(1);
    expect(defaultCores(2)).toBe(1);
    expect(defaultCores(4)).toBe(4);
    expect(defaultCores(16)).toBe(16);
  });

  it('shards by files only (an instrument\'s files in different shards): every column byte-identical, the budget\'s too', async () => {
    const single = await runCampaign(c, { outRoot: join(dir, 'single-f'), images: false, stages: defaultStages() });
    const files = c.instruments.flatMap((i) => i.files);
    const rnd = mulberry32(77);
    for (let trial = 0; trial < 2; trial++) {
      const groups: string[][] = [[], [], []];
      for (const f of files) groups[Math.floor(rnd() * 3)].push(f);
      const specs: ShardSpec[] = groups.filter((g) => g.length).map((g) => ({ files: g, from_s: -Infinity, to_s: Infinity }));
      expectSameRun(single, await shardAndMerge(c, specs, join(dir, `parts-f${trial}`), join(dir, `merged-f${trial}`)), true);
    }
  }, 120_000);

  it('whole instruments per shard: every column byte-identical, the uncertainty budget\'s too', async () => {
    const cw = loadCampaignFile(file); // each instrument's one file
    cw.windows = c.windows;
    const single = await runCampaign(cw, { outRoot: join(dir, 'single-w'), images: false, stages: defaultStages() });
    const files = cw.instruments.flatMap((i) => i.files);
    const merged = await shardAndMerge(cw, [{ files: [files[0], files[2]], from_s: -Infinity, to_s: Infinity }, { files: [files[1]], from_s: -Infinity, to_s: Infinity }], join(dir, 'parts-w'), join(dir, 'merged-w'));
    expectSameRun(single, merged, true);
    const multi = await runCampaign(cw, { outRoot: join(dir, 'multi-w'), images: false, stages: defaultStages(), cores: 2 });
    expectSameRun(single, multi, true);
  }, 120_000);

  it('every core: a run on 2 processes gives the single run\'s outputs', async () => {
    const single = await runCampaign(c, { outRoot: join(dir, 'single-c'), images: false, stages: defaultStages(), cores: 1 });
    const multi = await runCampaign(c, { outRoot: join(dir, 'multi-c'), images: false, stages: defaultStages(), cores: 2 });
    // Files go whole to the processes and every run ends a file's budget sequences with the file: every column,
    // the budget's too, byte-identical (each instrument's two files may well go to different processes here).
    expectSameRun(single, multi, true);
    expect(multi.notices.some((n) => n.includes('2 processes'))).toBe(true);
    expect(existsSync(join(multi.runDir, '.shards'))).toBe(false);
    // The unreadable rows: the same rows in rejected_rows.csv (listed process by process, so compared as a set).
    const rows = (r: RunResult) => readFileSync(join(r.runDir, 'rejected_rows.csv'), 'utf8').trim().split('\n');
    const [h1, ...r1] = rows(single), [h2, ...r2] = rows(multi);
    expect(h2).toBe(h1);
    expect(r1.length).toBeGreaterThan(0);
    expect([...r2].sort()).toEqual([...r1].sort());
  }, 120_000);

  it('the command line: run --partial by files and by time, then merge, equals run --cores 1', async () => {
    // The campaign file itself lists the split files (the command loads it from disk).
    const doc = parse(readFileSync(file, 'utf8')) as { instruments: { id: string; files: string[] }[]; windows: unknown; name: string };
    for (const ins of doc.instruments) ins.files = [`data/${ins.id}1.csv`, `data/${ins.id}2.csv`];
    doc.windows = { kind: 'fixed', length_s: 600, anchor: 'first-sample' };
    const cf = join(dir, 'campaign-split.yaml');
    writeFileSync(cf, stringify(doc));
    const single = await runCli(['run', cf, '--cores', '1', '--no-images', '--quiet', '--out', join(dir, 'cli-single')]);
    expect(single.stderr).toBe('');
    const cut = new Date((t0 + 1234.5) * 1000).toISOString();
    const p = (k: number) => join(dir, 'cli-parts', `p${k}.wpart`);
    const shards = [
      ['--files', 'data/a1.csv,data/b1.csv,data/c1.csv', '--until', cut],
      ['--files', 'data/a1.csv,data/b1.csv,data/c1.csv', '--from', cut],
      ['--files', 'data/a2.csv', '--files', 'data/b2.csv', '--files', 'data/c2.csv'],
    ];
    for (const [k, args] of shards.entries()) {
      const r = await runCli(['run', cf, '--partial', p(k), '--quiet', ...args], dir);
      expect(r.stderr).toBe('');
      expect(r.code).toBe(0);
    }
    const merged = await runCli(['merge', p(0), p(1), p(2), '--keep-partials', '--no-images', '--quiet', '--out', join(dir, 'cli-merged')]);
    expect(merged.stderr).toBe('');
    // Byte-identical but for the budget's columns (a window is cut in time here: see expectSameRun).
    const a = withoutBudget(fieldTables(join(dir, 'cli-single', 'tiny-test'))), b = withoutBudget(fieldTables(join(dir, 'cli-merged', 'tiny-test')));
    expect([...b.keys()]).toEqual([...a.keys()]);
    for (const [n, text] of a) expect(b.get(n), n).toBe(text);
    const ma = JSON.parse(readFileSync(join(dir, 'cli-single', 'tiny-test', 'manifest.json'), 'utf8'));
    const mb = JSON.parse(readFileSync(join(dir, 'cli-merged', 'tiny-test', 'manifest.json'), 'utf8'));
    expect(mb.samples).toEqual(ma.samples); // exact sums
    expect(existsSync(p(0))).toBe(true); // --keep-partials
    // A missing shard: one line naming the data file, exit 1, no output.
    const bad = await runCli(['merge', p(0), p(2), '--no-images', '--out', join(dir, 'cli-bad')]);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/^wakeplane: data\/a1\.csv: no partial result covers its rows from \S+ on \(a shard missing\?\)\n$/);
    expect(existsSync(join(dir, 'cli-bad'))).toBe(false);
  }, 120_000);

  describe('partials that cannot be merged', () => {
    let parts: string[];
    const files = () => c.instruments.flatMap((i) => i.files);
    beforeAll(async () => {
      const d = join(dir, 'errs');
      mkdirSync(d, { recursive: true });
      parts = [];
      const specs: ShardSpec[] = [
        { files: files().slice(0, 3), from_s: -Infinity, to_s: Infinity },
        { files: files().slice(3), from_s: -Infinity, to_s: t0 + 700 },
        { files: files().slice(3), from_s: t0 + 700, to_s: Infinity },
      ];
      for (const [k, s] of specs.entries()) {
        parts.push(join(d, `p${k}.wpart`));
        await runShard(c, s, parts[k]);
      }
    }, 60_000);
    const merge = (list: string[], cc: Campaign = c, out = join(dir, 'err-out')) => runCampaign(cc, { outRoot: out, images: false, partials: list, keepPartials: true });
    const noOutput = () => expect(existsSync(join(dir, 'err-out'))).toBe(false);

    it('a missing shard names the data file and the uncovered time', async () => {
      await expect(merge([parts[0], parts[1]])).rejects.toThrow(/^data\/b2\.csv: no partial result covers its rows from .* on \(a shard missing\?\)$/);
      noOutput();
    });
    it('a shard never overwrites a file that is not a partial result', async () => {
      const notes = join(dir, 'errs', 'my-notes.txt');
      writeFileSync(notes, 'mine');
      await expect(runShard(c, { from_s: -Infinity, to_s: Infinity }, notes)).rejects.toThrow(`${notes}: exists and is not a wakeplane partial result; left alone. Choose another --partial file`);
      expect(readFileSync(notes, 'utf8')).toBe('mine');
    });
    it('a partial read with other CNR limits than the campaign\'s data give (the files changed since)', async () => {
      const odd = join(dir, 'errs', 'odd-cnr.wpart');
      await runShard(c, { from_s: -Infinity, to_s: Infinity }, odd, { cnrMin_db: new Float64Array(c.instruments.length).fill(-99) });
      await expect(merge([odd])).rejects.toThrow(new RegExp(`^${odd.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')}: read with other CNR limits \\(-99, -99, -99 dB\\) than this campaign's data give now`));
      noOutput();
    });
    it('a partial given twice is a duplicate', async () => {
      await expect(merge([parts[0], parts[1], parts[2], parts[1]])).rejects.toThrow(`${parts[1]}: duplicate of ${parts[1]} (the same shard twice)`);
      noOutput();
    });
    it('overlapping shards', async () => {
      const extra = join(dir, 'errs', 'overlap.wpart');
      await runShard(c, { files: files().slice(3, 4), from_s: t0 + 600, to_s: t0 + 800 }, extra);
      await expect(merge([...parts, extra])).rejects.toThrow(/overlaps .*p[12]\.wpart \(both read data\/b2\.csv over /);
      noOutput();
    });
    it('another campaign, other settings, another version, an unfinished or foreign file', async () => {
      const other = { ...c, name: 'another-campaign' };
      await expect(merge(parts, other)).rejects.toThrow(`${parts[0]}: partial result of campaign "tiny-test", not "another-campaign"`);
      const changed = { ...c, qc: { ...c.qc, radialVelocityLimit_ms: c.qc.radialVelocityLimit_ms - 1 } };
      await expect(merge(parts, changed)).rejects.toThrow(`${parts[0]}: partial result of campaign "tiny-test" with other settings`);
      // Another version: the header's version field rewritten in a copy (same length, so the offsets stay valid).
      const old = join(dir, 'errs', 'old.wpart');
      const bytes = readFileSync(parts[0]);
      const at = bytes.indexOf('"version":"0.1.0"');
      expect(at).toBeGreaterThan(0);
      bytes.write('"version":"0.0.9"', at, 'latin1');
      writeFileSync(old, bytes);
      await expect(merge([old, parts[1], parts[2]])).rejects.toThrow(`${old}: written by wakeplane 0.0.9, this is 0.1.0: run the shard again with this version`);
      // An older format: the format byte of the magic (byte 15) set one lower in a copy. The merge refuses it by
      // name, and a shard asked to write over it leaves it alone (the tool's file, but not one it can read).
      const older = join(dir, 'errs', 'older-format.wpart');
      const ob = readFileSync(parts[0]);
      ob[15] = PARTIAL_FORMAT - 1;
      writeFileSync(older, ob);
      await expect(merge([older, parts[1], parts[2]])).rejects.toThrow(`${older}: partial format ${PARTIAL_FORMAT - 1} (written by an older wakeplane), this wakeplane reads format ${PARTIAL_FORMAT}: run the shard again with this wakeplane`);
      await expect(runShard(c, { from_s: -Infinity, to_s: Infinity }, older)).rejects.toThrow(`${older}: exists and is a partial format ${PARTIAL_FORMAT - 1} (written by an older wakeplane), this wakeplane reads format ${PARTIAL_FORMAT}; left alone. Remove it or choose another --partial file`);
      expect(readFileSync(older).equals(ob)).toBe(true);
      const cut = join(dir, 'errs', 'cut.wpart');
      writeFileSync(cut, readFileSync(parts[0]).subarray(0, 4000));
      await expect(merge([cut, parts[1], parts[2]])).rejects.toThrow(`${cut}: unfinished partial result (no trailer: its shard did not complete)`);
      const foreign = join(dir, 'errs', 'notes.txt');
      writeFileSync(foreign, 'some text that is not a partial result at all, long enough to be read');
      await expect(merge([foreign, parts[1], parts[2]])).rejects.toThrow(`${foreign}: not a wakeplane partial result`);
      await expect(merge([join(dir, 'errs', 'nothing.wpart')])).rejects.toThrow('nothing.wpart: partial result not found');
      noOutput();
      // The partials are still there (nothing is removed when a merge fails).
      for (const p of parts) expect(existsSync(p)).toBe(true);
    });
  });
});

describe('wakeplane slurm', () => {
  it('writes the shard manifest, a job array with the requested resources and a merge that waits for it', async () => {
    const { dir, file } = writeTinyCampaign();
    await simulateCampaign(loadCampaignFile(file));
    const job = join(dir, 'job');
    const r = await runCli(['slurm', file, '--dir', job, '--groups', '2', '--cuts', '2026-03-01T12:15:00Z', '--partition', 'wind', '--time', '01:30:00',
      '--mem', '3G', '--cpus', '2', '--merge-mem', '6G', '--sbatch=--account=proj7', '--quiet']);
    expect(r.stderr).toBe('');
    const plan = JSON.parse(readFileSync(join(job, 'shards.json'), 'utf8'));
    // 3 files in 2 groups of about equal size, each cut once: 4 shards covering every file over all time.
    expect(plan.shards).toHaveLength(4);
    expect(plan.shards.map((x: { from: string | null }) => x.from)).toEqual([null, '2026-03-01T12:15:00.000Z', null, '2026-03-01T12:15:00.000Z']);
    expect(new Set(plan.shards.flatMap((x: { files: string[] }) => x.files)).size).toBe(3);
    const array = readFileSync(join(job, 'array.sh'), 'utf8');
    for (const line of ['#SBATCH --array=0-3', '#SBATCH --partition=wind', '#SBATCH --time=01:30:00', '#SBATCH --mem=3G', '#SBATCH --cpus-per-task=2', '#SBATCH --account=proj7']) expect(array).toContain(line);
    expect(array).toContain('--shard-plan');
    expect(array).toContain('--shard "$SLURM_ARRAY_TASK_ID"');
    const merge = readFileSync(join(job, 'merge.sh'), 'utf8');
    expect(merge).toContain('#SBATCH --mem=6G');
    expect(merge).toMatch(/ merge .*shard-0\.wpart .*shard-3\.wpart --campaign /);
    const submit = readFileSync(join(job, 'submit.sh'), 'utf8');
    expect(submit).toContain('sbatch --parsable --dependency=afterok:$array merge.sh');
    // Each task runs its shard: task 1 through the command line, as the array would.
    const task = await runCli(['run', file, '--shard-plan', join(job, 'shards.json'), '--shard', '1', '--quiet']);
    expect(task.stderr).toBe('');
    expect(existsSync(plan.shards[1].partial)).toBe(true);
    // A resource value that is not one (a shell command) is refused; a foreign folder is left alone.
    const bad = await runCli(['slurm', file, '--dir', join(dir, 'job2'), '--time', '1:00; rm -rf ~']);
    expect(bad.stderr).toBe('wakeplane: option --time: not a SLURM value: "1:00; rm -rf ~"\n');
    mkdirSync(join(dir, 'mine'));
    writeFileSync(join(dir, 'mine', 'notes.txt'), 'x');
    const foreign = await runCli(['slurm', file, '--dir', join(dir, 'mine')]);
    expect(foreign.stderr).toBe(`wakeplane: ${join(dir, 'mine')}: exists and is not a folder wakeplane slurm wrote; left alone. Choose another --dir\n`);
  }, 120_000);
});

/** A demo scenario copied into a temporary folder with fewer simulated windows, simulated. */
async function smallScenario(name: string, windows: number): Promise<{ dir: string; c: Campaign }> {
  const dir = join(writeTinyCampaign().dir, name);
  mkdirSync(dir, { recursive: true });
  const doc = parse(readFileSync(join(import.meta.dirname, '..', 'scenarios', name, 'campaign.yaml'), 'utf8')) as { simulation: { windows: number } };
  doc.simulation.windows = windows;
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(doc));
  await simulateCampaign(loadCampaignFile(file));
  return { dir, c: loadCampaignFile(file) };
}

describe('sharded demo scenarios', () => {
  it('several turbines on terrain with segment windows and the power stage (tarnwick): shards by file and time', async () => {
    const { dir, c } = await smallScenario('tarnwick', 4);
    const single = await runCampaign(c, { outRoot: join(dir, 'single'), images: false, stages: defaultStages() });
    expect(single.manifest.windows.length).toBeGreaterThanOrEqual(2);
    const files = c.instruments.flatMap((i) => i.files);
    const mid = (single.manifest.windows[0].start_s + single.manifest.windows[0].end_s) / 2; // inside the first window
    const specs: ShardSpec[] = [
      { files: [files[0]], from_s: -Infinity, to_s: mid },
      { files: [files[0]], from_s: mid, to_s: Infinity },
      { files: files.slice(1), from_s: -Infinity, to_s: Infinity },
    ];
    const merged = await shardAndMerge(c, specs, join(dir, 'parts'), join(dir, 'merged'));
    expectSameRun(single, merged);
    // The power stage (per-window power, bootstrap gains with a fixed seed) follows.
    for (const f of ['power/window_power.csv', 'power/power_gain.csv']) {
      expect(readFileSync(join(merged.runDir, f), 'utf8'), f).toBe(readFileSync(join(single.runDir, f), 'utf8'));
    }
  }, 180_000);

  it('profiles, nacelle beams and a tracker (fernhollow): shards by file and time', async () => {
    const { dir, c } = await smallScenario('fernhollow', 2);
    const single = await runCampaign(c, { outRoot: join(dir, 'single'), images: false, stages: defaultStages() });
    const files = c.instruments.flatMap((i) => i.files);
    const w0 = single.manifest.windows[0];
    const mid = w0.start_s + 0.37 * (w0.end_s - w0.start_s);
    const half = Math.ceil(files.length / 2);
    const specs: ShardSpec[] = [
      { files: files.slice(0, half), from_s: -Infinity, to_s: mid },
      { files: files.slice(0, half), from_s: mid, to_s: Infinity },
      { files: files.slice(half), from_s: -Infinity, to_s: Infinity },
    ];
    const merged = await shardAndMerge(c, specs, join(dir, 'parts'), join(dir, 'merged'));
    expectSameRun(single, merged);
    // The sibling geometries' tables too (profiles, nacelle beams, tracks): byte-identical.
    const geo = readdirSync(single.runDir, { recursive: true }).map(String).filter((f) => /^(profiles|nacelle|track)[/\\].*\.csv$/.test(f));
    expect(geo.length).toBeGreaterThan(0);
    for (const f of geo) expect(readFileSync(join(merged.runDir, f), 'utf8'), f).toBe(readFileSync(join(single.runDir, f), 'utf8'));
  }, 180_000);
});

describe('accumulator state', () => {
  it('round-trips every field and merges to the same content as adding all samples to one accumulator', () => {
    const rnd = mulberry32(5);
    const keys = 50;
    const whole = new CellAccumulator(keys, 2), a = new CellAccumulator(keys, 2), b = new CellAccumulator(keys, 2);
    for (let i = 0; i < 20000; i++) {
      const k = Math.floor(rnd() * keys);
      // Mostly a normal spread, sometimes far outliers (the histogram's table path).
      const v = rnd() < 0.02 ? (rnd() - 0.5) * 100 : 5 + (rnd() - 0.5) * 4;
      const args = [k, v, rnd(), rnd(), rnd(), rnd() * 100, rnd() * 100] as const;
      whole.add(...args);
      (i % 3 === 0 ? a : b).add(...args);
    }
    const a2 = accumulatorFromState(accumulatorState(a));
    const b2 = accumulatorFromState(accumulatorState(b));
    a2.merge(b2);
    expect(a2.slots).toBe(whole.slots);
    for (let s = 0; s < whole.slots; s++) {
      const key = whole.keyOf[s], t = a2.slotOf[key];
      // Integer sums: exact equality, no tolerance.
      for (let f = 0; f < 9; f++) expect(a2.get(t, f)).toBe(whole.get(s, f));
      const h1 = whole.hist.sorted(s), h2 = a2.hist.sorted(t);
      expect(a2.hist.level[t]).toBe(whole.hist.level[s]);
      expect([...h2.bins]).toEqual([...h1.bins]);
      expect([...h2.counts]).toEqual([...h1.counts]);
    }
  });

  it('several states at once: keys in two states are merged, disjoint keys laid side by side, both exact', () => {
    const rnd = mulberry32(9);
    const keys = 40;
    const whole = new CellAccumulator(keys, 2), a = new CellAccumulator(keys, 2), b = new CellAccumulator(keys, 2), c2 = new CellAccumulator(keys, 2);
    for (let i = 0; i < 12000; i++) {
      const k = Math.floor(rnd() * keys);
      const args = [k, 3 + (rnd() - 0.5) * 3, rnd(), rnd(), rnd(), rnd() * 50, rnd() * 50] as const;
      whole.add(...args);
      // a and b: disjoint key halves; c2 overlaps both.
      (k < keys / 2 ? a : rnd() < 0.5 ? b : c2).add(...args);
    }
    const disjoint = accumulatorFromStates([accumulatorState(a), accumulatorState(b)]);
    const all = accumulatorFromStates([accumulatorState(a), accumulatorState(b), accumulatorState(c2)]);
    for (let s = 0; s < whole.slots; s++) {
      const key = whole.keyOf[s], t = all.slotOf[key];
      for (let f = 0; f < 9; f++) expect(all.get(t, f)).toBe(whole.get(s, f)); // integer sums: exact
      const h1 = whole.hist.sorted(s), h2 = all.hist.sorted(t);
      expect([...h2.bins]).toEqual([...h1.bins]);
      expect([...h2.counts]).toEqual([...h1.counts]);
    }
    expect(disjoint.total()).toBe(a.total() + b.total());
    for (let s = 0; s < a.slots; s++) expect(disjoint.get(disjoint.slotOf[a.keyOf[s]], 1)).toBe(a.get(s, 1));
  });

  it('the container keeps typed arrays and non-finite numbers exactly', () => {
    const d = join(writeTinyCampaign().dir, 'x.wpart');
    const w = new PartialWriter(d);
    const at = w.write({ a: NaN, b: -Infinity, label: 'NaN' }, { x: Float64Array.of(1.5, NaN, -0), y: Uint8Array.of(1, 2, 3) });
    w.close({ header: at });
    const r = PartialReader.open(d);
    const rec = r.read(r.index.header as number);
    expect(rec.meta.a).toBeNaN();
    expect(rec.meta.b).toBe(-Infinity);
    expect(rec.meta.label).toBe('NaN');
    expect([...rec.arrays.x]).toEqual([1.5, NaN, -0]);
    expect([...rec.arrays.y]).toEqual([1, 2, 3]);
    r.close();
    copyFileSync(d, d + '.copy');
  });
});

void REJECT_REASONS;
