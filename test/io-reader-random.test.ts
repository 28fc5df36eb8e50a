/**
 * The reader against an independent reference on 20,000 random rows (valid, oddly formatted and broken): the
 * reference splits lines with String.prototype.split, reads numbers with Number() (ECMA-262 sec. 7.1.4.1.1) and ISO
 * times with Date.parse (ECMA-262 sec. 21.4.3.2), and applies the rules documented in src/io/sampleRow.ts (reason
 * order: field count; time, instrument, azimuth, elevation, range, radial velocity, CNR; then angle and range
 * checks). It shares no code with the reader. Half the rows repeat the previous row's time, instrument and angles,
 * as scanning instruments write one row per range gate.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readSamples, type SampleReaderOptions } from '../src/io/csvSamples.ts';
import { mulberry32 as rng } from '../src/math/random.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-iorand-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));


const HEADER = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';
const IDS = new Map([['L1', 0], ['L2', 1]]);
const opts: SampleReaderOptions = { instrumentIndex: IDS, owner: 0, columns: {}, sign: 'away' };
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

type Ref = { reason: string } | { v: number[] };

/** The documented rules, written independently of the reader. */
function reference(line: string): Ref | null {
  if (line.trim() === '') return null; // blank
  const f = line.split(',').map((s) => s.trim().replace(/^"(.*)"$/, '$1'));
  if (f.length < 7) return { reason: 'missing_field' };
  const num = (s: string) => (DECIMAL.test(s) && Number.isFinite(Number(s)) ? Number(s) * 1 + 0 : NaN); // SI = x*1+0
  if (f[0] === '') return { reason: 'missing_field' };
  const iso = /^\d{4}-/.test(f[0]);
  const [y, mo, d] = f[0].slice(0, 10).split('-').map(Number);
  // Date.parse in V8 rolls 30 February over into March; the reader (as ISO 8601) rejects days that do not exist
  const dayExists = new Date(Date.UTC(y, mo - 1, d)).getUTCDate() === d;
  const t = iso ? (dayExists ? Date.parse(f[0]) / 1000 : NaN) : num(f[0]);
  if (!Number.isFinite(t)) return { reason: 'bad_time' };
  if (f[1] === '') return { reason: 'missing_field' };
  const ins = IDS.get(f[1]);
  if (ins === undefined) return { reason: 'unknown_instrument' };
  const v: number[] = [];
  for (let k = 2; k <= 6; k++) {
    if (f[k] === '') {
      if (k === 6) { v.push(NaN); continue; }
      return { reason: 'missing_field' };
    }
    const x = num(f[k]);
    if (Number.isNaN(x)) return { reason: 'bad_number' };
    v.push(x);
  }
  const [az, el, rg, vr, cnr] = v;
  if (!(az >= -360 && az <= 720)) return { reason: 'angle_out_of_range' };
  if (!(el >= -90 && el <= 90)) return { reason: 'angle_out_of_range' };
  if (!(rg > 0)) return { reason: 'bad_range' };
  // into [0, 360): fmod is exact in IEEE 754, then one rounding when 360 is added to a negative remainder
  let a = az % 360;
  if (a < 0) a += 360;
  return { v: [t, ins, a === 360 || a === 0 ? 0 : a, el, rg, vr, cnr] };
}

function randomRows(r: () => number, n: number): string[] {
  const pick = <T,>(xs: T[]) => xs[Math.floor(r() * xs.length)];
  const dec = (lo: number, hi: number) => {
    const d = Math.floor(r() * 7);
    return (lo + r() * (hi - lo)).toFixed(d);
  };
  const numField = (lo: number, hi: number) => {
    const q = r();
    if (q < 0.9) return dec(lo, hi);
    if (q < 0.92) return ` ${dec(lo, hi)} `;
    if (q < 0.94) return `"${dec(lo, hi)}"`;
    if (q < 0.95) return `${dec(lo, hi)}e0`;
    if (q < 0.96) return '';
    if (q < 0.975) return pick(['abc', 'NaN', 'Infinity', '1.2.3', '0x1f', '--1', '1e999', '.', '+']);
    return dec(lo * 3 - 100, hi * 3 + 100); // often out of range
  };
  const rows: string[] = [];
  let prev: string[] = [];
  for (let k = 0; k < n; k++) {
    const ms = 1781395200000 + Math.floor(r() * 4e8);
    const q = r();
    const time =
      q < 0.45 ? String(ms / 1000)
      : q < 0.9 ? new Date(ms).toISOString().replace(/\.(\d{3})Z$/, (_, f: string) => (r() < 0.3 ? 'Z' : `.${f.slice(0, 1 + Math.floor(r() * 3))}Z`))
      : q < 0.95 ? new Date(ms).toISOString().replace('Z', '+00:00')
      : pick(['', 'soon', '2026-02-30T00:00:00Z', '2026-06-14T25:00:00Z']);
    const ins = r() < 0.97 ? pick(['L1', 'L2']) : pick(['L9', '']);
    const cnr = r() < 0.1 ? '' : numField(-40, 10);
    let fields = [time, ins, numField(-10, 370), numField(-5, 60), numField(-20, 3000), numField(-30, 30), cnr];
    // rays: half the rows repeat the previous row's time, instrument and angles (one row per range gate)
    if (prev.length >= 4 && r() < 0.5) fields.splice(0, 4, ...prev.slice(0, 4));
    prev = fields;
    const shape = r();
    if (shape < 0.02) fields = fields.slice(0, 2 + Math.floor(r() * 5)); // too few
    else if (shape < 0.04) fields.push('extra');
    rows.push(r() < 0.01 ? '' : fields.join(','));
  }
  return rows;
}

/**
 * The same rows with the columns in another order (header included): reads through the reader's general column
 * path rather than its path for the usual order. Rows with too few fields are left as they are (rejected either way).
 */
const ORDER = [1, 0, 3, 2, 4, 6, 5];
function permuted(line: string): string {
  const f = line.split(',');
  if (f.length < 7) return line;
  return [...ORDER.map((k) => f[k]), ...f.slice(7)].join(',');
}

describe('reader against an independent reference', () => {
  for (const [eol, seed, order] of [['\n', 1, 'usual'], ['\r\n', 2, 'usual'], ['\n', 3, 'shuffled']] as const) {
    it(`agrees on every row of 20,000 random ones (${eol === '\n' ? 'LF' : 'CRLF'}, ${order} column order)`, async () => {
      const lines = randomRows(rng(seed), 20_000);
      const p = join(dir, `r${seed}.csv`);
      const put = order === 'usual' ? (l: string) => l : permuted;
      writeFileSync(p, put(HEADER) + eol + lines.map(put).join(eol) + eol);
      const got = new Map<number, Ref>();
      for await (const c of readSamples(p, { ...opts, batchSize: 4096, highWaterMark: 65536 })) {
        const b = c.batch;
        for (let i = 0; i < b.length; i++) {
          got.set(b.line[i], { v: [b.time[i], b.instrument[i], b.azimuth[i], b.elevation[i], b.range[i], b.radialVelocity[i], b.cnr[i]] });
        }
        for (const j of c.rejected) got.set(j.line, { reason: j.reason });
      }
      let accepted = 0, rejected = 0;
      lines.forEach((line, k) => {
        const want = reference(line);
        const have = got.get(k + 2);
        if (want === null) return expect(have, `line ${k + 2} is blank`).toBeUndefined();
        // exact: both sides compute the correctly rounded double of the same decimal text (Number / Date.parse)
        expect(have, `line ${k + 2}: ${line}`).toEqual(want);
        if ('v' in want) accepted++;
        else rejected++;
      });
      expect(got.size).toBe(accepted + rejected); // nothing read that the reference did not expect
      expect(accepted).toBeGreaterThan(8000); // the random mix keeps both kinds plentiful
      expect(rejected).toBeGreaterThan(2000);
    });
  }
});
