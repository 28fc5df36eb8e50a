/**
 * Command-line conventions: -h is --help, an unknown command says it is one and lists the commands, every
 * positional and option of every command carries a description, and progress without a terminal is a plain line at
 * a steady pace (with a fake clock here).
 */
import { describe, expect, it } from 'vitest';
import { createProgress } from '../../src/cli/progress.ts';
import { COMMAND_NAMES } from '../../src/cli/commands.ts';
import { runCli } from './helpers.ts';

describe('help and commands', () => {
  it('-h prints the same help as --help, exit 0', async () => {
    const a = await runCli(['-h']);
    const b = await runCli(['--help']);
    expect(a.code).toBe(0);
    expect(a.stdout).toBe(b.stdout);
    for (const c of COMMAND_NAMES) expect(a.stdout).toContain(`wakeplane ${c}`);
    const sub = await runCli(['run', '-h']);
    expect(sub.stdout).toBe((await runCli(['run', '--help'])).stdout);
    expect(sub.stdout).toContain('--clean');
  });

  it('an unknown command says so and lists the commands, exit 1', async () => {
    const r = await runCli(['frobnicate', 'x.yaml']);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('wakeplane: unknown command "frobnicate"; the commands are: demo, run, merge, slurm, render, check, plan, simulate, schema (wakeplane --help)\n');
    const none = await runCli([]);
    expect(none.code).toBe(1);
    expect(none.stderr).toContain('name a command: demo, run, merge, slurm, render, check, plan, simulate, schema');
  });

  it('every positional and option of every command has a description', async () => {
    for (const c of COMMAND_NAMES) {
      const help = (await runCli([c, '--help'])).stdout;
      const lines = help.split('\n');
      let section = '';
      let checked = 0;
      for (const line of lines) {
        if (/^(Positionals|Options):/.test(line)) { section = line; continue; }
        // a flag line: "  -h, --help  text  [type]" or "      --out  text" (options), "  campaign  text" (positionals)
        const flag = section.startsWith('Options') ? /^ {2}(?:-\w, | {4})--[\w-]+/ : /^ {2}[\w-]+/;
        if (!section || !flag.test(line)) continue;
        // "  --name  [type]" alone means no description: the text between the flag and the [type] must be there
        const m = /^ +((?:-\w, )?--?[\w-]+|[\w-]+)\s{2,}(.*)$/.exec(line);
        expect(m, `${c}: ${line}`).not.toBeNull();
        const described = m![2].replace(/\[[^\]]*\]/g, '').trim();
        expect(described.length, `${c}: ${line}`).toBeGreaterThan(3);
        checked++;
      }
      expect(checked, c).toBeGreaterThan(2); // at least --help, --version, --debug
    }
  });
});

/** A stand-in for process.stderr that records what is written. */
function fakeStream(isTTY: boolean, columns = 80) {
  const writes: string[] = [];
  const stream = { isTTY, columns, write: (s: string) => (writes.push(s), true) } as unknown as NodeJS.WriteStream;
  return { stream, writes };
}

describe('progress', () => {
  it('without a terminal: nothing for the first 10 s, then one plain line every 10 s with stage, share and rate', () => {
    let t = 0;
    const { stream, writes } = fakeStream(false);
    const p = createProgress(stream, { now: () => t, timer: false });
    p.stage('reading samples');
    p.expect(1_000_000);
    t = 5_000;
    p.file('a.csv', 200_000);
    expect(writes).toEqual([]);
    t = 10_000;
    p.file('a.csv', 400_000);
    // 400 k rows in 10 s: 40 k rows/s; 40 % of the expected million
    expect(writes).toEqual(['wakeplane: [00:00:10] reading samples; 400.0 k rows read (~40 % of ~1.00 M rows), 40.0 k rows/s\n']);
    t = 15_000;
    p.file('b.csv', 100_000);
    expect(writes.length).toBe(1);
    t = 20_000;
    p.count('windows', 12);
    // 100 k more rows in the last 10 s
    expect(writes[1]).toBe('wakeplane: [00:00:20] reading samples; 500.0 k rows read (~50 % of ~1.00 M rows), 10.0 k rows/s; windows 12\n');
    t = 31_000;
    p.stage('images'); // more than 10 s since the last line: one now, for the new stage (rows belong to the reading)
    expect(writes[2]).toBe('wakeplane: [00:00:31] images\n');
    t = 41_000;
    p.count('images', 40);
    expect(writes[3]).toBe('wakeplane: [00:00:41] images; images 40\n');
    p.done();
    expect(writes.every((w) => !w.includes('\r') && !w.includes('\x1b'))).toBe(true); // plain text for logs
  });

  it('in a terminal: the share of all rows, the counters and, after a second, the stage\'s elapsed time', () => {
    let t = 0;
    const { stream, writes } = fakeStream(true);
    const p = createProgress(stream, { now: () => t, timer: false });
    p.stage('images');
    p.count('images', 3);
    t = 2_500;
    p.count('images', 4);
    expect(writes.join('').split('\r\x1b[2K').at(-1)).toBe('[images]  images 4  2 s');
    p.stage('reading samples');
    p.expect(1000);
    p.file('a.csv', 250);
    expect(writes.join('').split('\r\x1b[2K').at(-1)).toBe('[reading samples]  a.csv 250 rows  ~25 % of all');
    p.done();
  });

  it('quiet: nothing, terminal or not', () => {
    for (const tty of [true, false]) {
      let t = 0;
      const { stream, writes } = fakeStream(tty);
      const p = createProgress(stream, { quiet: true, now: () => t, timer: false });
      p.stage('x');
      t = 60_000;
      p.file('a', 5);
      p.done();
      expect(writes).toEqual([]);
    }
  });
});
