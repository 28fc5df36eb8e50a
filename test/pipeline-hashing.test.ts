/**
 * The input files' digests (pipeline/hashing.ts) and their early start (cli/early.ts): a digest begun before the run
 * is taken only while its file is unchanged; the SHA-256 values are checked against node:crypto over the file's
 * bytes (OpenSSL's SHA-256, FIPS 180-4), an implementation outside our code.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { guessedDataFiles } from '../src/cli/early.ts';
import { hashFiles, startHashing } from '../src/pipeline/hashing.ts';

const sha = (file: string) => createHash('sha256').update(readFileSync(file)).digest('hex');
const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('input digests begun early', () => {
  it('takes a digest begun before the run while its file is unchanged, and hashes a file changed since again', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'wp-hash-'));
    const same = join(dir, 'same.csv'), changed = join(dir, 'changed.csv'), late = join(dir, 'late.csv');
    writeFileSync(same, 'time,v\n1,2\n');
    writeFileSync(changed, 'time,v\n1,2\n');
    writeFileSync(late, 'time,v\n3,4\n');
    startHashing([same, changed]);
    await pause(500); // the early digests are done (a few bytes each)
    writeFileSync(changed, 'time,v\n1,2\n5,6\n'); // other bytes and size after its early digest
    utimesSync(changed, new Date(), new Date(Date.now() + 5000));
    const d = await hashFiles([same, changed, late]);
    expect(d.map((x) => x.file)).toEqual([same, changed, late]);
    // exact: SHA-256 of the bytes now on disk for every file, sizes as on disk
    expect(d.map((x) => x.sha256)).toEqual([sha(same), sha(changed), sha(late)]);
    expect(d.map((x) => x.bytes)).toEqual([11, 15, 11]); // "time,v\n" 7 bytes + 4 per row
    expect(d.every((x) => x.error === undefined)).toBe(true);
  });

  it('reports a file that cannot be read, without a digest', async () => {
    const [d] = await hashFiles([join(tmpdir(), 'wp-hash-none', 'missing.csv')]);
    expect(d.bytes).toBe(-1);
    expect(d.error).toMatch(/ENOENT/);
  });

  it('guesses the data files of `run CAMPAIGN` from the campaign text, relative to the campaign file', () => {
    const dir = mkdtempSync(join(tmpdir(), 'wp-guess-'));
    writeFileSync(join(dir, 'a.csv'), 'x\n');
    const text: Record<string, string> = {
      [join(dir, 'c.yaml')]: 'instruments:\n  - { id: a, files: [a.csv, missing.csv] }\n  - { id: b }\n',
      [join(dir, 'bad.yaml')]: 'instruments: [unclosed\n',
    };
    const read = (p: string) => { if (!(p in text)) throw new Error('ENOENT'); return text[p]; };
    expect(guessedDataFiles(['run', join(dir, 'c.yaml'), '--quiet'], read)).toEqual([join(dir, 'a.csv')]); // missing.csv left out
    expect(guessedDataFiles(['check', join(dir, 'c.yaml')], read)).toEqual([]);
    expect(guessedDataFiles(['run', join(dir, 'bad.yaml')], read)).toEqual([]);
    expect(guessedDataFiles(['run', join(dir, 'none.yaml')], read)).toEqual([]);
  });
});
