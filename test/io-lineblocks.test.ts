/**
 * Blocks of complete lines must give back exactly the file's lines, for any read size, and a block must stay intact
 * while it is held. Reference: String.prototype.split('\n') of the file.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { LineBlocks } from '../src/io/lineBlocks.ts';
import { mulberry32 as rng } from '../src/math/random.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-blocks-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));


/** Lines as read through LineBlocks; a long line appears as '<long:first bytes>'. */
async function linesOf(path: string, readSize: number, maxLine: number): Promise<string[]> {
  const blocks = await LineBlocks.open(path, readSize, maxLine);
  const out: string[] = [];
  try {
    for (let b = await blocks.next(); b !== null; b = await blocks.next()) {
      const text = b.buf.subarray(0, b.end).toString('latin1');
      if (b.long) {
        out.push(`<long:${text.slice(0, 8)}>`);
        continue;
      }
      expect(text.endsWith('\n')).toBe(true); // blocks end at a line break
      // nothing may touch this block while we hold it: check it again after a tick
      await new Promise((r) => setImmediate(r));
      expect(b.buf.subarray(0, b.end).toString('latin1')).toBe(text);
      out.push(...text.slice(0, -1).split('\n'));
    }
  } finally {
    await blocks.close();
  }
  return out;
}

describe('LineBlocks', () => {
  it('returns every line exactly, for read sizes from 1 byte to larger than the file', async () => {
    const r = rng(99);
    const lines: string[] = [];
    for (let k = 0; k < 400; k++) {
      const n = Math.floor(r() ** 3 * 300); // mostly short, some long, some empty
      let s = '';
      for (let j = 0; j < n; j++) s += String.fromCharCode(33 + Math.floor(r() * 90));
      lines.push(s);
    }
    for (const trailing of ['\n', '']) {
      const p = join(dir, `a${trailing.length}.txt`);
      const text = lines.join('\n') + trailing;
      writeFileSync(p, text, 'latin1');
      const expected = trailing ? text.slice(0, -1).split('\n') : text.split('\n');
      for (const readSize of [1, 2, 7, 64, 1000, 1 << 20]) {
        expect(await linesOf(p, readSize, 1 << 20), `read ${readSize}`).toEqual(expected);
      }
    }
  });

  it('reports an over-long line once, skips the rest of it, and reads on', async () => {
    const p = join(dir, 'long.txt');
    writeFileSync(p, `first\n${'x'.repeat(5000)}\nsecond\n${'y'.repeat(3000)}`, 'latin1');
    for (const readSize of [3, 100]) {
      expect(await linesOf(p, readSize, 1000)).toEqual(['first', '<long:xxxxxxxx>', 'second', '<long:yyyyyyyy>']);
    }
    // a long line that ends within what one read brought in comes whole (the caller checks lengths itself)
    expect(await linesOf(p, 8192, 1000)).toEqual(['first', 'x'.repeat(5000), 'second', 'y'.repeat(3000)]);
  });

  it('gives nothing for an empty file', async () => {
    const p = join(dir, 'empty.txt');
    writeFileSync(p, '');
    expect(await linesOf(p, 16, 100)).toEqual([]);
  });
});
