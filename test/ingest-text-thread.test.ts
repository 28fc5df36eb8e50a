/**
 * Text files without ray structure (every row its own angles, as instruments that focus or gate at the target write
 * them) are parsed on the reader thread (pipeline/ingest.ts TEXT_THREAD_GATES, io/sampleSource.ts): the same batches
 * as parsed on the caller, and a run that gives the same accounting and field tables (every column, the uncertainty
 * budget's too) with the reader thread as without it. An equivalence of two paths through our own code, not an
 * outside check.
 */
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { gatesPerRay, type SampleBatch } from '../src/io/batch.ts';
import { openSamples, PrimedFiles } from '../src/io/sampleSource.ts';
import { INGEST_BATCH, primeTextFiles, TEXT_THREAD_GATES } from '../src/pipeline/ingest.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';

/** Gives every row of a simulated CSV its own azimuth (a millionth of a degree per row: the geometry barely moves). */
function ownAngles(path: string): void {
  const [head, ...rows] = readFileSync(path, 'utf8').trimEnd().split('\n');
  const az = head.split(',').indexOf('azimuth_deg');
  const out = rows.map((r, k) => {
    const f = r.split(',');
    f[az] = (Number(f[az]) + k * 1e-6).toFixed(7);
    return f.join(',');
  });
  writeFileSync(path, [head, ...out].join('\n') + '\n');
}

const fields = (runDir: string) =>
  new Map(readdirSync(join(runDir, 'fields')).filter((n) => n.endsWith('.csv')).map((n) => [n, readFileSync(join(runDir, 'fields', n), 'utf8')]));

describe('text files without ray structure on the reader thread', () => {
  let dir: string, file: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({ name: 'text-thread' }));
    await simulateCampaign(loadCampaignFile(file));
    for (const id of ['a', 'b', 'c']) ownAngles(join(dir, 'data', `${id}.csv`));
  });

  it('gatesPerRay counts rows over changes of (instrument, time, azimuth, elevation)', () => {
    const n = 6;
    const b: SampleBatch = {
      length: n, file: 'x', line: new Float64Array(n), time: Float64Array.of(1, 1, 1, 2, 2, 2), instrument: Uint8Array.of(0, 0, 0, 0, 0, 1),
      azimuth: Float64Array.of(5, 5, 5, 5, 5, 5), elevation: new Float64Array(n), range: new Float64Array(n), radialVelocity: new Float64Array(n), cnr: new Float64Array(n),
    };
    expect(gatesPerRay(b)).toBe(2); // rays: t=1 (3 rows), t=2 ins 0 (2 rows), t=2 ins 1 (1 row)
    b.azimuth[1] = 6; // the first ray's second row turns: now 5 rays
    expect(gatesPerRay(b)).toBe(6 / 5);
    expect(gatesPerRay({ ...b, length: 0 })).toBeNaN();
  });

  it('the thread yields the same batches as the caller parsing the file itself', async () => {
    const path = join(dir, 'data', 'a.csv');
    const opts = { instrumentIndex: new Map([['a', 0], ['b', 1], ['c', 2]]), owner: 0, columns: {}, sign: 'away' as const, batchSize: 4096 };
    const rows = async (file: string, thread: boolean) => {
      const out: number[][] = [];
      for await (const c of openSamples(file, { ...opts, thread, textThread: thread })) {
        const b = c.batch;
        for (let i = 0; i < b.length; i++) out.push([b.line[i], b.time[i], b.instrument[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]]);
      }
      return out;
    };
    const here = await rows(path, false);
    expect(here.length).toBeGreaterThan(1000);
    expect(await rows(path, true)).toEqual(here); // exact: the same parser on either thread
    // gzip-compressed: decompressed and parsed on the thread, the same rows
    writeFileSync(`${path}.gz`, gzipSync(readFileSync(path)));
    expect(await rows(`${path}.gz`, true)).toEqual(here);
  });

  it('a run opens the files without ray structure on the thread before its CNR pre-pass, and only those', async () => {
    const c = loadCampaignFile(file);
    // one instrument keeps the simulator's rays (many gates per ray): parsed on the caller, not primed
    const rayDir = writeTinyCampaign({ name: 'text-thread-rays' });
    await simulateCampaign(loadCampaignFile(rayDir.file));
    const rayFile = join(rayDir.dir, 'data', 'b.csv');
    const mixed = { ...c, instruments: c.instruments.map((ins) => (ins.id === 'b' ? { ...ins, files: [rayFile] } : ins)) };
    const primed = new PrimedFiles(INGEST_BATCH, true);
    try {
      await primeTextFiles(mixed, primed);
      for (const ins of mixed.instruments) {
        const s = primed.take(ins.files[0], ins.index);
        if (ins.id === 'b') expect(s).toBeUndefined();
        else {
          expect(s?.textThread).toBe(true);
          const r = await s!.first;
          expect(r.done).toBe(false);
          expect(r.done ? 0 : gatesPerRay(r.value.batch)).toBeLessThan(TEXT_THREAD_GATES);
          await s!.it.return?.(undefined);
        }
      }
      // without the reader thread nothing is opened early
      const none = new PrimedFiles(INGEST_BATCH, false);
      await primeTextFiles(mixed, none);
      expect(none.take(mixed.instruments[0].files[0], 0)).toBeUndefined();
    } finally {
      await primed.close();
    }
  });

  it('the same accounting and field tables with the reader thread as without it', async () => {
    const first = readFileSync(join(dir, 'data', 'a.csv'), 'utf8').split('\n').length;
    expect(first).toBeGreaterThan(2 * TEXT_THREAD_GATES);
    const threaded = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'threaded'), images: false });
    process.env.WAKEPLANE_READER_THREAD = '0';
    try {
      const here = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'here'), images: false });
      expect(threaded.manifest.samples.total).toEqual(here.manifest.samples.total); // exact counts, reason by reason
      expect(threaded.manifest.samples.balanced).toBe(true);
      const f = fields(here.runDir);
      expect(f.size).toBe(3);
      expect(fields(threaded.runDir)).toEqual(f); // exact text
    } finally {
      delete process.env.WAKEPLANE_READER_THREAD;
    }
  });
});
