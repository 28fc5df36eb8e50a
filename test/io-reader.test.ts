/**
 * The streaming sample reader: tables of valid and invalid rows with their reasons and line numbers (written by
 * hand from the reader's documented rules), CRLF/BOM, chunk boundaries, header errors, column mapping, the sign
 * convention (CF standard name radial_velocity_of_scatterers_away_from_instrument: positive away) and row counts.
 * ISO times are checked against Date.parse (ECMA-262 sec. 21.4.3.2) as the outside reference.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.ts';
import type { RejectedRow } from '../src/io/batch.ts';
import { checkHeader, readSamples, type SampleReaderOptions } from '../src/io/csvSamples.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-io-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let fileNo = 0;
function write(content: string | Buffer): string {
  const p = join(dir, `f${fileNo++}.csv`);
  writeFileSync(p, content);
  return p;
}

const HEADER = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';
const base: SampleReaderOptions = {
  instrumentIndex: new Map([['L1', 0], ['L2', 1]]),
  owner: 0,
  columns: {},
  sign: 'away',
};

interface Row {
  line: number;
  time: number;
  instrument: number;
  azimuth: number;
  elevation: number;
  range: number;
  radialVelocity: number;
  cnr: number;
}

async function readAll(path: string, opts: SampleReaderOptions = base) {
  const rows: Row[] = [];
  const rejected: RejectedRow[] = [];
  let chunks = 0;
  for await (const c of readSamples(path, opts)) {
    chunks++;
    const b = c.batch;
    for (let i = 0; i < b.length; i++) {
      rows.push({
        line: b.line[i], time: b.time[i], instrument: b.instrument[i], azimuth: b.azimuth[i], elevation: b.elevation[i],
        range: b.range[i], radialVelocity: b.radialVelocity[i], cnr: b.cnr[i],
      });
    }
    rejected.push(...c.rejected);
  }
  return { rows, rejected, chunks };
}

const T0 = Date.parse('2026-06-14T10:00:00Z') / 1000; // outside reference for the stamps below

// Each entry: the raw line, then either the accepted values or the rejection reason ('' = blank line, no row).
type Expect = { ok: Partial<Row> } | { reason: string } | 'blank';
const TABLE: [string, Expect][] = [
  ['2026-06-14T10:00:00.125Z,L1,270.5,5.25,350,-7.125,-12.5', { ok: { time: T0 + 0.125, instrument: 0, azimuth: 270.5, elevation: 5.25, range: 350, radialVelocity: -7.125, cnr: -12.5 } }],
  [`${T0 + 1},L2,10,0,100,3.5,-20`, { ok: { time: T0 + 1, instrument: 1, azimuth: 10 } }],
  ['2026-06-14T12:00:02+02:00,L1,1,2,3,4,5', { ok: { time: T0 + 2 } }],
  ['', 'blank'],
  ['2026-06-14T10:00:03Z,L1,-30,0,100,1,', { ok: { azimuth: 330, cnr: NaN } }], // azimuth normalised; empty CNR
  ['2026-06-14T10:00:04Z,L1,720,-90,100,1,-5', { ok: { azimuth: 0, elevation: -90 } }], // edges are inside
  ['2026-06-14T10:00:05Z,L1,"12.5", 3 ,1e3,"-0.5",-5', { ok: { azimuth: 12.5, elevation: 3, range: 1000, radialVelocity: -0.5 } }],
  ['2026-06-14T10:00:06Z,L1,1,2,3,4,5,extra', { ok: { time: T0 + 6 } }], // fields after the last used are ignored
  ['2026-06-14T10:00:07Z,L1,1,2,3', { reason: 'missing_field' }], // too few fields
  ['2026-06-14T10:00:08Z,L1,1,2,,4,5', { reason: 'missing_field' }], // empty range
  [',L1,1,2,3,4,5', { reason: 'missing_field' }], // empty time
  ['2026-06-14T10:00:09Z,,1,2,3,4,5', { reason: 'missing_field' }], // empty instrument
  ['2026-06-14T10:00:10Z,L1,abc,2,3,4,5', { reason: 'bad_number' }],
  ['2026-06-14T10:00:11Z,L1,1,2,3,NaN,5', { reason: 'bad_number' }],
  ['2026-06-14T10:00:12Z,L1,1,2,3,Infinity,5', { reason: 'bad_number' }],
  ['2026-06-14T10:00:13Z,L1,1,2,3,4,0x10', { reason: 'bad_number' }], // CNR present but not decimal
  ['2026-06-14T10:00:14Z,L1,1,2,12,5,4,5', { reason: 'bad_number' }], // decimal comma shifts fields: "5" ok... see below
  ['yesterday,L1,1,2,3,4,5', { reason: 'bad_time' }],
  ['2026-02-30T10:00:00Z,L1,1,2,3,4,5', { reason: 'bad_time' }],
  ['yesterday,L1,abc,2,3,4,5', { reason: 'bad_time' }], // time is checked before azimuth
  ['2026-06-14T10:00:15Z,L9,1,2,3,4,5', { reason: 'unknown_instrument' }],
  ['2026-06-14T10:00:16Z,L1,720.5,2,3,4,5', { reason: 'angle_out_of_range' }],
  ['2026-06-14T10:00:17Z,L1,-360.5,2,3,4,5', { reason: 'angle_out_of_range' }],
  ['2026-06-14T10:00:18Z,L1,1,90.001,3,4,5', { reason: 'angle_out_of_range' }],
  ['2026-06-14T10:00:19Z,L1,1,2,0,4,5', { reason: 'bad_range' }],
  ['2026-06-14T10:00:20Z,L1,1,2,-5,4,5', { reason: 'bad_range' }],
  ['2026-06-14T10:00:21Z,L1,800,2,-5,4,5', { reason: 'angle_out_of_range' }], // angles before range
  ['2026-06-14T10:00:22Z,L1,1,2,-5,x,5', { reason: 'bad_number' }], // parse errors before value checks
  ['2026-06-14T10:00:23Z,"L1,1,2,3,4,5', { reason: 'missing_field' }], // unterminated quote
  ['   ', 'blank'],
  ['2026-06-14T10:00:24Z,L1,1,2,3,4,5', { ok: { time: T0 + 24 } }], // last line, no line break after it
];
// The decimal-comma row "12,5" makes range 12, velocity 5, CNR 4 and ignores "5": a well-formed row by the rules.
TABLE[16][1] = { ok: { range: 12, radialVelocity: 5, cnr: 4 } };

function tableText(eol: string): string {
  return HEADER + eol + TABLE.map(([l]) => l).join(eol);
}

function checkTable(rows: Row[], rejected: RejectedRow[], file: string) {
  let ri = 0, ji = 0;
  TABLE.forEach(([text, exp], k) => {
    const line = k + 2; // header is line 1
    if (exp === 'blank') return;
    if ('ok' in exp) {
      const r = rows[ri++];
      expect(r.line, text).toBe(line);
      for (const [key, v] of Object.entries(exp.ok)) {
        // exact: every expected value is an exactly representable decimal or an exact sum with T0
        expect(r[key as keyof Row], `${text} ${key}`).toBe(v);
      }
    } else {
      const j = rejected[ji++];
      expect({ line: j.line, reason: j.reason }, text).toEqual({ line, reason: exp.reason });
      expect(j.file).toBe(file);
      expect(j.text).toBe(text);
      expect(j.detail.length).toBeGreaterThan(5);
    }
  });
  expect(ri).toBe(rows.length);
  expect(ji).toBe(rejected.length);
}

describe('row table', () => {
  it('accepts and rejects each row with the documented reason and physical line number', async () => {
    const f = write(tableText('\n'));
    const { rows, rejected } = await readAll(f);
    checkTable(rows, rejected, f);
    const dataRows = TABLE.filter(([, e]) => e !== 'blank').length;
    expect(rows.length + rejected.length).toBe(dataRows); // every data row counted exactly once
  });

  it('gives identical results with CRLF line breaks and a UTF-8 BOM', async () => {
    const f = write(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(tableText('\r\n') + '\r\n')]));
    const { rows, rejected } = await readAll(f);
    checkTable(rows, rejected, f);
  });

  it('gives identical results for any chunk size and batch size', async () => {
    const f = write(tableText('\r\n'));
    const ref = await readAll(f);
    for (const highWaterMark of [1, 2, 3, 5, 16, 61, 4096]) {
      for (const batchSize of [1, 3, 1000]) {
        const got = await readAll(f, { ...base, highWaterMark, batchSize });
        expect(got.rows, `hwm ${highWaterMark} batch ${batchSize}`).toEqual(ref.rows);
        expect(got.rejected).toEqual(ref.rejected);
        if (batchSize === 1) expect(got.chunks).toBeGreaterThanOrEqual(ref.rows.length); // one row per batch
      }
    }
  });

  it('truncates the raw text of a rejected row to 500 characters', async () => {
    const long = `yesterday,L1,1,2,3,4,5,${'x'.repeat(2000)}`;
    const { rejected } = await readAll(write(`${HEADER}\n${long}\n`));
    expect(rejected[0].reason).toBe('bad_time');
    expect(rejected[0].text).toBe(long.slice(0, 500));
  });
});

describe('larger files', () => {
  // 30,000 rows (about 1.3 MB, more than one 1 MiB read); every 97th row bad
  const N = 30_000;
  const lines: string[] = [HEADER];
  const expectedBad: number[] = [];
  for (let i = 0; i < N; i++) {
    const bad = i % 97 === 13;
    if (bad) expectedBad.push(i + 2);
    const ms = i * 137;
    lines.push(`${(T0 * 1000 + ms) / 1000},L${1 + (i % 2)},${(i % 3600) / 10},${(i % 180) / 10},${bad ? -1 : 50 + (i % 40) * 25},${((i % 401) - 200) / 8},${-(i % 300) / 10}`);
  }
  const text = lines.join('\n') + '\n';

  it('counts rows exactly and reads the same across chunk sizes and the 1 MiB default', async () => {
    const f = write(text);
    const a = await readAll(f);
    const b = await readAll(f, { ...base, highWaterMark: 4093, batchSize: 777 });
    expect(a.rows.length + a.rejected.length).toBe(N);
    expect(a.rejected.map((r) => r.line)).toEqual(expectedBad);
    expect(a.rejected.every((r) => r.reason === 'bad_range')).toBe(true);
    expect(b.rows).toEqual(a.rows);
    expect(b.rejected).toEqual(a.rejected);
    // spot check a value: row i = 20001 (line 20003), exact decimals
    const r = a.rows.find((x) => x.line === 20003)!;
    expect(r.radialVelocity).toBe(((20001 % 401) - 200) / 8); // exact: multiples of 1/8
    expect(r.instrument).toBe(1);
  });

  it('reads ISO and Unix versions of the same data into identical doubles', async () => {
    const iso = lines.map((l, k) => {
      if (k === 0) return l;
      const [t, ...rest] = l.split(',');
      return [new Date(Math.round(Number(t) * 1000)).toISOString(), ...rest].join(',');
    });
    const a = await readAll(write(text));
    const b = await readAll(write(iso.join('\n')));
    expect(b.rows).toEqual(a.rows); // exact: both are the correctly rounded double of the same decimal instant
    expect(b.rows[5].time).toBe(Date.parse(iso[6].split(',')[0]) / 1000); // Date.parse as the outside reference
  });

  it('rejects a line longer than 1 MiB (counted once) and reads on', async () => {
    const f = write(`${HEADER}\n${T0},L1,1,2,3,4,5\n${'9'.repeat(3 << 20)}\n${T0},L1,1,2,3,4,5\n`);
    const { rows, rejected } = await readAll(f, { ...base, highWaterMark: 65536 });
    expect(rows.map((r) => r.line)).toEqual([2, 4]);
    expect(rejected.map((r) => [r.line, r.reason])).toEqual([[3, 'missing_field']]);
  });
});

describe('header', () => {
  it('throws InputError naming the file, line 1, the column and its mapping before any data', async () => {
    const f = write(`time,instrument,azimuth_deg,elevation_deg,radial_velocity_ms\n${T0},L1,1,2,3\n`);
    const err = await checkHeader(f, base).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).file).toBe(f);
    expect((err as InputError).line).toBe(1);
    expect((err as InputError).reason).toMatch(/missing required column "range_m" for range_m \(columns\.range_m not set/);
    const gen = readSamples(f, base);
    await expect(gen.next()).rejects.toThrow(/missing required column "range_m"/); // before the first yield
  });

  it('names the mapped header and the mapping entry', async () => {
    const f = write(`${HEADER}\n`);
    const opts = { ...base, columns: { range_m: { name: 'rng_km', scale: 1000, offset: 0 } } };
    await expect(checkHeader(f, opts)).rejects.toThrow(
      /:1: missing required column "rng_km" for range_m \(columns\.range_m = \{"name":"rng_km","scale":1000,"offset":0\}\)/,
    );
  });

  it('requires an instrument column only when the file has no owner', async () => {
    const f = write(`time,azimuth_deg,elevation_deg,range_m,radial_velocity_ms\n${T0},1,2,3,4\n`);
    await expect(checkHeader(f, { ...base, owner: -1 })).rejects.toThrow(/missing required column "instrument"/);
    const { rows } = await readAll(f, { ...base, owner: 1 });
    expect(rows.map((r) => [r.instrument, r.cnr])).toEqual([[1, NaN]]); // owner's index; no CNR column -> NaN
  });

  it('rejects an empty file and a missing file with InputError', async () => {
    await expect(checkHeader(write(''), base)).rejects.toThrow(/empty file/);
    await expect(readSamples(join(dir, 'nope.csv'), base).next()).rejects.toBeInstanceOf(InputError);
  });

  it('a file with only a header yields nothing', async () => {
    const { rows, rejected, chunks } = await readAll(write(`${HEADER}\n`));
    expect([rows.length, rejected.length, chunks]).toEqual([0, 0, 0]);
  });
});

describe('column mapping and sign', () => {
  // an ignored quoted column holding a comma, ms times, milliradians, km, a 'toward' velocity, a renamed id column
  const f = () => write(`t_ms,junk,az_mrad,el,rng_km,vr_toward,lidar\n${T0 * 1000 + 250},"a,b",1000,5,0.35,2.5,L2\n`);

  it('applies scale and offset per column (SI = stored * scale + offset)', async () => {
    const opts: SampleReaderOptions = {
      ...base,
      columns: {
        time: { name: 't_ms', scale: 0.001, offset: 0 },
        azimuth_deg: { name: 'az_mrad', scale: 180 / Math.PI / 1000, offset: 10 },
        elevation_deg: 'el',
        range_m: { name: 'rng_km', scale: 1000, offset: 0 },
        radial_velocity_ms: 'vr_toward',
        instrument: 'lidar',
      },
      sign: 'away',
    };
    const { rows, rejected } = await readAll(f(), opts);
    expect(rejected).toEqual([]);
    const r = rows[0];
    expect(r.time).toBeCloseTo(T0 + 0.25, 6); // 1e-6 s: ms text times 0.001 is not exactly decimal
    expect(r.azimuth).toBeCloseTo((1000 * 180) / Math.PI / 1000 + 10, 12); // 1 rad + 10 deg; 1e-12 rounding
    expect(r.range).toBeCloseTo(350, 9); // 0.35 * 1000, rounding of 0.35 only
    expect(r.radialVelocity).toBe(2.5); // exact
    expect(r.instrument).toBe(1);
  });

  it("flips a 'toward' file to positive away, after scale and offset", async () => {
    const opts: SampleReaderOptions = {
      ...base,
      columns: {
        time: { name: 't_ms', scale: 0.001, offset: 0 }, azimuth_deg: { name: 'az_mrad', scale: 0.1, offset: 0 },
        elevation_deg: 'el', range_m: 'rng_km',
        radial_velocity_ms: { name: 'vr_toward', scale: 2, offset: 1 }, instrument: 'lidar',
      },
      sign: 'toward',
    };
    const { rows } = await readAll(f(), opts);
    expect(rows[0].radialVelocity).toBe(-(2.5 * 2 + 1)); // exact small binary fractions
  });
});

describe('batches', () => {
  const lines = [HEADER];
  for (let i = 0; i < 10; i++) lines.push(`${T0 + i},L1,${i},1,100,${i},-3`);

  it('by default are recycled only after the consumer pulled on (valid until the next pull)', async () => {
    const f = write(lines.join('\n'));
    const seen: Float64Array[] = [];
    const copies: number[][] = [];
    for await (const c of readSamples(f, { ...base, batchSize: 3 })) {
      seen.push(c.batch.azimuth);
      copies.push(Array.from(c.batch.azimuth.subarray(0, c.batch.length)));
    }
    expect(copies).toEqual([[0, 1, 2], [3, 4, 5], [6, 7, 8], [9]]); // exact integers, as written
    expect(seen[1]).not.toBe(seen[0]); // the batch being read is never the one just handed out
    expect(seen[2]).toBe(seen[0]); // two batches per file, alternating
  });

  it('with reuseBatches: false are fresh arrays a consumer may keep', async () => {
    const kept = [];
    for await (const c of readSamples(write(lines.join('\n')), { ...base, batchSize: 4, reuseBatches: false })) kept.push(c.batch);
    expect(kept.map((b) => b.length)).toEqual([4, 4, 2]);
    expect(kept[2].azimuth).not.toBe(kept[0].azimuth);
    expect(Array.from(kept[0].azimuth.subarray(0, 4))).toEqual([0, 1, 2, 3]); // not overwritten by later batches
  });
});
