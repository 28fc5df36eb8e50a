import { describe, expect, it } from 'vitest';
import { compact, createProgress } from '../src/cli/progress.ts';

/** A stand-in for process.stderr that records what is written. */
function fakeStream(isTTY: boolean, columns = 80) {
  const writes: string[] = [];
  const stream = { isTTY, columns, write: (s: string) => (writes.push(s), true) } as unknown as NodeJS.WriteStream;
  return { stream, writes };
}

/** The status line as a terminal would show it: the text after the last carriage return + erase-line. */
const screen = (writes: string[]) => writes.join('').split('\r\x1b[2K').at(-1) ?? '';

describe('terminal progress', () => {
  it('is silent when quiet; without a terminal, a short run shows only its notes (progress lines start after 10 s)', () => {
    for (const [tty, quiet] of [[false, false], [true, true]] as const) {
      const { stream, writes } = fakeStream(tty);
      const p = createProgress(stream, { quiet });
      p.stage('reading');
      p.file('a.csv', 10, 100);
      p.count('samples', 5);
      p.note('hello');
      p.done();
      expect(writes).toEqual(quiet ? [] : ['hello\n']);
    }
  });

  it('shows the stage, the file with its percentage and counters on one rewritten line', () => {
    let t = 0;
    const { stream, writes } = fakeStream(true);
    const p = createProgress(stream, { now: () => t, intervalMs: 100 });
    p.stage('reading');
    expect(screen(writes)).toBe('[reading]');
    p.file('data/lid-a.csv', 250, 1000);
    expect(screen(writes)).toBe('[reading]  data/lid-a.csv 25 %'); // new file: drawn at once
    t = 50;
    p.file('data/lid-a.csv', 500, 1000);
    expect(screen(writes)).toBe('[reading]  data/lid-a.csv 25 %'); // 50 ms < 100 ms: not redrawn yet
    t = 150;
    p.count('samples', 1_234_567);
    expect(screen(writes)).toBe('[reading]  data/lid-a.csv 50 %  samples 1.23 M');
    expect(writes.join('')).not.toContain('\n'); // status updates never scroll the terminal
  });

  it('shows a row count when no total is given (the run pipeline reports rows read)', () => {
    const { stream, writes } = fakeStream(true);
    const p = createProgress(stream, { now: () => 0 });
    p.stage('reading');
    p.file('b.csv', 48_000);
    expect(screen(writes)).toBe('[reading]  b.csv 48.0 k rows');
  });

  it('keeps notes above the status line, truncates to the terminal width and clears at the end', () => {
    const { stream, writes } = fakeStream(true, 30);
    const p = createProgress(stream, { now: () => 0 });
    p.stage('retrieving plane P5D window 12 of 40');
    expect(screen(writes).length).toBe(29); // columns - 1, so the cursor never wraps
    p.note('warning: something');
    expect(writes.join('')).toContain('warning: something\n');
    p.done();
    expect(writes.at(-1)).toBe('\r\x1b[2K');
  });

  it('abbreviates counters', () => {
    expect(compact(999)).toBe('999');
    expect(compact(12_345)).toBe('12.3 k');
    expect(compact(2_500_000)).toBe('2.50 M');
    expect(compact(3.2e9)).toBe('3.20 G');
  });
});
