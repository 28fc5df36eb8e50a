/**
 * The one line Ctrl-C or SIGTERM prints: it must not say "no result was written" when a command was changing a
 * finished folder in place (render redraws a run folder's figures there, with no staging folder to remove).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { interruptLine } from '../src/cli/signals.ts';
import { noteOnInterrupt, removeOnInterrupt } from '../src/io/cleanup.ts';

const undo: (() => void)[] = [];
afterEach(() => undo.splice(0).forEach((f) => f()));

describe('the interrupt line', () => {
  it('a run: names the staging folder removed and says no result was written', () => {
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-int-'));
    const staging = join(dir, '.x.partial-1');
    removeOnInterrupt(staging);
    const line = interruptLine('SIGINT');
    expect(line).toBe(`wakeplane: interrupted by SIGINT; removed the unfinished ${relative(process.cwd(), staging)}; no result was written\n`);
    rmSync(dir, { recursive: true, force: true });
  });

  it('a render: says the folder was part redrawn and how to mend it, not that nothing was written', () => {
    undo.push(noteOnInterrupt('out/faulty was part redrawn (its manifest and report.html are still the earlier ones); run `wakeplane render out/faulty` again'));
    const line = interruptLine('SIGTERM');
    // Before the fix: "...; nothing unfinished to remove; no result was written", while figures had been replaced.
    expect(line).toBe('wakeplane: interrupted by SIGTERM; nothing unfinished to remove; out/faulty was part redrawn (its manifest and report.html are still the earlier ones); run `wakeplane render out/faulty` again\n');
  });
});
