/**
 * NetCDF-4 sample input: values and units read back from a file written outside our code (Debian's python3-netcdf4,
 * netCDF-C underneath: test/reference/netcdf_samples.py), fill values counted as rejected samples with their
 * variable, ray and gate, streaming by blocks of whole rays, one-line errors for bad files, gzip-compressed CSV, and
 * a whole run from NetCDF giving the same accounting and fields as the same samples from CSV.
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { InputError } from '../src/errors.ts';
import type { RejectedRow, SampleBatch } from '../src/io/batch.ts';
import type { SampleReaderOptions } from '../src/io/csvSamples.ts';
import { checkSamples, openSamples, PrimedFiles, sampleFormat } from '../src/io/sampleSource.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { fieldTableColumns } from '../src/pipeline/fieldTable.ts';
import { BUDGET_COLUMNS } from '../src/records/tables/fields.ts';
import { csvToNetcdf, writeSampleNetcdf, type SampleArrays } from '../src/sim/netcdfSamples.ts';
import { NcWriter } from '../src/io/netcdfWrite.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { debianPython } from './helpers/python.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';

const tmp = mkdtempSync(join(tmpdir(), 'wakeplane-nc-'));
const opts = (o: Partial<SampleReaderOptions> = {}): SampleReaderOptions => ({ instrumentIndex: new Map([['L1', 0]]), owner: 0, columns: {}, sign: 'away', ...o });

async function readAll(path: string, o: SampleReaderOptions) {
  const rows: { t: number; az: number; el: number; r: number; vr: number; cnr: number; ray: number }[] = [];
  const rejected: RejectedRow[] = [];
  let batches = 0;
  for await (const { batch: b, rejected: rj } of openSamples(path, o)) {
    batches++;
    rejected.push(...rj);
    for (let i = 0; i < b.length; i++) rows.push({ t: b.time[i], az: b.azimuth[i], el: b.elevation[i], r: b.range[i], vr: b.radialVelocity[i], cnr: b.cnr[i], ray: b.line[i] });
  }
  return { rows, rejected, batches };
}

const py = debianPython(['netCDF4', 'numpy']);

describe('a NetCDF-4 file written by netCDF-C (python3-netcdf4)', () => {
  it.skipIf(!py.python)(`reads values in SI with units, packing, sign and fill values settled${py.python ? '' : ` (skipped: ${py.why})`}`, async () => {
    const file = join(tmp, 'ref.nc');
    const r = spawnSync(py.python!, ['test/reference/netcdf_samples.py', file], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const { rows, rejected } = await readAll(file, opts({ columns: { radial_velocity_ms: 'vel' } }));
    // 5 rays x 4 gates = 20 samples: ray 3's elevation is missing (4 samples), vel is missing at ray 1 gate 2 (1)
    expect(rows.length + rejected.length).toBe(20);
    expect(rejected.map((x) => [x.variable, x.ray, x.gate, x.reason])).toEqual([
      ['vel', 1, 2, 'missing_value'],
      ...[0, 1, 2, 3].map((g) => ['elevation', 3, g, 'missing_value']),
    ]);
    // Expected values derived by hand from the script's stored values:
    //   time = 2026-03-01 13:00 +01:00 (= 1772366400 Unix s) + 60 * minutes; angles = rad * 180/pi, azimuth wrapped
    //   into [0, 360); range = km * 1000 (stored as float32: relative error <= 6e-8); velocity = -stored (toward);
    //   CNR = stored * 0.01 - 20, NaN where the short is the fill value -32767.
    const minutes = [0, 0.25, 0.5, 0.75, 1.0], azr = [0.1, 0.2, 0.3, -0.1, 7.0], km = [0.1, 0.13, 0.16, 0.19];
    let k = 0;
    for (let ray = 0; ray < 5; ray++) {
      for (let g = 0; g < 4; g++) {
        if (ray === 3 || (ray === 1 && g === 2)) continue;
        const x = rows[k++];
        const az = (((azr[ray] * 180) / Math.PI) % 360 + 360) % 360;
        expect(x.ray).toBe(ray);
        expect(x.t).toBeCloseTo(1772366400 + 60 * minutes[ray], 6); // exact binary fractions: 1e-6 s is generous
        expect(x.az).toBeCloseTo(az, 9);
        expect(x.el).toBeCloseTo((0.05 * 180) / Math.PI, 9);
        expect(Math.abs(x.r - km[g] * 1000)).toBeLessThan(1e-4); // float32 km: 0.19 km to 6e-8 relative = 1.1e-5 m
        expect(x.vr).toBe(-((ray * 4 + g) * 0.5 - 3)); // halves are exact in float32
        if (ray === 2 && g === 0) expect(x.cnr).toBeNaN();
        else expect(x.cnr).toBeCloseTo((1000 + ray * 4 + g) * 0.01 - 20, 9);
      }
    }
  });
});

function arrays(R: number, G: number): SampleArrays {
  const s: SampleArrays = {
    time: Float64Array.from({ length: R }, (_, i) => 1772366400 + i * 0.5),
    azimuth: Float64Array.from({ length: R }, (_, i) => (i * 7) % 360),
    elevation: new Float64Array(R).fill(3),
    range: Float64Array.from({ length: G }, (_, g) => 100 + 30 * g),
    radialVelocity: Float32Array.from({ length: R * G }, (_, k) => (k % 17) - 8),
    cnr: new Float32Array(R * G).fill(-12),
  };
  return s;
}

describe('our NetCDF-4 sample writer and the reader', () => {
  it('streams blocks of whole rays, chunk-aligned, never more than asked for', async () => {
    const file = join(tmp, 'blocks.nc');
    await writeSampleNetcdf(file, arrays(1000, 10), { chunkRays: 64, rangeUnits: 'km', timeUnit: 'minutes', timeEpoch: '2026-03-01' });
    const sizes: number[] = [];
    let n = 0;
    for await (const { batch } of openSamples(file, opts({ batchSize: 2000 }))) {
      sizes.push(batch.length);
      n += batch.length;
    }
    expect(n).toBe(10000);
    // The first block one chunk of 64 rays (640 samples: it comes sooner), then 2000 samples / 10 gates = 200 rays,
    // rounded to whole chunks of 64 rays: 192 rays = 1920 samples per block (exact counts)
    expect(sizes[0]).toBe(640);
    expect(sizes.slice(1, -1).every((s) => s === 1920)).toBe(true);
    const { rows } = await readAll(file, opts());
    // km and minutes written by the generator and converted back: exact to rounding (1e-9 m, 1e-6 s)
    expect(rows[15].r).toBeCloseTo(100 + 30 * 5, 9);
    expect(rows[10].t).toBeCloseTo(1772366400.5, 6);
  });

  it('every sample is a row or a rejection with its reason, variable, ray and gate (bad angles, times, ranges, velocities)', async () => {
    const file = join(tmp, 'faults.nc');
    const a = arrays(8, 4);
    a.azimuth[2] = 800; // outside [-360, 720]: every gate of ray 2
    a.elevation[4] = 95; // outside [-90, 90]: ray 4
    a.time[6] = NaN; // a missing time: ray 6
    a.range[1] = -5; // a non-positive range: gate 1 of every ray still standing
    a.radialVelocity[3 * 4 + 2] = NaN; // ray 3, gate 2
    await writeSampleNetcdf(file, a, { chunkRays: 4 });
    const { rows, rejected } = await readAll(file, opts());
    // 8 rays x 4 gates: 3 whole rays (12) + gate 1 of the other 5 rays (5) + 1 velocity = 18 rejected (counted by hand)
    expect(rows.length + rejected.length).toBe(32);
    expect(rejected.length).toBe(18);
    const key = (r: RejectedRow) => `${r.ray}/${r.gate}/${r.reason}`;
    const got = new Set(rejected.map(key));
    for (let g = 0; g < 4; g++) for (const [ray, reason] of [[2, 'angle_out_of_range'], [4, 'angle_out_of_range'], [6, 'missing_value']] as const) expect(got.has(`${ray}/${g}/${reason}`)).toBe(true);
    for (const ray of [0, 1, 3, 5, 7]) expect(got.has(`${ray}/1/bad_range`)).toBe(true);
    expect(got.has('3/2/missing_value')).toBe(true);
    const az = rejected.find((r) => r.ray === 2)!;
    expect(az.detail).toBe('azimuth 800 degrees outside [-360, 720]');
    expect(rejected.find((r) => r.ray === 0 && r.gate === 1)!.detail).toBe('range -5 m is not positive');
    // rejections come in file order (ray, then gate)
    const order = rejected.map((r) => (r.ray ?? 0) * 10 + (r.gate ?? 0));
    expect(order).toEqual([...order].sort((x, y) => x - y));
  });

  it('a primed file (PrimedFiles) is opened once: its head is shared, then the stream goes on to the same samples as a fresh read', async () => {
    const file = join(tmp, 'primed.nc');
    await writeSampleNetcdf(file, arrays(1000, 10), { chunkRays: 64 });
    for (const thread of [false, true]) {
      const primed = new PrimedFiles(2000, thread);
      const h1 = await primed.head(file, opts()), h2 = await primed.head(file, opts());
      expect(h2).toBe(h1); // one open, one first read
      const head = { n: h1.value!.batch.length, t0: h1.value!.batch.time[0] };
      const p = primed.take(file, 0)!;
      expect(primed.take(file, 0)).toBeUndefined(); // handed over once
      let n = head.n;
      for (let r = await p.it.next(); !r.done; r = await p.it.next()) n += r.value.batch.length;
      const fresh = await readAll(file, opts({ batchSize: 2000 }));
      // every sample once: the head and the rest of the taken stream together are the file (exact counts)
      expect(n).toBe(fresh.rows.length);
      expect(head.n).toBe(640); // the first block: one chunk of 64 rays x 10 gates
      expect(head.t0).toBe(fresh.rows[0].t);
      await primed.close();
    }
  });

  it('the reader thread gives the same samples and rejections, in the same order, and a bad variable as the same one-line error', async () => {
    const file = join(tmp, 'thread.nc');
    const s = arrays(1000, 10);
    s.radialVelocity[123] = NaN; // a missing value: rejected with its ray and gate by either path
    await writeSampleNetcdf(file, s, { chunkRays: 64 });
    const direct = await readAll(file, opts({ batchSize: 2000 }));
    const threaded = await readAll(file, opts({ batchSize: 2000, thread: true }));
    // Exact: the same library call and the same conversion, only on another thread (values compared bit for bit).
    expect(threaded.rows).toEqual(direct.rows);
    expect(threaded.rejected).toEqual(direct.rejected);
    expect(threaded.batches).toBe(direct.batches);
    expect(direct.rejected.map((r) => [r.ray, r.gate, r.reason])).toEqual([[12, 3, 'missing_value']]);
    // Checked on the thread first (as a run does), then read there: the same samples in the same blocks (bit for bit).
    expect((await checkSamples(file, opts({ thread: true }))).hasDataLine).toBe(true);
    const afterCheck = await readAll(file, opts({ batchSize: 2000, thread: true }));
    expect(afterCheck.rows).toEqual(direct.rows);
    expect(afterCheck.rejected).toEqual(direct.rejected);
    expect(afterCheck.batches).toBe(direct.batches);
    // A variable the campaign names but the file lacks: InputError naming file and variable, raised on the first pull.
    const bad = opts({ columns: { cnr_db: 'no_such_variable' }, thread: true });
    await expect(readAll(file, bad)).rejects.toThrow(/thread\.nc: .*no_such_variable/);
    await expect(readAll(file, bad)).rejects.toBeInstanceOf(InputError);
  });

  it('"toward" without a standard name follows the campaign sign; with it, the standard name decides', async () => {
    const a = join(tmp, 'toward.nc'), b = join(tmp, 'nosn.nc');
    await writeSampleNetcdf(a, arrays(4, 3), { sign: 'toward' });
    await writeSampleNetcdf(b, arrays(4, 3), { sign: 'toward', noStandardName: true });
    const truth = arrays(4, 3).radialVelocity;
    expect((await readAll(a, opts())).rows.map((x) => x.vr)).toEqual(Array.from(truth)); // file says toward: flipped back
    expect((await readAll(b, opts({ sign: 'toward' }))).rows.map((x) => x.vr)).toEqual(Array.from(truth));
    expect((await readAll(b, opts())).rows.map((x) => x.vr)).toEqual(Array.from(truth, (v) => (v === 0 ? 0 : -v)));
  });

  it('units given in the campaign replace a missing units attribute', async () => {
    const file = join(tmp, 'nounits.nc');
    await writeSampleNetcdf(file, arrays(4, 3), { rangeUnits: 'km', attrs: { range: { units: undefined } } });
    // our writer skips undefined attributes: "range" has no units
    await expect(checkSamples(file, opts())).rejects.toThrow(/nounits\.nc: variable "range": no units attribute/);
    const { rows } = await readAll(file, opts({ columns: { range_m: { name: 'range', scale: 1, offset: 0, units: 'km' } } }));
    expect(rows[1].r).toBeCloseTo(130, 9);
  });
});

describe('bad input: one line naming the file and the variable, before any output', () => {
  const cases: [string, () => Promise<string>, RegExp][] = [
    ['not NetCDF/HDF5', async () => { const f = join(tmp, 'text.nc'); writeFileSync(f, 'time,azimuth\n1,2\n'); return f; }, /text\.nc: not a NetCDF-4\/HDF5 file/],
    ['classic NetCDF', async () => { const f = join(tmp, 'classic.nc'); writeFileSync(f, Buffer.from([0x43, 0x44, 0x46, 1, 0, 0, 0, 0])); return f; }, /classic\.nc: classic NetCDF \(CDF-1\/2\/5\) is not read/],
    ['missing variable', async () => { const f = join(tmp, 'novar.nc'); await writeSampleNetcdf(f, arrays(4, 3), { names: { elevation: 'elev' } }); return f; }, /novar\.nc: variable "elevation" for elevation_deg not found .*elev/],
    ['wrong dimensions', async () => {
      // azimuth on the gate dimension instead of the rays
      const f = join(tmp, 'dims.nc');
      const w = await NcWriter.create(f);
      w.coordinate('time', Float64Array.from([0, 1, 2, 3]), { units: 'seconds since 2026-03-01', standard_name: 'time' });
      w.coordinate('range', Float64Array.from([100, 130, 160]), { units: 'm' });
      w.variable('azimuth', ['range'], Float64Array.from([1, 2, 3]), { units: 'degree' });
      w.variable('elevation', ['time'], new Float64Array(4), { units: 'degree' });
      w.variable('radial_velocity', ['time', 'range'], new Float32Array(12), { units: 'm s-1' });
      w.close();
      return f;
    }, /dims\.nc: variable "azimuth": must be on the ray dimension of "radial_velocity" \(4 rays\) or a scalar, has \[3\]/],
    ['unknown units', async () => { const f = join(tmp, 'units.nc'); await writeSampleNetcdf(f, arrays(4, 3), { attrs: { azimuth: { units: 'gradians' } } }); return f; }, /units\.nc: variable "azimuth": units "gradians" unknown for an angle/],
    ['truncated file', async () => {
      const f = join(tmp, 'full.nc'), t = join(tmp, 'truncated.nc');
      await writeSampleNetcdf(f, arrays(2000, 10), { chunkRays: 100 });
      writeFileSync(t, readFileSync(f).subarray(0, 30000));
      return t;
    }, /truncated\.nc: not a readable NetCDF-4\/HDF5 file: truncated file/],
  ];
  for (const [name, make, re] of cases) {
    it(name, async () => {
      const f = await make();
      const err = await checkSamples(f, opts()).then(() => null, (e: unknown) => e);
      expect(err).toBeInstanceOf(InputError);
      const msg = (err as Error).message;
      expect(msg).toMatch(re);
      expect(msg).not.toContain('\n');
    });
  }
});

describe('gzip-compressed CSV', () => {
  it('reads the same rows as the plain file, and a truncated .csv.gz fails naming the file', async () => {
    const lines = ['time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db'];
    for (let i = 0; i < 5000; i++) lines.push(`${1772366400 + i * 0.1},L1,${(i * 3) % 360},2.5,${100 + (i % 10) * 30},${((i % 31) - 15) / 4},-10`);
    const plain = join(tmp, 's.csv'), gz = join(tmp, 's.csv.gz');
    writeFileSync(plain, lines.join('\n') + '\n');
    writeFileSync(gz, gzipSync(readFileSync(plain)));
    expect(sampleFormat(gz)).toBe('csv.gz');
    const a = await readAll(plain, opts({ highWaterMark: 4096 })), b = await readAll(gz, opts({ highWaterMark: 4096 }));
    expect(b.rows.length).toBe(5000);
    expect(b.rows).toEqual(a.rows); // same parser, same bytes: identical
    const cut = join(tmp, 'cut.csv.gz');
    writeFileSync(cut, readFileSync(gz).subarray(0, 2000));
    await expect(readAll(cut, opts())).rejects.toThrow(/cut\.csv\.gz:\d+: read failed: unexpected end of file/);
  });
});

describe('a whole run from NetCDF-4 files', () => {
  let dir: string, file: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({ name: 'nc-run' }));
    await simulateCampaign(loadCampaignFile(file));
  });
  it('gives the same accounting and the same fields as the same samples from CSV', async () => {
    const c1 = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'csv'), images: false });
    for (const id of ['a', 'b', 'c']) await csvToNetcdf(join(dir, 'data', `${id}.csv`), join(dir, 'data', `${id}.nc`), { id }, { chunkRays: 256 });
    copyFileSync(file, join(dir, 'campaign-csv.yaml'));
    writeFileSync(file, readFileSync(file, 'utf8').replace(/data\/([abc])\.csv/g, 'data/$1.nc'));
    const c2 = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'nc'), images: false });
    // the simulator writes 8 gates on every ray: no padding, so the counts match exactly
    expect(c2.manifest.samples.total).toEqual(c1.manifest.samples.total);
    expect(c2.manifest.samples.balanced).toBe(true);
    // angles and ranges are stored as doubles, radial velocities as float32 (about 7 significant digits against the
    // CSV's two decimals): the written, uncertainty-rounded field tables agree exactly
    const names = readdirSync(join(c1.runDir, 'fields')).filter((n) => n.endsWith('.csv'));
    expect(names.length).toBe(3);
    expect(readdirSync(join(c2.runDir, 'fields')).filter((n) => n.endsWith('.csv'))).toEqual(names);
    // The uncertainty budget's and turbulence statistics' columns (the last BUDGET_COLUMNS) come from variances and
    // lag sums, where the float32 velocities differ from the CSV's in the 7th digit: written at two or three
    // significant digits, a value on a rounding boundary may differ by one unit in its last digit. All other columns
    // agree exactly.
    const keep = fieldTableColumns('cross').length - BUDGET_COLUMNS.length;
    for (const n of names) {
      const a = readFileSync(join(c1.runDir, 'fields', n), 'utf8').split('\n'), b = readFileSync(join(c2.runDir, 'fields', n), 'utf8').split('\n');
      expect(b.length, n).toBe(a.length);
      a.forEach((line, i) => {
        const x = line.split(','), y = b[i].split(',');
        expect(y.slice(0, keep).join(','), `${n}:${i + 1}`).toBe(x.slice(0, keep).join(','));
        for (let k = keep; k < x.length; k++) {
          if (x[k] === y[k]) continue;
          const u = Number(x[k]), v = Number(y[k]);
          const digits = Math.max(x[k].replace(/^-?0?\.?0*/, '').replace('.', '').length, 1);
          const unit = 10 ** (Math.floor(Math.log10(Math.abs(u))) - digits + 1);
          // One unit in the last digit; or, for a value near zero, an absolute 1e-6 (m/s, m^2/s^2): a term that is
          // a nearly cancelling sum (the direction term's v + x dU/dy) moves by more than its last digit, but 1e-6 is
          // four orders below the smallest combined uncertainty written here (0.022 m/s).
          expect(Math.min(Math.abs(u - v) / (unit * 1.0001), Math.abs(u - v) / 1e-6), `${n}:${i + 1} column ${k}`).toBeLessThanOrEqual(1);
        }
      });
    }
  });
});
