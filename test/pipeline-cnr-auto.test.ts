/**
 * The data-driven CNR limit in whole runs (qc.cnr_db.min auto, the default), on campaigns our simulator did not
 * shape (test/helpers/junkCampaign.ts: two lidars at hub height over a horizontal plane, every row at its own angles,
 * a wake with doubled turbulence, each instrument with its own junk population below its own CNR level, neither at
 * the simulator's -27 dB). The truth is the analytic flow at the cell centres, so the comparison is against
 * something outside the retrieval; the three runs share the same files and differ only in the CNR limits.
 */
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { formatRunSummary } from '../src/cli/summary.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { readPrepass, resolveCnrLimits } from '../src/qc/cnrLimits.ts';
import { truthAt, writeJunkCampaign, type JunkInstrument } from './helpers/junkCampaign.ts';

/** Vector error |(u, v) - truth| per cell (key plane|window|x|y) of a run folder. */
function cellErrors(runDir: string): Map<string, number> {
  const out = new Map<string, number>();
  const fdir = join(runDir, 'fields');
  for (const f of readdirSync(fdir).filter((n) => n.endsWith('.csv'))) {
    const [head, ...rows] = readFileSync(join(fdir, f), 'utf8').trim().split('\n');
    const cols = head.split(',');
    for (const r of rows) {
      const o = Object.fromEntries(r.split(',').map((v, k) => [cols[k], v]));
      if (o.u_ms === '' || o.v_ms === '') continue;
      const [u, v] = truthAt(Number(o.x_m), Number(o.y_m));
      out.set(`${o.plane}|${o.window_start}|${o.x_m}|${o.y_m}`, Math.hypot(Number(o.u_ms) - u, Number(o.v_ms) - v));
    }
  }
  return out;
}

const rms = (a: number[]) => Math.sqrt(a.reduce((s, x) => s + x * x, 0) / a.length);

const scenarios: { name: string; instruments: JunkInstrument[]; seed: number }[] = [
  {
    name: 'junk below -22 dB (uniform, all) and -29 dB (Gaussian about zero, 70 %)',
    seed: 3,
    instruments: [
      { id: 'south', position: [480, -650, 100], cnr250_db: -8, junkBelow_db: -22, junkShare: 1, junkKind: 'uniform' },
      { id: 'north', position: [480, 650, 100], cnr250_db: -13, junkBelow_db: -29, junkShare: 0.7, junkKind: 'gauss' },
    ],
  },
  {
    name: 'junk below -25 dB (uniform, half) and -31 dB (Gaussian about zero, all)',
    seed: 9,
    instruments: [
      { id: 'south', position: [480, -650, 100], cnr250_db: -10, junkBelow_db: -25, junkShare: 0.5, junkKind: 'uniform' },
      { id: 'north', position: [480, 650, 100], cnr250_db: -16, junkBelow_db: -31, junkShare: 1, junkKind: 'gauss' },
    ],
  },
];

describe('auto CNR limit: no worse than the right fixed limit, clearly better than a loose one', () => {
  for (const sc of scenarios) {
    it(sc.name, async () => {
      const { dir, file, campaign } = writeJunkCampaign(sc.instruments, { rowsPerWindow: 14000, seed: sc.seed });
      const run = async (name: string, edit: (c: Record<string, any>) => void) => {
        const c = structuredClone(campaign);
        c.name = name;
        edit(c);
        writeFileSync(file, stringify(c));
        return runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: false });
      };
      const auto = await run('auto', () => {}); // the defaults
      const right = await run('right', (c) => sc.instruments.forEach((ins, k) => (c.instruments[k].cnrMin_db = ins.junkBelow_db)));
      const loose = await run('loose', (c) => (c.qc = { cnr_db: { min: -35 } }));
      // The run records the estimated limits in the manifest, its settings and the terminal summary.
      const m = auto.manifest;
      expect(m.cnrLimits?.mode).toBe('auto');
      const resolved = (m.settings as { qc: { cnr_db: { resolved_db: Record<string, number> } } }).qc.cnr_db.resolved_db;
      for (const ins of sc.instruments) {
        const l = m.cnrLimits!.perInstrument[ins.id];
        expect(l.status).toBe('break');
        // Within one CNR class (1 dB) above the true break (see test/qc-cnr-limit.test.ts).
        expect(l.min_db).toBeGreaterThanOrEqual(ins.junkBelow_db);
        expect(l.min_db).toBeLessThanOrEqual(ins.junkBelow_db + 1);
        expect(resolved[ins.id]).toBe(l.min_db);
      }
      expect(formatRunSummary(auto)).toMatch(/CNR limits \(estimated from the data: qc\.cnr_db\.min auto\):\n {2}south: -\d+\.\d dB {2}estimated/);
      expect(m.samples.balanced).toBe(true);

      const eA = cellErrors(auto.runDir), eR = cellErrors(right.runDir), eL = cellErrors(loose.runDir);
      // Cells retrieved in all three runs (a loose limit also fills cells with junk; those are compared too below).
      const common = [...eA.keys()].filter((k) => eR.has(k) && eL.has(k));
      expect(common.length).toBeGreaterThan(60);
      const a = rms(common.map((k) => eA.get(k)!)), r = rms(common.map((k) => eR.get(k)!)), l = rms(common.map((k) => eL.get(k)!));
      // auto <= right * 1.05: the estimated limit may sit up to one 1-dB class above the true break and then rejects
      // the good samples of that class; at 30 dB per decade of range, 1 dB is about 8 % of the range at the far side
      // of the plane, a few per cent of a far cell's samples, so a few per cent more noise in those cells. 5 % holds
      // that with room (here the estimate lands on the break and the two runs agree).
      expect(a).toBeLessThanOrEqual(r * 1.05);
      // Clearly better than a loose fixed limit: junk that passes the robust filter adds errors of metres per second;
      // at least 30 % lower rms error (measured 0.53 against 2.23 and 1.00 m/s: 76 % and 47 % lower).
      expect(a).toBeLessThan(0.7 * l);
      // And on every cell the loose run retrieves, auto's cells are not worse overall either.
      expect(rms([...eA.values()])).toBeLessThan(0.7 * rms([...eL.values()]));
    }, 60_000);
  }
});

describe('auto CNR limit: a function of the campaign only', () => {
  it('the same campaign gives the same limits and evidence; the pre-pass reads its budget, spread through each file', async () => {
    const { file } = writeJunkCampaign(scenarios[0].instruments, { rowsPerWindow: 30000, seed: 4 });
    const c = loadCampaignFile(file);
    c.qc.cnr_db.auto.rowsPerInstrument = 5000;
    const first = await resolveCnrLimits(c);
    const again = await resolveCnrLimits(c);
    // Exact: the pre-pass is deterministic (same rows, same order, no randomness).
    expect(again.perInstrument).toEqual(first.perInstrument);
    expect(first.perInstrument.south.rowsRead).toBe(5000); // exact: the budget, one file per instrument
    // 60,000 rows over 1,200 s per file: the kept rows reach from the first 1 % of the record into its last 1/8
    // (8 slices; the last starts at 7/8 of the bytes, 1,050 s; rows are about equally long).
    const { cols } = await readPrepass(c, 5000);
    const t = cols[0].time.subarray(0, cols[0].n);
    expect(cols[0].n).toBe(5000);
    expect(Math.min(...t) - 1.78e9).toBeLessThan(12);
    expect(Math.max(...t) - 1.78e9).toBeGreaterThan(1045);
  });

  it('a file listed by two instruments is read once: its rows go to the instrument each names', async () => {
    const { dir, file } = writeJunkCampaign(scenarios[0].instruments, { rowsPerWindow: 6000, seed: 6 });
    const [south, north] = ['south', 'north'].map((id) => readFileSync(join(dir, 'data', `${id}.csv`), 'utf8').trimEnd().split('\n'));
    // Interleaved by time (both start together), as one logger file of two instruments.
    const rows = [...south.slice(1), ...north.slice(1)].sort((a, b) => Number(a.split(',')[0]) - Number(b.split(',')[0]));
    writeFileSync(join(dir, 'data', 'both.csv'), [south[0], ...rows].join('\n') + '\n');
    const c = loadCampaignFile(file);
    for (const ins of c.instruments) ins.files = [join(dir, 'data', 'both.csv')];
    c.qc.cnr_db.auto.rowsPerInstrument = 5000;
    const r = await resolveCnrLimits(c);
    // Exact: the file's first 5,000 rows once, split between the two instruments (about half each).
    expect(r.perInstrument.south.rowsRead! + r.perInstrument.north.rowsRead!).toBe(5000);
    expect(r.perInstrument.south.rowsRead!).toBeGreaterThan(2000);
  });

  it('too few samples: the limit without evidence, with a warning naming the instrument', async () => {
    const { file } = writeJunkCampaign(scenarios[0].instruments, { rowsPerWindow: 600, windows: 1, seed: 5 });
    const res = await runCampaign(loadCampaignFile(file), { images: false });
    const l = res.manifest.cnrLimits!.perInstrument.south;
    expect(l.status).toBe('too-few-samples');
    expect(l.min_db).toBe(-27); // qc.cnr_db.auto.withoutEvidence_db default
    expect(res.manifest.warnings.join('\n')).toMatch(/CNR limit of south: too few samples for an estimate \(\d+ with a local reference, 2000 needed\)/);
  });
});
