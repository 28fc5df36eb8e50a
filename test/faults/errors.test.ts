/**
 * Faults that stop a command: each error names the file (and line or key), never echoes more than a short excerpt
 * of what it read, never reads a special file as data, reports every schema problem at once with its YAML line and
 * column; the geometry's plausibility; `check` fails exactly when `run` would; the campaign's own settings (images,
 * output folder) are obeyed.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parse, stringify } from 'yaml';
import { HEADER, freshCampaign, runCli } from './helpers.ts';

/** Replaces the campaign file's windows. */
function setWindows(file: string, windows: Record<string, unknown>): void {
  writeFileSync(file, stringify({ ...parse(readFileSync(file, 'utf8')), windows }));
}

describe('data paths that are not data files', () => {
  const cases: [string, (dir: string) => string, string][] = [
    ['a directory', (dir) => (mkdirSync(join(dir, 'data', 'folder')), 'data/folder'), 'is a directory, not a file'],
    ['a FIFO', (dir) => (spawnSync('mkfifo', [join(dir, 'data', 'pipe')]), 'data/pipe'), 'is a FIFO (named pipe), not a regular file; not read'],
    ['a device', () => '/dev/zero', 'is a device, not a regular file; not read'],
    ['a kernel file', () => '/proc/self/environ', 'is a system file under /proc/, not a data file; not read'],
  ];
  for (const [what, make, reason] of cases) {
    it(`${what}: named with what it is, exit 1, not read, nothing written (run and check alike)`, async () => {
      const { dir, file } = await freshCampaign();
      const path = make(dir);
      writeFileSync(file, readFileSync(file, 'utf8').replace('- data/b.csv', `- ${path}`));
      const abs = path.startsWith('/') ? path : join(dir, path);
      const r = await runCli(['run', file], dir);
      expect(r.code).toBe(1);
      expect(r.stderr).toBe(`wakeplane: ${abs}: data file of instrument "b" ${reason}\n`);
      expect(r.stderr).not.toMatch(/PATH=|HOME=/); // nothing of the environment is echoed
      expect(existsSync(join(dir, 'out'))).toBe(false);
      const c = await runCli(['check', file], dir);
      expect(c.code).toBe(1);
      expect(c.stderr).toBe(r.stderr);
    });
  }

  it('a header never echoes more than a short excerpt, with control bytes escaped', async () => {
    const { dir, file } = await freshCampaign();
    const secret = 'token=' + 'S'.repeat(500);
    writeFileSync(join(dir, 'data', 'b.csv'), `${secret},x,y\n1,2,3\n`);
    const r = await runCli(['run', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^wakeplane: .*b\.csv:1: missing required column "time" for time \(columns\.time not set, default header name\); the header has: "token=S{94}…"\n$/);
    writeFileSync(join(dir, 'data', 'b.csv'), Buffer.from([0x7f, 0x45, 0x4c, 0x46, 0x02, 0x01, 0x00, 0x00, 0x1b, 0x5b, 0x32, 0x4a, 0x0a]));
    const bin = await runCli(['run', file], dir);
    expect(bin.stderr).toBe(`wakeplane: ${join(dir, 'data', 'b.csv')}:1: the first line is not a CSV header: it holds control or undecodable bytes (starts "\\x7fELF\\x02\\x01\\x00\\x00\\x1b[2J"); is this a data file?\n`);
  });
});

describe('the campaign file', () => {
  it('not UTF-8: rejected with the byte, its position, line and column', async () => {
    const { dir, file } = await freshCampaign();
    const text = readFileSync(file, 'utf8');
    const bytes = Buffer.concat([Buffer.from('# Caf'), Buffer.from([0xe9]), Buffer.from(' site\n'), Buffer.from(text)]);
    writeFileSync(file, bytes);
    const r = await runCli(['check', file], dir);
    expect(r.code).toBe(1);
    // 0xE9 alone is Latin-1 "é", not valid UTF-8 (Unicode Standard, Table 3-7): byte 5, line 1, column 6
    expect(r.stderr).toBe(`wakeplane: ${file}:1:6: not UTF-8 text: byte 5 (0xe9) is not valid UTF-8; save the file as UTF-8\n`);
  });

  it('an alias bomb is refused cleanly, as a campaign error', async () => {
    const { dir, file } = await freshCampaign();
    const bomb = 'x1: &a [lol, lol, lol, lol, lol, lol, lol, lol, lol]\n' +
      Array.from({ length: 8 }, (_, k) => `x${k + 2}: &${String.fromCharCode(98 + k)} [${Array(9).fill(`*${String.fromCharCode(97 + k)}`).join(', ')}]`).join('\n') + '\n';
    writeFileSync(file, bomb);
    const t0 = Date.now();
    const r = await runCli(['check', file], dir);
    expect(Date.now() - t0).toBeLessThan(5000); // refused before expanding (9^9 = 387 million nodes otherwise)
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`wakeplane: ${file}: YAML aliases (*name) expand too far (more than 100 alias uses): refused, as such a file can expand into gigabytes\n`);
  });

  it('every schema problem at once, each with its YAML line and column and a suggestion for a near key', async () => {
    const { dir, file } = await freshCampaign();
    const text = readFileSync(file, 'utf8')
      .replace('hubHeight_m: 100', 'hubheight: 100')
      .replace('kind: fixed\n  length_s: 300', 'kind: fixd\n  length_s: 300')
      .replace('rotorDiameter_m: 120', 'rotorDiameter_m: -120');
    writeFileSync(file, text);
    const lineOf = (needle: string) => text.split('\n').findIndex((l) => l.includes(needle)) + 1;
    const colOf = (needle: string) => text.split('\n')[lineOf(needle) - 1].indexOf(needle.trim()) + 1;
    const r = await runCli(['check', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(
      `wakeplane: ${file}: 3 problems in the campaign file:\n` +
      `  ${file}:${lineOf('hubheight')}:${colOf('hubheight')}: turbine.hubheight: unknown key; did you mean "hubHeight_m"?\n` +
      `  ${file}:${lineOf('rotorDiameter_m')}:${colOf('-120')}: turbine.rotorDiameter_m: Too small: expected number to be >0 (got -120)\n` +
      `  ${file}:${lineOf('kind: fixd')}:${colOf('fixd')}: windows.kind: expected one of "fixed", "list", "segments", "record"; did you mean "fixed"? (got "fixd")\n`,
    );
  });

  it('a campaign that is not a mapping', async () => {
    const { dir, file } = await freshCampaign();
    writeFileSync(file, '- just\n- a list\n');
    const r = await runCli(['check', file], dir);
    expect(r.stderr).toBe(`wakeplane: ${file}:1:1: the campaign file must be a mapping of keys (name, turbine, instruments, planes, ...)\n`);
  });

  it('a directory given as the campaign', async () => {
    const { dir } = await freshCampaign();
    const r = await runCli(['check', join(dir, 'data')], dir);
    expect(r.stderr).toBe(`wakeplane: ${join(dir, 'data')}: the campaign file is a directory, not a file\n`);
  });
});

describe('plausibility of the geometry', () => {
  it('impossible set-ups are errors naming the key: hub height of 10 km, a cell larger than its plane', async () => {
    const { dir, file } = await freshCampaign((c) => {
      c.turbine.hubHeight_m = 10000;
      c.planes[0].cell_m = [400, 60];
    });
    const r = await runCli(['check', file], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/turbine\.hubHeight_m: hub height above 500 m is not plausible \(metres expected\) \(got 10000\)\n/);
    expect(r.stderr).toMatch(/planes\[0\]\.cell_m: the cell \(400 m along y\) is larger than the plane's extent along it \(360 m\) \(got \[400,60\]\)\n/);
  });

  it('a rotor reaching below the ground is an error', async () => {
    const { dir, file } = await freshCampaign((c) => (c.turbine.hubHeight_m = 50));
    const r = await runCli(['check', file], dir);
    expect(r.stderr).toMatch(/turbine\.hubHeight_m: below half the rotor diameter \(60 m\): the blades would pass below the tower base \(got 50\)\n$/);
  });

  it('likely slips are warnings: an instrument inside the rotor, a plane beyond every beam\'s reach', async () => {
    const { dir, file } = await freshCampaign((c) => {
      c.instruments[2].position_m = [10, 0, 95];
      c.planes.push({ id: 'far', x_m: 9000, y: { min: -180, max: 180 }, z: { min: 10, max: 190 }, cell_m: [60, 60] });
    });
    const r = await runCli(['check', file], dir);
    expect(r.stdout).toContain('warning: instruments[2] (c): stands 11.2 m from the hub, within the rotor radius (60 m): the rotor would sweep through it; check position_m (east, north, up, metres) and turbine.position_m\n');
    // nearest possible point of the plane: 9000 m from the tower; instrument a at 700 m from it: 8300 m minus 3000 m
    expect(r.stdout).toMatch(/warning: planes\[1\] \(far\): beyond every instrument's reach in any wind direction \(nearest point at least \d+ m past plan\.maxRange_m\)/);
  });
});

describe('check validates what run reads and fails exactly when run would', () => {
  const cases: [string, (dir: string, file: string) => void, RegExp][] = [
    ['a missing data file', (dir) => rmSync(join(dir, 'data', 'c.csv')), /c\.csv: data file of instrument "c" not found/],
    ['a header without a required column', (dir) => {
      const p = join(dir, 'data', 'a.csv');
      writeFileSync(p, readFileSync(p, 'utf8').replace(/^time,/, 'tiem,'));
    }, /a\.csv:1: missing required column "time"/],
    ['a missing wind-direction series', (dir) => rmSync(join(dir, 'data', 'wind_direction.csv')), /wind_direction\.csv: series file not found/],
    ['a turbine series without its yaw column', (dir) => {
      const p = join(dir, 'data', 'turbine.csv');
      writeFileSync(p, readFileSync(p, 'utf8').replace(/^time,yaw_deg/, 'time,nacelle'));
    }, /turbine\.csv:1: missing required column "yaw_deg"/],
    // Regression: check passed this campaign while run stopped on it (the bin's column was read only by run).
    ['a condition bin on a column the turbine series lacks', (_dir, file) => {
      writeFileSync(file, readFileSync(file, 'utf8') + 'conditions:\n  bins:\n    - { variable: turbine.pitch_deg, edges: [0, 5] }\n');
    }, /turbine\.csv:1: conditions\.bins\[0\]\.variable "turbine\.pitch_deg": no column "pitch_deg"/],
    // Regressions: check passed these (the window plan was built only by run, before its first output).
    ['a window list with a reversed row', (dir, file) => {
      writeFileSync(join(dir, 'log.csv'), 'start,end,label\n2026-03-01T12:01:00Z,2026-03-01T12:04:00Z,a\n2026-03-01T12:09:00Z,2026-03-01T12:06:00Z,b\n');
      setWindows(file, { kind: 'list', file: 'log.csv' });
    }, /log\.csv:3: window list: end "2026-03-01T12:06:00Z" is not after start "2026-03-01T12:09:00Z"/],
    ['segment windows that find no steady span', (_dir, file) => {
      setWindows(file, { kind: 'segments', levels_deg: [40] });
    }, /windows: no steady span of at least 300 s at the levels 40 deg in .*turbine\.csv/],
  ];
  for (const [what, damage, message] of cases) {
    it(`${what}: both exit 1 with the same message; run writes nothing`, async () => {
      const { dir, file } = await freshCampaign();
      damage(dir, file);
      const c = await runCli(['check', file], dir);
      const r = await runCli(['run', file], dir);
      expect(c.code).toBe(1);
      expect(r.code).toBe(1);
      expect(c.stderr).toMatch(message);
      expect(r.stderr).toBe(c.stderr);
      expect(existsSync(join(dir, 'out'))).toBe(false);
    });
  }

  it('several problems are listed together', async () => {
    const { dir, file } = await freshCampaign();
    rmSync(join(dir, 'data', 'c.csv'));
    writeFileSync(join(dir, 'data', 'b.csv'), HEADER + '\n');
    const c = await runCli(['check', file], dir);
    expect(c.stderr).toMatch(/^wakeplane: 2 problems:\n {2}.*b\.csv: no usable rows: the file has a header and no data lines\n {2}.*c\.csv: data file of instrument "c" not found\n$/);
  });

  it('a clean campaign: check exits 0 and so does run', async () => {
    const { dir, file } = await freshCampaign();
    const c = await runCli(['check', file], dir);
    expect(c.code).toBe(0);
    expect(c.stdout).toMatch(/^campaign faulty: valid\n/);
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
  });
});

describe('the campaign\'s own settings', () => {
  it('output.images: false is obeyed by run (no images, no report); --images overrides it', async () => {
    const { dir, file } = await freshCampaign((c) => (c.output.images = false));
    expect((await runCli(['run', file, '--quiet'], dir)).code).toBe(0);
    expect(existsSync(join(dir, 'out', 'faulty', 'images'))).toBe(false);
    expect(existsSync(join(dir, 'out', 'faulty', 'report.html'))).toBe(false);
    expect((await runCli(['run', file, '--quiet', '--images'], dir)).code).toBe(0);
    expect(existsSync(join(dir, 'out', 'faulty', 'report.html'))).toBe(true);
  }, 60_000);

  it('output.dir is relative to the campaign file, like the data files, whatever the working directory; --out to the working directory', async () => {
    const { dir, file } = await freshCampaign();
    const elsewhere = join(dir, 'data');
    expect((await runCli(['run', file, '--quiet'], elsewhere)).code).toBe(0);
    expect(readdirSync(join(dir, 'out'))).toEqual(['faulty']);
    expect((await runCli(['run', file, '--quiet', '--out', 'here'], elsewhere)).code).toBe(0);
    expect(readdirSync(join(elsewhere, 'here'))).toEqual(['faulty']);
  });

  it('the demo campaign writes under the repository\'s output/ folder, as the README says', () => {
    const text = readFileSync(join(import.meta.dirname, '..', '..', 'scenarios', 'quillmoor', 'campaign.yaml'), 'utf8');
    expect(text).toMatch(/^output: \{ dir: \.\.\/\.\.\/output,/m); // scenarios/quillmoor/../../output = <repo>/output
  });
});

