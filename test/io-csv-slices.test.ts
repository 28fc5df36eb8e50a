/**
 * The CNR pre-pass's spread reader (src/io/csvSlices.ts) against the run's reader (src/io/csvSamples.ts readSamples):
 * every row it returns is a row of the file with exactly the values the reader gives it (renamed and scaled
 * columns, "toward" sign, CRLF line ends, blank lines, a bad row, quoted fields and an empty CNR, no final line
 * break), the rows are spread through
 * the file, none twice, and a small file is read whole, once.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readSamples } from '../src/io/csvSamples.ts';
import { readCsvSlices } from '../src/io/csvSlices.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-slices-'));
const columns = { time: 'ts', range_m: { name: 'range_km', scale: 1000, offset: 0 }, radial_velocity_ms: 'vlos', cnr_db: 'snr' };
const opts = { instrumentIndex: new Map([['a', 0], ['b', 1]]), owner: 0, columns, sign: 'toward' as const };

function write(name: string, rows: number): string {
  const lines = ['ts,instrument,azimuth_deg,elevation_deg,range_km,vlos,snr'];
  for (let i = 0; i < rows; i++) {
    lines.push(`${(1.7e9 + i * 0.25).toFixed(2)},${i % 3 === 0 ? 'b' : 'a'},${(i * 7.3) % 360},${(i % 17) * 0.5},${(0.1 + (i % 40) * 0.03).toFixed(2)},${((i % 101) - 50) / 7},${-5 - (i % 31)}`);
    if (i % 997 === 0) lines.push(''); // blank lines are not rows
    if (i === 4242) lines.push('1700001060.5,a,12,abc,0.3,1,-10'); // a bad row: skipped
    if (i % 1500 === 7) lines.push(`"${(1.7e9 + i * 0.25 + 0.125).toFixed(3)}", b ,45.5,3,0.6,"2.5",`); // quoted, spaces, no CNR
  }
  const p = join(dir, name);
  writeFileSync(p, lines.join('\r\n')); // CRLF, no final line break
  return p;
}

async function allRows(path: string): Promise<Map<number, number[]>> {
  const m = new Map<number, number[]>();
  for await (const { batch: b } of readSamples(path, { ...opts, reuseBatches: false })) {
    for (let i = 0; i < b.length; i++) m.set(b.time[i], [b.instrument[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]]);
  }
  return m;
}

describe('CNR pre-pass: rows spread through a CSV file', () => {
  it('returns rows of the file with the reader\'s values, spread through it, none twice', async () => {
    const path = write('big.csv', 60000);
    const ref = await allRows(path);
    const got: number[][] = [];
    const n = readCsvSlices(path, opts, 4000, 16, (v) => got.push([v.time, v.instrument, v.azimuth, v.elevation, v.range, v.radialVelocity, v.cnr]));
    expect(n).toBe(4000); // exact: the budget (the bad row, if met, counts as read)
    expect(got.length).toBeGreaterThanOrEqual(3999);
    const times = new Set<number>();
    for (const [t, ...v] of got) {
      expect(ref.get(t)).toEqual(v); // exact: the same parse, units, scale and sign
      times.add(t);
    }
    expect(times.size).toBe(got.length); // none twice
    const ts = got.map((r) => r[0] - 1.7e9);
    // 60,000 rows at 0.25 s: 15,000 s in about 3 MB; slices of at least 256 KiB, so 11 of them here (not 16): the
    // first starts at 0, the last at 10/11 of the bytes (13,600 s). Bound: 85 % of the record.
    expect(Math.min(...ts)).toBe(0);
    expect(Math.max(...ts)).toBeGreaterThan(0.85 * 15000);
  });

  it('a small file is read whole, once, including a last line without a line break', async () => {
    const path = write('small.csv', 500);
    const ref = await allRows(path);
    const got: number[] = [];
    readCsvSlices(path, opts, 4000, 16, (v) => got.push(v.time));
    expect(got.length).toBe(ref.size); // exact: every good row once
    expect(new Set(got).size).toBe(ref.size);
  });
});
