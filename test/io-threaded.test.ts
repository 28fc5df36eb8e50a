/**
 * The threaded sample reader must give exactly what the in-thread reader gives (it runs the same parser on another
 * thread): same rows, same rejections, same header errors, and it must stop cleanly when the consumer stops early.
 * The in-thread reader itself is checked against hand-written tables in io-reader.test.ts.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.ts';
import { readSamples, type SampleChunk, type SampleReaderOptions } from '../src/io/csvSamples.ts';
import { readSamplesThreaded } from '../src/io/threadedSamples.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-iothr-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const HEADER = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';
const opts: SampleReaderOptions = { instrumentIndex: new Map([['L1', 0], ['L2', 1]]), owner: 0, columns: {}, sign: 'toward', batchSize: 1000 };

function makeFile(name: string, n: number): string {
  const lines = [HEADER];
  for (let i = 0; i < n; i++) {
    const bad = i % 211 === 5;
    lines.push(`${1781395200 + i * 0.25},L${1 + (i % 2)},${(i * 7) % 400},${(i % 90) - 5},${bad ? 'x' : 100 + (i % 30)},${(i % 50) / 4},${i % 3 ? -10 : ''}`);
  }
  const p = join(dir, name);
  writeFileSync(p, lines.join('\r\n') + '\r\n');
  return p;
}

async function collect(gen: AsyncGenerator<SampleChunk>) {
  const rows: number[][] = [];
  const rejected: unknown[] = [];
  for await (const c of gen) {
    const b = c.batch;
    for (let i = 0; i < b.length; i++) {
      rows.push([b.line[i], b.time[i], b.instrument[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]]);
    }
    rejected.push(...c.rejected);
  }
  return { rows, rejected };
}

describe('readSamplesThreaded', () => {
  it('yields the same rows and rejections as readSamples, for several files read at once', async () => {
    const files = [makeFile('a.csv', 20_000), makeFile('b.csv', 7_000), makeFile('c.csv', 1)];
    const [ta, tb, tc] = await Promise.all(files.map((f) => collect(readSamplesThreaded(f, opts))));
    for (const [f, t] of [[files[0], ta], [files[1], tb], [files[2], tc]] as const) {
      const ref = await collect(readSamples(f, opts));
      expect(t.rows).toEqual(ref.rows); // exact: same parser, transferred buffers
      expect(t.rejected).toEqual(ref.rejected);
    }
    expect(ta.rows.length + ta.rejected.length).toBe(20_000);
  });

  it('throws the same InputError for a missing column before the first chunk', async () => {
    const p = join(dir, 'bad.csv');
    writeFileSync(p, 'time,instrument,azimuth_deg,elevation_deg,radial_velocity_ms\n1,L1,1,2,3\n');
    const err = await readSamplesThreaded(p, opts).next().catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect([(err as InputError).file, (err as InputError).line]).toEqual([p, 1]);
    expect((err as InputError).reason).toMatch(/missing required column "range_m"/);
  });

  it('stops cleanly when the consumer breaks off, and works again afterwards', async () => {
    const f = makeFile('d.csv', 30_000);
    let n = 0;
    for await (const c of readSamplesThreaded(f, opts)) {
      n += c.batch.length;
      if (n >= 2000) break;
    }
    expect(n).toBe(2000); // two full batches of 1000 rows (rejected rows are not in batches)
    const again = await collect(readSamplesThreaded(f, { ...opts, batchSize: 4096 }));
    expect(again.rows.length + again.rejected.length).toBe(30_000);
  });
});
