/**
 * Suspicious input: each fault is built from the clean simulated files, and the test asserts the exact outcome:
 * the warning text (its evidence computed here from the damaged file, not taken from our output), where it appears
 * (terminal, manifest, report), the rows counted under their reason, the results unchanged where they must be, and
 * for unusable files the error, the exit code and that nothing was written.
 */
import { copyFileSync, existsSync, linkSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { HEADER, dataLines, fieldTables, freshCampaign, manifestOf, runCli, withoutBudget, writeLines } from './helpers.ts';

let clean: { tables: Map<string, string>; manifest: any };

beforeAll(async () => {
  const { dir, file } = await freshCampaign();
  const r = await runCli(['run', file, '--quiet'], dir);
  expect(r.code).toBe(0);
  clean = { tables: fieldTables(join(dir, 'out', 'faulty')), manifest: manifestOf(join(dir, 'out', 'faulty')) };
  expect(clean.tables.size).toBe(2);
});

const deg = Math.PI / 180;

describe('angles in radians', () => {
  it('warns in the terminal, manifest and report, with the evidence; the collapse of the accepted share names its reasons', async () => {
    const { dir, file } = await freshCampaign((c) => (c.output.images = true));
    const path = join(dir, 'data', 'b.csv');
    const [head, ...rows] = dataLines(path);
    let maxAz = 0, minEl = Infinity, maxEl = -Infinity;
    const out = rows.map((l) => {
      const f = l.split(',');
      const az = +(+f[2] * deg).toFixed(6), el = +(+f[3] * deg).toFixed(6);
      f[2] = String(az); f[3] = String(el);
      maxAz = Math.max(maxAz, az); minEl = Math.min(minEl, el); maxEl = Math.max(maxEl, el);
      return f.join(',');
    });
    writeLines(path, [head, ...out]);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    // every azimuth of b lies between 0 and 2 pi (the instrument looks south-east to south-west: 90..270 degrees)
    const text = `instrument b, data/b.csv: angles look like radians, not degrees: all ${rows.length} azimuths lie within ${maxAz.toFixed(3)} of north and all elevations within ${minEl.toFixed(3)} .. ${maxEl.toFixed(3)} (2 pi = 6.283, pi/2 = 1.571); if so, map the columns with scale: 57.29577951 (instruments[].columns)`;
    expect(r.stdout).toContain(`warning: ${text}\n`);
    const m = manifestOf(join(dir, 'out', 'faulty'));
    expect(m.warnings).toContain(text);
    const report = readFileSync(join(dir, 'out', 'faulty', 'report.html'), 'utf8');
    expect(report).toContain('instrument b, data/b.csv: angles look like radians, not degrees');
    // b's samples now point almost straight north of the instrument at the ground: none can reach the plane
    const b = m.samples.perInstrument.b;
    expect(b.accepted).toBe(0);
    const collapse = m.warnings.find((w: string) => w.startsWith('instrument b: only'));
    expect(collapse).toMatch(new RegExp(`^instrument b: only 0\\.00 % of its ${b.read} samples accepted \\(the other instruments: \\d+\\.\\d %? median\\); rejected: outside_planes ${(100 * b.rejected.outside_planes / b.read).toFixed(1)} %`));
    expect(collapse).toContain('; files: data/b.csv. Check its position, calibration (heading) and angle units');
    expect(report).toContain('instrument b: only 0.00 % of its');
  });
});

describe('duplicated rows', () => {
  /** a.csv with data rows 1001..1100 repeated right after themselves (lines 1102..1201 of the file). */
  async function repeated(drop: boolean) {
    const { dir, file } = await freshCampaign((c) => (c.qc = { dropDuplicates: drop }));
    const path = join(dir, 'data', 'a.csv');
    const lines = dataLines(path);
    writeLines(path, [...lines.slice(0, 1101), ...lines.slice(1001, 1101), ...lines.slice(1101)]);
    return { dir, file };
  }

  it('kept by default: a warning with the count and the first lines', async () => {
    const { dir, file } = await repeated(false);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('warning: instrument a, data/a.csv: 100 rows repeat an earlier row exactly (time, angles and range; lines 1102, 1103, 1104, ...); kept and used again; set qc.dropDuplicates: true to drop them\n');
    const m = manifestOf(join(dir, 'out', 'faulty'));
    expect(m.samples.perInstrument.a.read).toBe(clean.manifest.samples.perInstrument.a.read + 100);
    expect(m.samples.perInstrument.a.rejected.duplicate).toBe(0);
    expect(m.samples.balanced).toBe(true);
  });

  it('dropped with qc.dropDuplicates: counted as "duplicate", results identical to the clean run', async () => {
    const { dir, file } = await repeated(true);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('warning: instrument a, data/a.csv: 100 rows repeat an earlier row exactly (time, angles and range; lines 1102, 1103, 1104, ...); dropped as "duplicate" (qc.dropDuplicates)\n');
    const m = manifestOf(join(dir, 'out', 'faulty'));
    const a = m.samples.perInstrument.a, a0 = clean.manifest.samples.perInstrument.a;
    expect(a.rejected.duplicate).toBe(100);
    expect(a.read).toBe(a0.read + 100);
    expect(a.accepted).toBe(a0.accepted);
    expect(fieldTables(join(dir, 'out', 'faulty'))).toEqual(clean.tables); // exact text: nothing else changed
  });

  it('a file concatenated with itself: every repeat found; dropped, the results are those of the clean run', async () => {
    const { dir, file } = await freshCampaign((c) => (c.qc = { dropDuplicates: true }));
    const path = join(dir, 'data', 'c.csv');
    const [head, ...rows] = dataLines(path);
    writeLines(path, [head, ...rows, ...rows]);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    // the copy starts at line rows.length + 2
    const first = rows.length + 2;
    expect(r.stdout).toContain(`warning: instrument c, data/c.csv: ${rows.length} rows repeat an earlier row exactly (time, angles and range; lines ${first}, ${first + 1}, ${first + 2}, ...); dropped as "duplicate" (qc.dropDuplicates)\n`);
    expect(r.stdout).not.toContain('time steps back'); // the repeats say nothing about time order
    expect(manifestOf(join(dir, 'out', 'faulty')).samples.perInstrument.c.rejected.duplicate).toBe(rows.length);
    expect(fieldTables(join(dir, 'out', 'faulty'))).toEqual(clean.tables);
  });
});

describe('time order', () => {
  it('a stretch running backward: the step back with its line and size; rows of open windows still used', async () => {
    const { dir, file } = await freshCampaign();
    const path = join(dir, 'data', 'a.csv');
    const lines = dataLines(path);
    // swap data rows 501..600 and 601..700 (file lines 502..601 and 602..701)
    const b1 = lines.slice(501, 601), b2 = lines.slice(601, 701);
    writeLines(path, [...lines.slice(0, 501), ...b2, ...b1, ...lines.slice(701)]);
    const t = (l: string) => Number(l.split(',')[0]);
    const step = t(b2[99]) - t(b1[0]);
    expect(step).toBeGreaterThan(1); // the fault must exceed the default tolerance of 1 s to be a fault
    // the first row of b1 now stands at line 1 + 500 + 100 + 1
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain(`warning: instrument a, data/a.csv: time steps back 1 time by more than 1 s (line 602; largest ${step.toFixed(1)} s at line 602); rows of windows already finished are rejected as out_of_time_order\n`);
    // the whole file is one batch, read before any window finishes: nothing is lost, the results are unchanged
    // (the budget's lag and burst sums follow the samples' order, which the swap changed: compared without them)
    expect(withoutBudget(fieldTables(join(dir, 'out', 'faulty')))).toEqual(withoutBudget(clean.tables));
  });
});

describe('the same data twice', () => {
  it('the same file listed twice: read once, with a warning; results and accounting as clean', async () => {
    const { dir, file } = await freshCampaign((c) => (c.instruments[0].files = ['data/a.csv', 'data/./a.csv']));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('warning: data/a.csv is listed twice (under instrument a and under a): read once, for a\n');
    const m = manifestOf(join(dir, 'out', 'faulty'));
    expect(m.samples.perInstrument).toEqual(clean.manifest.samples.perInstrument);
    expect(fieldTables(join(dir, 'out', 'faulty'))).toEqual(clean.tables);
    expect(m.inputs.length).toBe(3);
  });

  it('the same file under a second name (a hard link, a symbolic link): read once, with a warning; results as clean', async () => {
    for (const link of [linkSync, symlinkSync]) {
      const { dir, file } = await freshCampaign((c) => (c.instruments[0].files = ['data/a.csv', 'data/a-link.csv']));
      link(join(dir, 'data', 'a.csv'), join(dir, 'data', 'a-link.csv'));
      const r = await runCli(['run', file], dir);
      expect(r.code).toBe(0);
      // Before the fix a hard link (same device and inode, another path) was read twice: every row of a used again.
      expect(r.stdout).toContain('warning: data/a-link.csv is listed twice (under instrument a as data/a.csv and under a): read once, for a\n');
      const m = manifestOf(join(dir, 'out', 'faulty'));
      expect(m.samples.perInstrument).toEqual(clean.manifest.samples.perInstrument);
      expect(fieldTables(join(dir, 'out', 'faulty'))).toEqual(clean.tables);
    }
  });

  it('the same content under two names: named by SHA-256, and its rows found as repeats', async () => {
    const { dir, file } = await freshCampaign((c) => (c.instruments[0].files = ['data/a.csv', 'data/a-copy.csv']));
    copyFileSync(join(dir, 'data', 'a.csv'), join(dir, 'data', 'a-copy.csv'));
    const rows = dataLines(join(dir, 'data', 'a.csv')).length - 1;
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/warning: files data\/a\.csv and data\/a-copy\.csv have the same content \(SHA-256 [0-9a-f]{12}\.\.\.\): the same data listed twice\?\n/);
    // the two files are read in step: whichever comes second repeats the other, row for row
    const m = manifestOf(join(dir, 'out', 'faulty'));
    const dupWarnings = m.warnings.filter((w: string) => /^instrument a, data\/a(-copy)?\.csv: \d+ rows? repeats? an earlier row exactly/.test(w));
    const counted = dupWarnings.map((w: string) => Number(/: (\d+) rows? repeat/.exec(w)![1])).reduce((x: number, y: number) => x + y, 0);
    expect(counted).toBe(rows);
  });
});

describe('files without usable rows are errors: exit 1, nothing written', () => {
  it('a header and no rows', async () => {
    const { dir, file } = await freshCampaign();
    writeFileSync(join(dir, 'data', 'b.csv'), HEADER + '\n');
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`wakeplane: ${join(dir, 'data', 'b.csv')}: no usable rows: the file has a header and no data lines\n`);
    expect(existsSync(join(dir, 'out'))).toBe(false);
    const c = await runCli(['check', file], dir);
    expect(c.code).toBe(1);
    expect(c.stderr).toBe(r.stderr);
  });

  it('every row unreadable: the error names the reasons and the first bad line; the staging folder is gone', async () => {
    const { dir, file } = await freshCampaign();
    const path = join(dir, 'data', 'b.csv');
    const [head, ...rows] = dataLines(path);
    writeLines(path, [head, ...rows.map((l) => l.split(',').map((f, k) => (k === 2 ? 'x' : f)).join(','))]);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    const msg = `data/b.csv: no usable rows: none of its ${rows.length} data lines could be read (bad_number ${rows.length}; the first, line 2: column "azimuth_deg" (azimuth_deg): not a number: "x")`;
    expect(r.stderr).toBe(`wakeplane: ${msg}\n`);
    expect(readdirSync(join(dir, 'out'))).toEqual([]);
    const c = await runCli(['check', file], dir);
    expect(c.code).toBe(1);
    expect(c.stderr).toBe(r.stderr);
  });
});

describe('bad rows are charged to the instrument they name', () => {
  it('a row naming b in a\'s file, with an unreadable elevation, counts for b; the line is reported', async () => {
    const { dir, file } = await freshCampaign();
    const path = join(dir, 'data', 'a.csv');
    const lines = dataLines(path);
    const t = lines[lines.length - 1].split(',')[0];
    writeLines(path, [...lines, `${t},b,12.5,abc,300,1.2,-10`]);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    const m = manifestOf(join(dir, 'out', 'faulty'));
    expect(m.samples.perInstrument.b.rejected.bad_number).toBe(clean.manifest.samples.perInstrument.b.rejected.bad_number + 1);
    expect(m.samples.perInstrument.a.rejected.bad_number).toBe(clean.manifest.samples.perInstrument.a.rejected.bad_number);
    expect(m.samples.perInstrument.b.read).toBe(clean.manifest.samples.perInstrument.b.read + 1);
    const rej = readFileSync(join(dir, 'out', 'faulty', 'rejected_rows.csv'), 'utf8').trim().split('\n');
    // variable, ray and gate are for NetCDF files (empty for text files)
    expect(rej).toEqual(['file,line,variable,ray,gate,reason,detail,text', `data/a.csv,${lines.length + 1},,,,bad_number,"column ""elevation_deg"" (elevation_deg): not a number: ""abc""","${t},b,12.5,abc,300,1.2,-10"`]);
  });
});

describe('outputs that stay empty are explained', () => {
  it('no turbine series: the steering table is empty, and the run says why', async () => {
    const { dir, file } = await freshCampaign((c) => delete c.turbine.series);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('warning: no turbine series (turbine.series with yaw_deg): the yaw offset of each window is unknown, so wake/steering.csv has no rows\n');
    expect(readFileSync(join(dir, 'out', 'faulty', 'wake', 'steering.csv'), 'utf8').trim().split('\n').length).toBe(1); // header only
  });
});
