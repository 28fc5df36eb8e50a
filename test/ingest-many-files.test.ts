/**
 * A campaign whose instruments write many files (more than KEEP_PRIMED in all, listed out of time order): the ingest
 * keeps one primed stream per instrument and reopens the others in their turn (pipeline/ingest.ts), so memory and open
 * files do not grow with the number of files. The same samples in one file per instrument must give the same
 * accounting and the same field tables. Exception, by design: the uncertainty budget's sequences (rays, runs,
 * bursts) end with each file, so its columns (the last BUDGET_COLUMNS of a field table) may differ; they are left out.
 * Also from NetCDF-4 files (reader thread; the CNR pre-pass primes only each instrument's first file).
 */
import { existsSync, readdirSync, readFileSync, readlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { KEEP_PRIMED } from '../src/io/sampleSource.ts';
import { fieldTableColumns } from '../src/pipeline/fieldTable.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { BUDGET_COLUMNS } from '../src/records/tables/fields.ts';
import { csvToNetcdf } from '../src/sim/netcdfSamples.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';

/**
 * Splits a CSV file into `parts` files of consecutive rows, each with the header, at ray boundaries (the simulator
 * writes 8 gates a ray; a NetCDF file holds whole rays); returns their paths in order.
 */
function split(path: string, parts: number): string[] {
  const [head, ...rows] = readFileSync(path, 'utf8').trimEnd().split('\n');
  const out: string[] = [];
  const cut = (k: number) => (k === parts ? rows.length : 8 * Math.floor((k * rows.length) / parts / 8));
  for (let k = 0; k < parts; k++) {
    const p = path.replace(/\.csv$/, `-${k}.csv`);
    writeFileSync(p, [head, ...rows.slice(cut(k), cut(k + 1))].join('\n') + '\n');
    out.push(p);
  }
  return out;
}

function fieldsWithoutBudget(runDir: string): Map<string, string> {
  const keep = fieldTableColumns('cross').length - BUDGET_COLUMNS.length;
  const m = new Map<string, string>();
  for (const n of readdirSync(join(runDir, 'fields')).filter((x) => x.endsWith('.csv'))) {
    m.set(n, readFileSync(join(runDir, 'fields', n), 'utf8').split('\n').map((l) => l.split(',').slice(0, keep).join(',')).join('\n'));
  }
  return m;
}

describe('many files per instrument', () => {
  let dir: string, file: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({ name: 'many-files' }));
    await simulateCampaign(loadCampaignFile(file));
  });

  it('the same accounting and field tables as one file per instrument, from CSV and from NetCDF-4, files listed out of order', async () => {
    const one = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'one'), images: false });
    const text = readFileSync(file, 'utf8');
    const order = [3, 0, 4, 1, 2]; // listed out of time order: the ingest reads them by where they start
    const parts = new Map(['a', 'b', 'c'].map((id) => [id, split(join(dir, 'data', `${id}.csv`), 5)]));
    const listed = (id: string, ext: string) => order.map((k) => `data/${id}-${k}.${ext}`);
    const campaignWith = (ext: string) => {
      let t = text;
      for (const id of ['a', 'b', 'c']) t = t.replace(`- data/${id}.csv`, listed(id, ext).map((p) => `- ${p}`).join('\n' + ' '.repeat(6)));
      return t;
    };
    expect(3 * 5).toBeGreaterThan(KEEP_PRIMED); // the many-file path is the one exercised
    writeFileSync(join(dir, 'many-csv.yaml'), campaignWith('csv'));
    // The data files open at once during the run (Linux: this process's descriptors naming them).
    const dataOpen = () => readdirSync('/proc/self/fd').filter((fd) => {
      try { return /\/data\/[abc]-\d\.csv$/.test(readlinkSync(`/proc/self/fd/${fd}`)); } catch { return false; }
    }).length;
    const linux = existsSync('/proc/self/fd');
    let most = 0;
    const probe = linux ? setInterval(() => { most = Math.max(most, dataOpen()); }, 1) : undefined;
    const many = await runCampaign(loadCampaignFile(join(dir, 'many-csv.yaml')), { outRoot: join(dir, 'many'), images: false });
    clearInterval(probe);
    // The ingest: one stream per instrument (3), plus a file being closed while the next opens; the preflight checks
    // up to 8 files at once: never all 15 (every file was held open from its priming to its end before: 15 seen).
    // Sampled every millisecond: a count of descriptors, not a timing.
    if (linux) {
      expect(most).toBeGreaterThan(0); // the probe saw the run
      expect(most).toBeLessThanOrEqual(8); // also the preflight checks: up to 8 files at once (pipeline/preflight.ts)
    }
    for (const [id, ps] of parts) for (let k = 0; k < ps.length; k++) await csvToNetcdf(ps[k], join(dir, 'data', `${id}-${k}.nc`), { id }, { chunkRays: 64 });
    writeFileSync(join(dir, 'many-nc.yaml'), campaignWith('nc'));
    const nc = await runCampaign(loadCampaignFile(join(dir, 'many-nc.yaml')), { outRoot: join(dir, 'nc'), images: false });
    const base = fieldsWithoutBudget(one.runDir);
    expect(base.size).toBe(3);
    for (const r of [many, nc]) {
      expect(r.manifest.samples.total).toEqual(one.manifest.samples.total); // exact counts, reason by reason
      expect(r.manifest.samples.balanced).toBe(true);
      // Exact text: the same samples in the same windows (float32 velocities in NetCDF round to the CSV's two
      // decimals, as in io-netcdf.test.ts; the columns compared here are written at the uncertainty's precision).
      expect(fieldsWithoutBudget(r.runDir)).toEqual(base);
    }
  });
});
