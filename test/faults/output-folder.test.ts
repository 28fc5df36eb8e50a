/**
 * Faults at the output: wakeplane renames, replaces or deletes only folders it marked as its own. Each case builds
 * the situation on a fresh copy of the clean simulated campaign and asserts the exact outcome: the one-line error
 * naming what is in the way, the exit code, and that nothing was changed or left behind.
 */
import { spawn, spawnSync } from 'node:child_process';
import { chmodSync, existsSync, lstatSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { dirname, join, relative } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { MARKER, findPartials, processStartOf, renameRefusal } from '../../src/pipeline/outputFolder.ts';
import { renderRunFolder } from '../../src/pipeline/renderFolder.ts';
import { runCampaign } from '../../src/pipeline/run.ts';
import { defaultStages } from '../../src/pipeline/stages.ts';
import { loadCampaignFile } from '../../src/campaign/load.ts';
import { freshCampaign, manifestOf, runCli, snapshot } from './helpers.ts';

const bootId = () => (existsSync('/proc/sys/kernel/random/boot_id') ? readFileSync('/proc/sys/kernel/random/boot_id', 'utf8').trim() : '');

function partialMarker(pid: number, extra: Record<string, unknown> = {}): string {
  return JSON.stringify({
    tool: 'wakeplane', kind: 'run', campaign: 'faulty', campaignSha256: '', state: 'partial', host: hostname(), bootId: bootId(), pid,
    processStart: processStartOf(pid), startedAt: new Date().toISOString(), ...extra,
  });
}

/** The pid of a process that has exited (so no process has it, unless reused at once). */
function deadPid(): number {
  const r = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], { encoding: 'utf8' });
  return Number(r.stdout);
}

describe('what stands at the target', () => {
  it('a folder wakeplane did not make: one-line error naming it, exit 1, the folder untouched, nothing left behind', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'out', 'faulty'), { recursive: true });
    writeFileSync(join(dir, 'out', 'faulty', 'my-notes.txt'), 'mine');
    const before = snapshot(join(dir, 'out'));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`wakeplane: out/faulty: exists and was not made by wakeplane (no ${MARKER}); left alone. Move it away or choose another output.dir (--out)\n`);
    expect(snapshot(join(dir, 'out'))).toEqual(before); // nothing renamed, nothing added (no staging folder)
  });

  it('the campaign file itself as the target (output.dir ".", name "campaign.yaml"): refused, the file unchanged', async () => {
    const { dir, file } = await freshCampaign((c) => { c.name = 'campaign.yaml'; c.output.dir = '.'; });
    const text = readFileSync(file, 'utf8');
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: campaign.yaml: exists and is a file, not a folder wakeplane made; left alone. Move it away or choose another output.dir (--out)\n');
    expect(readFileSync(file, 'utf8')).toBe(text);
    expect(readdirSync(dir).sort()).toEqual(['campaign.yaml', 'data']);
  });

  it('an input data file as the target (output.dir "data", name "a.csv"): refused, the data unchanged', async () => {
    const { dir, file } = await freshCampaign((c) => { c.name = 'a.csv'; c.output.dir = 'data'; });
    const before = snapshot(join(dir, 'data'));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^wakeplane: data\/a\.csv: exists and is a file, not a folder wakeplane made; left alone\./);
    expect(snapshot(join(dir, 'data'))).toEqual(before);
  });

  it('a symbolic link at the target is not followed or moved', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'elsewhere'));
    mkdirSync(join(dir, 'out'));
    spawnSync('ln', ['-s', join(dir, 'elsewhere'), join(dir, 'out', 'faulty')]);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^wakeplane: out\/faulty: exists and is a symbolic link/);
    expect(readdirSync(join(dir, 'out'))).toEqual(['faulty']);
  });

  it('another campaign\'s result of the same folder name is refused, not replaced', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'out', 'faulty'), { recursive: true });
    writeFileSync(join(dir, 'out', 'faulty', MARKER), JSON.stringify({ tool: 'wakeplane', kind: 'plan', campaign: 'faulty', state: 'complete' }));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: out/faulty: holds wakeplane\'s plan of campaign "faulty", not the results of "faulty"; left alone. Choose another name or output.dir (--out)\n');
  });

  it('check reports the same refusal and exits 1', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'out', 'faulty'), { recursive: true });
    const r = await runCli(['check', file], dir);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/^campaign faulty: 1 problem: a run would stop \(below\)\n/);
    expect(r.stderr).toMatch(/^wakeplane: out\/faulty: exists and was not made by wakeplane/);
  });
});

describe('an output root that is a broken symbolic link', () => {
  it('check and run both stop with one line naming it, before any work; nothing created where it points', async () => {
    const { dir, file } = await freshCampaign();
    symlinkSync(join(dir, 'gone', 'results'), join(dir, 'results'));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, file, '--out', 'results'], dir);
      // Before the fix check said the campaign was fine (exit 0) and run failed at its first mkdir (ENOENT).
      expect(r.code).toBe(1);
      expect(r.stderr).toBe(`wakeplane: results: the output folder (output.dir) is a symbolic link to ${join(dir, 'gone', 'results')}, which does not exist; nothing written. Create that folder or choose another output.dir (--out)\n`);
    }
    expect(existsSync(join(dir, 'gone'))).toBe(false);
  });
});

describe('an earlier result this user may not move', () => {
  // In a shared folder with the sticky bit (as /tmp, or a group's scratch space) only a folder's owner may rename it:
  // an earlier result a colleague wrote there cannot be kept aside.
  it('renameRefusal: another user\'s result in a sticky folder is refused, its owner\'s is not', () => {
    const root = mkdtempSync(join(tmpdir(), 'wakeplane-sticky-'));
    mkdirSync(join(root, 'faulty'));
    chmodSync(root, 0o1777);
    const owner = lstatSync(join(root, 'faulty')).uid;
    const other = owner + 4242;
    expect(renameRefusal(root, join(root, 'faulty'), owner)).toBe('');
    expect(renameRefusal(root, join(root, 'faulty'), other)).toBe(
      `belongs to another user (uid ${owner}) in a folder where only a folder's owner may rename it (sticky bit), so it cannot be kept aside; nothing written. Ask its owner to move it, or choose another output.dir (--out)`,
    );
    chmodSync(root, 0o777); // no sticky bit: anyone who may write the folder may rename in it
    expect(renameRefusal(root, join(root, 'faulty'), other)).toBe('');
  });

  const setpriv = spawnSync('setpriv', ['--version']).status === 0;
  it.runIf(process.getuid?.() === 0 && setpriv)('run as another user: one line before any work, the earlier result untouched', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    // the test's own folders opened to the unprivileged user (they are removed after the file)
    for (let p = dir; p !== dirname(tmpdir()); p = dirname(p)) chmodSync(p, 0o777);
    spawnSync('chmod', ['-R', 'a+rwX', dir]);
    chmodSync(join(dir, 'out'), 0o1777);
    const before = snapshot(join(dir, 'out'));
    const bin = join(import.meta.dirname, '..', '..', 'bin', 'wakeplane.js');
    const r = spawnSync('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, bin, 'run', file], { cwd: dir, encoding: 'utf8', env: { ...process.env, WAKEPLANE_FROM_SOURCE: '1' } });
    // Before the fix: the whole run, then "wakeplane: error: EPERM: operation not permitted, rename ..." and the new
    // result removed with its staging folder.
    expect(r.stderr).toBe(`wakeplane: out/faulty: belongs to another user (uid 0) in a folder where only a folder's owner may rename it (sticky bit), so it cannot be kept aside; nothing written. Ask its owner to move it, or choose another output.dir (--out)\n`);
    expect(r.status).toBe(1);
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it.runIf(process.getuid?.() === 0 && setpriv)('another user\'s stale staging folder in a sticky folder: reported and left, the run goes on', async () => {
    const { dir, file } = await freshCampaign();
    const pid = deadPid();
    const p = join(dir, 'out', `.faulty.partial-${pid}`);
    mkdirSync(join(p, 'fields'), { recursive: true });
    writeFileSync(join(p, 'fields', 'p5_w000.csv'), 'x');
    writeFileSync(join(p, MARKER), partialMarker(pid, { processStart: '1' }));
    for (let q = dir; q !== dirname(tmpdir()); q = dirname(q)) chmodSync(q, 0o777);
    spawnSync('chmod', ['-R', 'a+rwX', dir]);
    chmodSync(join(dir, 'out'), 0o1777);
    const bin = join(import.meta.dirname, '..', '..', 'bin', 'wakeplane.js');
    const r = spawnSync('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, bin, 'run', file], { cwd: dir, encoding: 'utf8', env: { ...process.env, WAKEPLANE_FROM_SOURCE: '1' } });
    // Before the fix: "wakeplane: error: EPERM: operation not permitted, rmdir ..." (its files already removed).
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout).toContain(`note: unfinished folder out/.faulty.partial-${pid} left in place (its run (pid ${pid}) no longer exists; another user's, in a folder where only its owner may remove it)`);
    expect(readFileSync(join(p, 'fields', 'p5_w000.csv'), 'utf8')).toBe('x');
  });
});

describe('names', () => {
  for (const [name, rule] of [
    ['..', 'not starting with "."'],
    ['.', 'not starting with "."'],
    ['.hidden', 'not starting with "."'],
    ['a/b', 'letters, digits'],
    ['', 'letters, digits'],
    // A result folder copied to (or a run on) Windows: device names open the device, a final dot is dropped, so
    // "trail." would be the folder "trail" (perhaps the user's). Before the fix all three passed validation.
    ['CON', 'not a device name Windows reserves'],
    ['lpt1.results', 'not a device name Windows reserves'],
    ['trail.', 'not ending with "."'],
  ] as const) {
    it(`campaign name ${JSON.stringify(name)} is refused by validation, nothing written`, async () => {
      const { dir, file } = await freshCampaign((c) => (c.name = name));
      const r = await runCli(['run', file], dir);
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(new RegExp(`campaign\\.yaml:\\d+:\\d+: name: .*${rule.replace(/[.*"]/g, (m) => `\\${m}`)}`));
      expect(existsSync(join(dir, 'out'))).toBe(false);
      expect(readdirSync(dir).sort()).toEqual(['campaign.yaml', 'data']);
    });
  }
});

describe('ids name output files', () => {
  it('a plane id longer than 100 characters is refused by validation (check and run), nothing written', async () => {
    const { dir, file } = await freshCampaign((c) => (c.planes[0].id = 'p'.repeat(101)));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, file], dir);
      // Before the fix check said fine and run failed after the ingest with a raw ENAMETOOLONG (a 250-character id).
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(/campaign\.yaml:\d+:\d+: planes\[0\]\.id: at most 100 characters \(ids name output files\)/);
    }
    expect(existsSync(join(dir, 'out'))).toBe(false);
  });

  it('ids of 100 characters (plane, instrument, turbine) run through, figures included', async () => {
    const { dir, file } = await freshCampaign((c) => {
      c.planes[0].id = 'p'.repeat(100);
      c.instruments[0].id = 'a'.repeat(100);
      c.turbine.id = 't'.repeat(100);
      c.output.images = true;
    });
    // the rows name their instrument (second column)
    const a = join(dir, 'data', 'a.csv');
    writeFileSync(a, readFileSync(a, 'utf8').replace(/^([^,\n]*),a,/gm, `$1,${'a'.repeat(100)},`));
    const r = await runCli(['run', file, '--quiet'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
  });
});

describe('replacing an earlier result', () => {
  it('keeps it under a name that never collides, even for runs finishing in the same millisecond', async () => {
    const { dir, file } = await freshCampaign();
    vi.useFakeTimers({ toFake: ['Date'], now: new Date('2026-05-01T00:00:00Z') });
    try {
      for (let k = 0; k < 3; k++) expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    } finally {
      vi.useRealTimers();
    }
    const names = readdirSync(join(dir, 'out')).sort();
    const stamp = `faulty.replaced-20260501T000000.000Z-${process.pid}`;
    expect(names).toEqual(['faulty', stamp, `${stamp}-2`]);
    for (const n of names) expect(JSON.parse(readFileSync(join(dir, 'out', n, MARKER), 'utf8')).state).toBe('complete');
  });

  it('a result written before markers existed (its manifest names wakeplane and the campaign) is kept, not refused', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'out', 'faulty'), { recursive: true });
    writeFileSync(join(dir, 'out', 'faulty', 'manifest.json'), JSON.stringify({ tool: { name: 'wakeplane' }, campaign: { name: 'faulty' } }));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/note: an earlier result was kept as out\/faulty\.replaced-\d{8}T\d{6}\.\d{3}Z-\d+\n/);
  });
});

describe('a marker does not make a folder wakeplane\'s: only what a run wrote may be there', () => {
  // A marker is a small JSON file anyone can copy; what proves a folder is the tool's is that it holds only the files
  // the tool wrote (the marker lists them, the manifest lists what a render added). Anything else stops the command.
  it('a marker copied into a user\'s folder: refused in one line naming the user\'s file, nothing moved', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet', '--out', 'elsewhere'], dir)).code).toBe(0);
    mkdirSync(join(dir, 'out', 'faulty'), { recursive: true });
    writeFileSync(join(dir, 'out', 'faulty', 'notes.txt'), 'mine');
    writeFileSync(join(dir, 'out', 'faulty', MARKER), readFileSync(join(dir, 'elsewhere', 'faulty', MARKER)));
    const before = snapshot(join(dir, 'out'));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    // Before the fix the user's folder was renamed to faulty.replaced-... as an earlier result.
    expect(r.stderr).toBe('wakeplane: out/faulty: holds notes.txt, which wakeplane did not write; left alone. Move it out of the folder or choose another output.dir (--out)\n');
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it('a file the user added inside an earlier result (fields/my-fit.py): refused, named, nothing moved', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    writeFileSync(join(dir, 'out', 'faulty', 'fields', 'my-fit.py'), 'print(1)');
    const before = snapshot(join(dir, 'out'));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, file], dir);
      expect(r.code).toBe(1);
      expect(r.stderr).toBe('wakeplane: out/faulty: holds fields/my-fit.py, which wakeplane did not write; left alone. Move it out of the folder or choose another output.dir (--out)\n');
    }
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it('a user\'s file whose name looks temporary (notes.2024.tmp) is still the user\'s: refused', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    writeFileSync(join(dir, 'out', 'faulty', 'notes.2024.tmp'), 'mine');
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: out/faulty: holds notes.2024.tmp, which wakeplane did not write; left alone. Move it out of the folder or choose another output.dir (--out)\n');
  });

  it('render of a result holding a user\'s file: one line naming it and what to do, nothing redrawn', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    writeFileSync(join(dir, 'out', 'faulty', 'notes.txt'), 'mine');
    const before = snapshot(join(dir, 'out'));
    const r = await runCli(['render', 'out/faulty'], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`wakeplane: ${join(dir, 'out', 'faulty')}: holds notes.txt, which wakeplane did not write; left alone, nothing redrawn. Move it out of the folder and render again\n`);
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it('a plan folder with a user\'s file in it: refused, nothing moved', async () => {
    const { dir, file } = await freshCampaign((c) => (c.plan = { directions_deg: [270] }));
    expect((await runCli(['plan', file, '--no-images', '--quiet'], dir)).code).toBe(0);
    mkdirSync(join(dir, 'out', 'faulty-plan', 'field-notes'));
    const before = snapshot(join(dir, 'out'));
    const r = await runCli(['plan', file, '--no-images'], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: out/faulty-plan: holds field-notes, which wakeplane did not write; left alone. Move it out of the folder or choose another output.dir (--out)\n');
    expect(snapshot(join(dir, 'out'))).toEqual(before);
  });

  it('a result that render redrew is still replaced (the images it added are in the manifest)', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    expect((await runCli(['render', 'out/faulty', '--quiet'], dir)).code).toBe(0);
    expect(existsSync(join(dir, 'out', 'faulty', 'report.html'))).toBe(true);
    const r = await runCli(['run', file], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/note: an earlier result was kept as out\/faulty\.replaced-/);
  });

  it('a render stopped half way (images drawn, manifest not yet rewritten): the result is still replaced', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    // The render fails after drawing its figures and before listing them in the manifest (as Ctrl-C, a full disk or
    // a crash there would leave it).
    const stop = { stage: (s: string) => { if (s === 'report') throw new Error('stopped'); }, file() {}, done() {} };
    await expect(renderRunFolder(join(dir, 'out', 'faulty'), { progress: stop })).rejects.toThrow('stopped');
    expect(readdirSync(join(dir, 'out', 'faulty', 'images')).length).toBeGreaterThan(0);
    const r = await runCli(['run', file], dir);
    // Before the fix: "holds images/..., which wakeplane did not write" and exit 1: the figures were its own.
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/note: an earlier result was kept as out\/faulty\.replaced-/);
  });

  it('figures left by a stopped render stay wakeplane\'s after a later render that does not draw them', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const stop = { stage: (s: string) => { if (s === 'report') throw new Error('stopped'); }, file() {}, done() {} };
    await expect(renderRunFolder(join(dir, 'out', 'faulty'), { progress: stop, windowImages: 'all' })).rejects.toThrow('stopped');
    const windowImages = readdirSync(join(dir, 'out', 'faulty', 'images')).filter((n) => /_w\d+_/.test(n));
    expect(windowImages.length).toBeGreaterThan(0);
    expect((await runCli(['render', 'out/faulty', '--quiet'], dir)).code).toBe(0); // default selection: no window images
    expect(readdirSync(join(dir, 'out', 'faulty', 'images'))).toEqual(expect.arrayContaining(windowImages)); // left, not deleted
    const r = await runCli(['run', file], dir);
    // Before the fix: "holds images/p5_w000_..., which wakeplane did not write", exit 1.
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
  });

  it('a render killed outright (its temporary figure file left), then a complete render: the result is still replaced', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const run = join(dir, 'out', 'faulty');
    // what kill -9 leaves in the middle of a render: the mark set, a figure's temporary file
    const m = JSON.parse(readFileSync(join(run, MARKER), 'utf8'));
    writeFileSync(join(run, MARKER), JSON.stringify({ ...m, rendering: new Date().toISOString() }));
    mkdirSync(join(run, 'images'), { recursive: true });
    writeFileSync(join(run, 'images', `p5_w001_u_norm.svg.${deadPid()}.tmp`), '<svg');
    expect((await runCli(['render', 'out/faulty', '--quiet'], dir)).code).toBe(0);
    const r = await runCli(['run', file], dir);
    // Before the fix: "holds images/p5_w001_u_norm.svg.<pid>.tmp, which wakeplane did not write", exit 1.
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
  });

  it('a result being redrawn by a render still running: refused in one line before any work, not moved under it', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const run = join(dir, 'out', 'faulty');
    const child = spawn('sleep', ['30']); // stands for the render's process
    try {
      await new Promise((r) => setTimeout(r, 50));
      const m = JSON.parse(readFileSync(join(run, MARKER), 'utf8'));
      const rendering = { at: new Date().toISOString(), host: hostname(), pid: child.pid, processStart: processStartOf(child.pid!) };
      writeFileSync(join(run, MARKER), JSON.stringify({ ...m, rendering }));
      const before = snapshot(join(dir, 'out'));
      const r = await runCli(['run', file], dir);
      // Before the fix the folder was renamed under the render, which then wrote its figures and the old manifest
      // into the new result.
      expect(r.code).toBe(1);
      expect(r.stderr).toBe(`wakeplane: out/faulty: is being redrawn by \`wakeplane render\` (pid ${child.pid}); left alone. Wait for it to finish and run again\n`);
      expect(snapshot(join(dir, 'out'))).toEqual(before);
    } finally {
      child.kill();
    }
  });

  it('a render starting on the earlier result while the run works: the new result is kept in its staging folder, named', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const run = join(dir, 'out', 'faulty');
    const child = spawn('sleep', ['30']); // stands for the render's process
    try {
      await new Promise((r) => setTimeout(r, 50));
      // a last stage that marks the earlier result as being redrawn, as a render starting then would
      const renderStarts = {
        name: 'render-elsewhere',
        async finish() {
          const m = JSON.parse(readFileSync(join(run, MARKER), 'utf8'));
          writeFileSync(join(run, MARKER), JSON.stringify({ ...m, rendering: { at: '', host: hostname(), pid: child.pid, processStart: processStartOf(child.pid!) } }));
          return [];
        },
      };
      const c = loadCampaignFile(file);
      const err = await runCampaign(c, { outRoot: join(dir, 'out'), images: false, stages: [...defaultStages(), renderStarts] }).then(() => undefined, (e: Error) => e);
      const staging = join('out', `.faulty.partial-${process.pid}`);
      // Before the fix: "...the new result was not kept" and the staging folder removed, the whole run's work lost.
      expect(err?.message).toBe(`${relative(process.cwd(), run)}: is being redrawn by \`wakeplane render\` (pid ${child.pid}); left alone. Wait for it to finish and run again (it appeared while this command ran); the new result stays in ${relative(process.cwd(), join(dir, staging))}`);
      expect(JSON.parse(readFileSync(join(dir, staging, MARKER), 'utf8')).state).toBe('complete');
      expect(existsSync(join(dir, staging, 'manifest.json'))).toBe(true);
      expect(findPartials(join(dir, 'out'), 'faulty').map((p) => p.why)).toEqual(['a finished result kept there because its target was in the way; left alone: move it into place yourself']);
    } finally {
      child.kill();
    }
  });

  it('a stale staging folder holding what a run never writes is reported, not deleted, even with --clean', async () => {
    const { dir, file } = await freshCampaign();
    const pid = deadPid();
    const p = join(dir, 'out', `.faulty.partial-${pid}`);
    mkdirSync(join(p, 'thesis'), { recursive: true });
    writeFileSync(join(p, 'thesis', 'chapter1.tex'), 'mine');
    writeFileSync(join(p, MARKER), partialMarker(pid, { processStart: '1' }));
    const r = await runCli(['run', file, '--clean'], dir);
    expect(r.code).toBe(0);
    // Before the fix the folder, the user's thesis with it, was removed as the partial folder of a stopped run.
    expect(readFileSync(join(p, 'thesis', 'chapter1.tex'), 'utf8')).toBe('mine');
    expect(r.stdout).toContain(`note: unfinished folder out/.faulty.partial-${pid} left in place (holds thesis, which a run does not write; left alone)`);
  });
});

describe('unfinished folders of stopped runs', () => {
  it('provably stale (its process is gone): removed by the next run, which says so', async () => {
    const { dir, file } = await freshCampaign();
    const pid = deadPid();
    const p = join(dir, 'out', `.faulty.partial-${pid}`);
    mkdirSync(p, { recursive: true });
    writeFileSync(join(p, MARKER), partialMarker(pid, { processStart: '1' }));
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(0);
    expect(existsSync(p)).toBe(false);
    expect(r.stdout).toContain(`note: removed the unfinished folder out/.faulty.partial-${pid} (its run (pid ${pid}) no longer exists`);
  });

  it('from another host: reported and left; removed with --clean', async () => {
    const { dir, file } = await freshCampaign();
    const p = join(dir, 'out', '.faulty.partial-4242');
    mkdirSync(p, { recursive: true });
    writeFileSync(join(p, MARKER), partialMarker(4242, { host: 'another-host' }));
    const r1 = await runCli(['run', file], dir);
    expect(r1.stdout).toContain('note: unfinished folder out/.faulty.partial-4242 left in place (written on host another-host); remove it with --clean');
    expect(existsSync(p)).toBe(true);
    const c = await runCli(['check', file], dir);
    expect(c.stdout).toContain('note: unfinished folder out/.faulty.partial-4242: written on host another-host (remove it with --clean)');
    const r2 = await runCli(['run', file, '--clean'], dir);
    expect(r2.stdout).toContain('note: removed the unfinished folder out/.faulty.partial-4242 (written on host another-host)');
    expect(existsSync(p)).toBe(false);
  });

  it('a folder of that name without a marker is never touched, even with --clean', async () => {
    const { dir, file } = await freshCampaign();
    const p = join(dir, 'out', '.faulty.partial-99999999');
    mkdirSync(p, { recursive: true });
    writeFileSync(join(p, 'keep.txt'), 'x');
    const r = await runCli(['run', file, '--clean'], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('note: unfinished folder out/.faulty.partial-99999999 left in place (not marked by wakeplane; left alone)');
    expect(readFileSync(join(p, 'keep.txt'), 'utf8')).toBe('x');
  });

  it('one whose process still runs is left, even with --clean', async () => {
    const { dir, file } = await freshCampaign();
    const child = spawn('sleep', ['30']);
    try {
      await new Promise((r) => setTimeout(r, 50));
      const p = join(dir, 'out', `.faulty.partial-${child.pid}`);
      mkdirSync(p, { recursive: true });
      writeFileSync(join(p, MARKER), partialMarker(child.pid!));
      const r = await runCli(['run', file, '--clean'], dir);
      expect(r.code).toBe(0);
      expect(existsSync(p)).toBe(true);
      expect(r.stdout).toContain(`note: unfinished folder out/.faulty.partial-${child.pid} left in place (its run (pid ${child.pid}) is still running)`);
    } finally {
      child.kill();
    }
  });
});

describe('the planner', () => {
  it('writes its own folder <name>-plan/plan/ and never touches a run\'s result', async () => {
    const { dir, file } = await freshCampaign((c) => (c.plan = { directions_deg: [270] }));
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const run = snapshot(join(dir, 'out', 'faulty'));
    const r = await runCli(['plan', file, '--no-images'], dir);
    expect(r.code).toBe(0);
    expect(snapshot(join(dir, 'out', 'faulty'))).toEqual(run);
    expect(readdirSync(join(dir, 'out', 'faulty-plan', 'plan'))).toContain('summary.json');
    expect(JSON.parse(readFileSync(join(dir, 'out', 'faulty-plan', MARKER), 'utf8')).kind).toBe('plan');
    const again = await runCli(['plan', file, '--no-images'], dir);
    expect(again.stdout).toMatch(/note: an earlier result was kept as out\/faulty-plan\.replaced-/);
  });

  it('refuses a folder of that name it did not make', async () => {
    const { dir, file } = await freshCampaign();
    mkdirSync(join(dir, 'out', 'faulty-plan'), { recursive: true });
    const r = await runCli(['plan', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^wakeplane: out\/faulty-plan: exists and was not made by wakeplane/);
  });
});

describe('interrupts', () => {
  const bin = join(import.meta.dirname, '..', '..', 'bin', 'wakeplane.js');
  for (const [sig, code] of [['SIGINT', 130], ['SIGTERM', 143]] as const) {
    it(`${sig}: the partial folder is removed, one line says so, exit ${code}`, async () => {
      const { dir, file } = await freshCampaign((c) => (c.output.images = true));
      const child = spawn(process.execPath, [bin, 'run', file], { cwd: dir, stdio: ['ignore', 'pipe', 'pipe'] });
      let stderr = '';
      child.stderr.on('data', (d) => (stderr += d));
      const exited = new Promise<number | null>((res) => child.on('close', (c) => res(c)));
      // wait for the staging folder to appear, then interrupt
      const out = join(dir, 'out');
      for (let k = 0; k < 400; k++) {
        if (existsSync(out) && readdirSync(out).some((n) => n.startsWith('.faulty.partial-'))) break;
        await new Promise((r) => setTimeout(r, 25));
      }
      expect(readdirSync(out).some((n) => n.startsWith('.faulty.partial-'))).toBe(true);
      child.kill(sig);
      expect(await exited).toBe(code);
      expect(stderr).toMatch(new RegExp(`^wakeplane: interrupted by ${sig}; removed the unfinished out/\\.faulty\\.partial-\\d+; no result was written\\n$`));
      expect(readdirSync(out)).toEqual([]);
    }, 60_000);
  }
});

describe('manifest', () => {
  it('the result folder carries the marker with the campaign hash', async () => {
    const { dir, file } = await freshCampaign();
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    const m = JSON.parse(readFileSync(join(dir, 'out', 'faulty', MARKER), 'utf8'));
    expect(m.campaignSha256).toBe(manifestOf(join(dir, 'out', 'faulty')).campaign.sha256);
    expect(m).toMatchObject({ tool: 'wakeplane', kind: 'run', campaign: 'faulty', state: 'complete', pid: process.pid });
  });
});
