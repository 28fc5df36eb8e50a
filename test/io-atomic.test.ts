import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writeFileAtomic } from '../src/io/atomic.ts';

describe('writeFileAtomic', () => {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-atomic-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  it('makes a missing folder, writes into an existing one and leaves no temporary file', () => {
    const a = join(dir, 'new', 'deeper', 'a.csv'), b = join(dir, 'new', 'deeper', 'b.csv');
    writeFileAtomic(a, 'x,y\n1,2\n'); // folder missing: made
    writeFileAtomic(b, new Uint8Array([65, 10])); // folder present
    writeFileAtomic(a, 'replaced\n'); // over an existing file
    expect(readFileSync(a, 'utf8')).toBe('replaced\n');
    expect(readFileSync(b, 'utf8')).toBe('A\n');
    expect(readdirSync(join(dir, 'new', 'deeper')).sort()).toEqual(['a.csv', 'b.csv']);
  });
  it('still reports other errors (a path through a file)', () => {
    expect(() => writeFileAtomic(join(dir, 'new', 'deeper', 'a.csv', 'c.csv'), 'x')).toThrow(/ENOTDIR/);
  });
});
