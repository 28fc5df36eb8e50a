/**
 * Held-back cases for issue 14 (output safety and clear errors), built as a hostile but realistic user would: the
 * campaign and its data kept inside an earlier result folder, an output root that is a data file, a render of a
 * result folder whose field table was deleted, a campaign file whose name starts with a dash given after "--". Each
 * asserts the exact outcome: exit code, one line naming the file or folder, and that the user's files did not move
 * or change (snapshots before and after).
 */
import { spawn, spawnSync } from 'node:child_process';
import { chmodSync, cpSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { parse, stringify } from 'yaml';
import { describe, expect, it } from 'vitest';
import { freshCampaign, manifestOf, runCli, snapshot } from './faults/helpers.ts';

describe('an earlier result that holds what the command reads is not moved', () => {
  it('campaign and data kept inside the earlier result: refused in one line, nothing moved, no staging folder left', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file], dir)).code).toBe(0);
    // The user keeps a copy of the campaign and its data inside the result folder and runs it from there.
    const mine = join(dir, 'out', 'faulty', 'mine');
    mkdirSync(mine);
    cpSync(join(dir, 'data'), join(mine, 'data'), { recursive: true });
    const c = parse(readFileSync(file, 'utf8'));
    c.output.dir = '../..';
    writeFileSync(join(mine, 'campaign.yaml'), stringify(c));
    const before = snapshot(join(dir, 'out'));
    const r = await runCli(['run', 'campaign.yaml'], mine);
    expect(r.code).toBe(1);
    // Before the fix the earlier result (with the user's campaign and data in it) was renamed to .replaced-...
    expect(r.stderr).toBe(
      'wakeplane: ..: holds campaign.yaml, which this command reads; left alone. Move your files out of the result folder or choose another output.dir (--out)\n',
    );
    expect(snapshot(join(dir, 'out'))).toEqual(before); // nothing renamed, no staging folder
    expect(readdirSync(join(dir, 'out'))).toEqual(['faulty']);
  });

  it('only the data inside the earlier result (campaign outside): refused, the data file named', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file], dir)).code).toBe(0);
    mkdirSync(join(dir, 'out', 'faulty', 'raw'));
    cpSync(join(dir, 'data', 'c.csv'), join(dir, 'out', 'faulty', 'raw', 'c.csv'));
    const c = parse(readFileSync(file, 'utf8'));
    c.instruments[2].files = ['out/faulty/raw/c.csv'];
    writeFileSync(file, stringify(c));
    const before = snapshot(join(dir, 'out'));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, file], dir);
      expect(r.code).toBe(1); // check exits 1 exactly when run would stop
      expect(r.stderr).toContain('out/faulty: holds out/faulty/raw/c.csv, which this command reads; left alone.');
      expect(r.stderr.trim().split('\n').length).toBe(1);
    }
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it('a result folder holding nothing the command reads is still replaced as before', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file], dir)).code).toBe(0);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(readdirSync(join(dir, 'out')).filter((n) => n.startsWith('faulty.replaced-')).length).toBe(1);
  });
});

describe('an output root that cannot hold folders', () => {
  it('output.dir naming a data file: check and run exit 1 with one line naming it, before any work; the file unchanged', async () => {
    const { dir, file } = await freshCampaign((c) => { c.output.dir = 'data/a.csv'; });
    const before = snapshot(join(dir, 'data'));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, file], dir);
      expect(r.code).toBe(1);
      // Before the fix: check said the campaign was fine (exit 0); run failed with a raw "error: EEXIST ... mkdir".
      expect(r.stderr).toBe('wakeplane: data/a.csv: the output folder (output.dir) is a file, not a folder; nothing written. Choose another output.dir (--out)\n');
    }
    expect(snapshot(join(dir, 'data'))).toEqual(before);
  });

  it('output.dir below a data file: the same one line, naming the file in the way', async () => {
    const { dir, file } = await freshCampaign((c) => { c.output.dir = 'data/a.csv/results'; });
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: data/a.csv: the output folder (output.dir) is a file, not a folder; nothing written. Choose another output.dir (--out)\n');
  });
});

describe('render of a result folder with a deleted field table', () => {
  it('one line naming the missing table, exit 1, nothing redrawn', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file], dir)).code).toBe(0);
    const runDir = join(dir, 'out', 'faulty');
    const table = manifestOf(runDir).outputs.find((o: { kind: string; path: string }) => o.path.startsWith('fields/') && o.path.endsWith('.csv')).path;
    rmSync(join(runDir, table));
    const before = snapshot(runDir);
    const r = await runCli(['render', 'out/faulty'], dir);
    expect(r.code).toBe(1);
    // Before the fix: "wakeplane: error: ENOENT: no such file or directory, open ..." and the --debug hint.
    expect(r.stderr).toBe(`wakeplane: ${join(runDir, table)}: field table listed in the manifest is missing; nothing redrawn\n`);
    expect(snapshot(runDir)).toEqual(before);
  });
});

describe('command-line conventions', () => {
  it('"--" ends the options: a campaign file named with a leading dash runs', async () => {
    const { dir, file } = await freshCampaign();
    const dashed = join(dir, '-campaign ü.yaml');
    writeFileSync(dashed, readFileSync(file));
    const r = await runCli(['run', '--', '-campaign ü.yaml'], dir);
    // Before the fix: "Not enough non-option arguments: got 0, need at least 1" (the POSIX "--" was not honoured).
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(existsSync(join(dir, 'out', 'faulty', 'manifest.json'))).toBe(true);
  });
});

describe('interrupting a shard run (run --partial)', () => {
  const bin = join(import.meta.dirname, '..', 'bin', 'wakeplane.js');
  it('SIGINT while the partial file is written: its temporary file is removed, one line, exit 130', async () => {
    const { dir, file } = await freshCampaign();
    // c.csv made 40 times longer (the record repeated, shifted by 600 s each time), so the shard runs long enough
    // to be interrupted while it writes.
    const lines = readFileSync(join(dir, 'data', 'c.csv'), 'utf8').trimEnd().split('\n');
    const rows = lines.slice(1);
    const out = [lines[0]];
    for (let k = 0; k < 40; k++) for (const r of rows) out.push(`${(Number(r.slice(0, r.indexOf(','))) + 600 * k).toFixed(3)}${r.slice(r.indexOf(','))}`);
    writeFileSync(join(dir, 'data', 'c.csv'), out.join('\n') + '\n');
    const child = spawn(process.execPath, [bin, 'run', file, '--partial', 'p.wpart', '--files', 'data/c.csv'], { cwd: dir, stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    const exited = new Promise<number | null>((res) => child.on('close', (c) => res(c)));
    const writing = () => readdirSync(dir).filter((n) => n.startsWith('p.wpart.writing-'));
    for (let k = 0; k < 800 && !writing().length; k++) await new Promise((r) => setTimeout(r, 25));
    expect(writing().length).toBe(1);
    child.kill('SIGINT');
    expect(await exited).toBe(130);
    // Before the fix: "nothing unfinished to remove" and p.wpart.writing-<pid> left behind for good.
    expect(stderr).toMatch(/^wakeplane: interrupted by SIGINT; removed the unfinished p\.wpart\.writing-\d+; no result was written\n$/);
    expect(readdirSync(dir).sort()).toEqual(['campaign.yaml', 'data']);
  }, 60_000);
});

describe('an output root without write permission', () => {
  const bin = join(import.meta.dirname, '..', 'bin', 'wakeplane.js');
  // Root writes into any folder, so the case is run as an unprivileged user: as "nobody" through setpriv when the
  // tests run as root, else as the user running them.
  const asRoot = process.getuid?.() === 0;
  const NOBODY = ['--reuid=65534', '--regid=65534', '--clear-groups'];
  // As root, the case needs setpriv and an installation "nobody" can run (the entry from a fresh bundle, or tsx with
  // an esbuild binary others may execute): probed with --version.
  const nobodyRuns = asRoot && spawnSync('setpriv', [...NOBODY, process.execPath, bin, '--version'], { encoding: 'utf8' }).status === 0;
  it.runIf(!asRoot || nobodyRuns)('check and run exit 1 with one line naming the folder; nothing written', async () => {
    const { dir, file } = await freshCampaign((c) => { c.output.dir = 'locked/results'; });
    mkdirSync(join(dir, 'locked'));
    spawnSync('chmod', ['-R', 'a+rwX', dir]);
    if (asRoot) chmodSync(dirname(dir), 0o711); // the test file's own temporary folder (test/setup/tmpdir.ts): passable
    chmodSync(join(dir, 'locked'), 0o555);
    const cmd = (verb: string) => {
      const args = [bin, verb, file];
      const r = asRoot
        ? spawnSync('setpriv', [...NOBODY, process.execPath, ...args], { cwd: dir, encoding: 'utf8' })
        : spawnSync(process.execPath, args, { cwd: dir, encoding: 'utf8' });
      return { code: r.status, stderr: r.stderr };
    };
    for (const verb of ['check', 'run']) {
      const r = cmd(verb);
      // Before the fix: check exit 0 ("results: locked/results/faulty"), run "error: EACCES: permission denied, mkdir".
      expect(r.stderr).toBe('wakeplane: locked: the output folder (output.dir) cannot be written here (no write permission); nothing written. Choose another output.dir (--out)\n');
      expect(r.code).toBe(1);
    }
    expect(readdirSync(join(dir, 'locked'))).toEqual([]);
  }, 60_000);
});

describe('campaign file errors name the key', () => {
  it('a key given twice: each repeat named with its line and column', async () => {
    const { dir, file } = await freshCampaign();
    const text = readFileSync(file, 'utf8');
    const lines = text.trimEnd().split('\n').length;
    writeFileSync(file, `${text.trimEnd()}\nname: other\n"windows": { kind: fixed, length_s: 600 }\n`);
    const r = await runCli(['check', file], dir);
    expect(r.code).toBe(1);
    // Before the fix: "not valid YAML/JSON: Map keys must be unique", naming no key.
    expect(r.stderr).toBe(
      `wakeplane: ${file}: 2 problems in the campaign file:\n` +
        `  ${file}:${lines + 1}:1: duplicate key "name": a key may be given once in a mapping\n` +
        `  ${file}:${lines + 2}:1: duplicate key "windows": a key may be given once in a mapping\n`,
    );
  });
});

describe('simulate never writes over files it did not write', () => {
  it('a campaign naming the user\'s own data: refused in one line, every file unchanged; its own files are redone', async () => {
    const { dir, file } = await freshCampaign();
    // The copied data carry no record of the simulator: to wakeplane they are the user's measurements.
    writeFileSync(join(dir, 'data', 'a.csv'), 'my own measurements\n');
    const before = snapshot(dir);
    const r = await runCli(['simulate', file], dir);
    expect(r.code).toBe(1);
    // Before the fix: "wrote 5 files", and data/a.csv replaced by synthetic samples.
    // (the first file in the campaign's order is named, the others counted)
    expect(r.stderr).toBe('wakeplane: data/turbine.csv: exists and was not written by wakeplane simulate (and 4 more files in its way); left alone, nothing simulated. Move it away or name other files in the campaign\n');
    expect(snapshot(dir)).toEqual(before);
    // With the data out of the way the simulator writes them, and may write them again (they are its own)...
    rmSync(join(dir, 'data'), { recursive: true });
    expect((await runCli(['simulate', file, '--quiet'], dir)).code).toBe(0);
    expect((await runCli(['simulate', file, '--quiet'], dir)).code).toBe(0);
    // ...but not once the user has changed one of them.
    writeFileSync(join(dir, 'data', 'b.csv'), readFileSync(join(dir, 'data', 'b.csv'), 'utf8') + '1772367000.000,b,10,1,300,1.0,0.0\n');
    const again = await runCli(['simulate', file], dir);
    expect(again.code).toBe(1);
    expect(again.stderr).toBe('wakeplane: data/b.csv: was written by wakeplane simulate but has changed since; left alone, nothing simulated. Move it away or name other files in the campaign\n');
  });
});

describe('a data file cut short in its last row', () => {
  it('the cut falls inside the last number, which still reads: warned, naming instrument and file; the row kept', async () => {
    const { dir, file } = await freshCampaign();
    const path = join(dir, 'data', 'c.csv');
    const text = readFileSync(path, 'utf8');
    // Cut inside the last row's CNR (e.g. "-19.08" -> "-19"): the row still parses, with a wrong value.
    const cut = text.slice(0, text.trimEnd().length - 3);
    expect(cut.endsWith('\n')).toBe(false);
    writeFileSync(path, cut);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    const rows = cut.split('\n').length - 1; // data rows: lines after the header, the last one without its break
    // Before the fix: no word; the cut row was accepted with its shortened value.
    const last = cut.slice(cut.lastIndexOf('\n') + 1);
    const warning = `instrument c, data/c.csv: the file ends without a line break: its last row ("\u2026${last.slice(-40)}") may have been cut short (a copy or write interrupted?); read as it stands`;
    expect(r.stdout).toContain(`warning: ${warning}\n`);
    expect(manifestOf(join(dir, 'out', 'faulty')).warnings).toContain(warning);
    expect(manifestOf(join(dir, 'out', 'faulty')).samples.perInstrument.c.read).toBe(rows); // the cut row read (and counted) as it stands
  });
});

describe('a path starting with "~" in the campaign file', () => {
  it('output.dir "~/wp-results" goes to the home folder, never to a folder named "~" beside the campaign', async () => {
    const { dir, file } = await freshCampaign((c) => { c.output.dir = '~/wp-results'; });
    const home = join(dir, 'home');
    mkdirSync(home);
    const oldHome = process.env.HOME;
    process.env.HOME = home; // os.homedir() reads HOME on POSIX systems
    try {
      const r = await runCli(['run', file, '--quiet'], dir);
      expect(r.code).toBe(0);
    } finally {
      process.env.HOME = oldHome;
    }
    // Before the fix: the result went to <campaign folder>/~/wp-results/faulty, a folder named "~" (one
    // "rm -rf ~" away from the user's home).
    expect(existsSync(join(dir, '~'))).toBe(false);
    expect(existsSync(join(home, 'wp-results', 'faulty', 'manifest.json'))).toBe(true);
  });
});
