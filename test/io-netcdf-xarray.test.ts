/**
 * Sample files written the way an analyst writes them with xarray (Debian's python3-xarray over python3-netcdf4,
 * test/reference/xarray_samples.py) or python3-netcdf4: times from a pandas DatetimeIndex, which xarray's default
 * encoding stores as int64 "microseconds since ..." or "nanoseconds since ..." (regression: those units were refused
 * as unknown, so no such file could be read), per-ray ranges, a packed int16 radial velocity whose NaN holes became
 * the _FillValue; a velocity stored as (range, time); variables in a group; time in single precision; ranges per ray
 * in a variable named like its dimension. The expected values are the ones pandas, numpy and netCDF4 print for the
 * files, not ours. All files are written by one python3 process (test/reference/run_batch.py) before the tests.
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { RejectedRow } from '../src/io/batch.ts';
import { unitsToSi } from '../src/io/cfUnits.ts';
import { checkSamples, openSamples } from '../src/io/sampleSource.ts';
import { InputError } from '../src/errors.ts';
import { debianPython, pythonBatch, type PythonJobResult } from './helpers/python.ts';

const py = debianPython(['netCDF4', 'numpy', 'pandas', 'xarray']);
const tmp = mkdtempSync(join(tmpdir(), 'wakeplane-xr-'));
const o = { instrumentIndex: new Map([['L1', 0]]), owner: 0, columns: {}, sign: 'away' as const };

// Written by xarray: the velocity on (gate, time), 3 x 6, azimuth and time on time (6).
const TRANSPOSED = [
  'import sys, numpy as np, pandas as pd, xarray as xr',
  't = pd.to_datetime(1778321263 + np.arange(6), unit="s")',
  'ds = xr.Dataset({"azimuth": (("time",), np.zeros(6), {"units": "degree"}), "elevation": (("time",), np.zeros(6), {"units": "degree"}),',
  '  "range": (("gate",), np.array([500.0, 515, 530]), {"units": "m"}),',
  '  "radial_velocity": (("gate", "time"), np.zeros((3, 6)), {"units": "m s-1"})}, coords={"time": t})',
  'ds.to_netcdf(sys.argv[1])',
].join('\n');
// Written by xarray into group "sweep_0" (as archives keep one sweep per group): 4 rays x 2 gates.
const GROUP = [
  'import sys, numpy as np, pandas as pd, xarray as xr',
  't = pd.to_datetime(1778321263 + np.arange(4), unit="s")',
  'ds = xr.Dataset({"azimuth": (("time",), np.array([10.0, 20, 30, 40]), {"units": "degree"}), "elevation": (("time",), np.full(4, 3.0), {"units": "degree"}),',
  '  "range": (("gate",), np.array([500.0, 515]), {"units": "m"}),',
  '  "radial_velocity": (("time", "gate"), np.arange(8.0).reshape(4, 2), {"units": "m s-1"})}, coords={"time": t})',
  'ds.to_netcdf(sys.argv[1], group="sweep_0")',
].join('\n');
// python3-netcdf4: 4 rays x 2 gates with a float32 time in the given units; prints the float32 values stored.
const TIME32 = [
  'import sys, json, numpy as np, netCDF4',
  'with netCDF4.Dataset(sys.argv[1], "w") as d:',
  '  d.createDimension("time", None); d.createDimension("range", 2)',
  '  t = d.createVariable("time", "f4", ("time",)); t.units = sys.argv[2]; t[:] = np.array(json.loads(sys.argv[3]), dtype="f4")',
  '  r = d.createVariable("range", "f8", ("range",)); r.units = "m"; r[:] = [500.0, 515.0]',
  '  for n in ("azimuth", "elevation"):',
  '    a = d.createVariable(n, "f8", ("time",)); a.units = "degree"; a[:] = np.zeros(4)',
  '  v = d.createVariable("radial_velocity", "f4", ("time", "range")); v.units = "m s-1"; v[:] = np.zeros((4, 2))',
  '  print(json.dumps([float(x) for x in t[:]]))',
].join('\n');
// python3-netcdf4: range(time, range) in km with two masked gates; prints the float32 values read back.
const NONCOORD = [
  'import sys, json, numpy as np, netCDF4',
  'with netCDF4.Dataset(sys.argv[1], "w") as d:',
  '  d.createDimension("time", None); d.createDimension("range", 3)',
  '  t = d.createVariable("time", "f8", ("time",)); t.units = "seconds since 2026-05-09 10:00:00"; t[:] = np.arange(4.0)',
  '  r = d.createVariable("range", "f4", ("time", "range"), fill_value=-1.0); r.units = "km"',
  '  m = np.zeros((4, 3), bool); m[1, 2] = True; m[3, 0] = True',
  '  r[:] = np.ma.masked_array(np.tile([0.5, 0.515, 0.53], (4, 1)) + 0.001 * np.arange(4)[:, None], mask=m)',
  '  for n in ("azimuth", "elevation"):',
  '    a = d.createVariable(n, "f8", ("time",)); a.units = "degree"; a[:] = np.full(4, 10.0)',
  '  v = d.createVariable("radial_velocity", "f8", ("time", "range")); v.units = "m s-1"; v[:] = np.arange(12.0).reshape(4, 3)',
  'with netCDF4.Dataset(sys.argv[1]) as d:',
  '  print(json.dumps(np.ma.filled(d["range"][:].astype("f8"), np.nan).tolist()))',
].join('\n');

const file = (name: string) => join(tmp, name);
const JOBS: Record<string, string[]> = {
  us: ['test/reference/xarray_samples.py', file('xr-us.nc'), 'us'],
  ns: ['test/reference/xarray_samples.py', file('xr-ns.nc'), 'ns'],
  transposed: ['-c', TRANSPOSED, file('transposed.nc')],
  group: ['-c', GROUP, file('group.nc')],
  time32: ['-c', TIME32, file('time32.nc'), 'seconds since 1970-01-01', JSON.stringify([1778321263.6, 1778321264.1, 1778321264.6, 1778321265.1])],
  time32near: ['-c', TIME32, file('time32near.nc'), 'seconds since 2026-05-09 10:07:43', JSON.stringify([0.6, 1.1, 1.6, 2.1])],
  noncoord: ['-c', NONCOORD, file('noncoord.nc')],
};
let results: Record<string, PythonJobResult> = {};
beforeAll(() => {
  if (py.python) results = pythonBatch(py.python, JOBS);
});
/** The job's printed output, after checking that it ran. */
function ran(name: string): string {
  const r = results[name];
  expect(r?.status, r?.stderr).toBe(0);
  return r.stdout;
}

describe('CF time units finer than milliseconds', () => {
  it('microseconds and nanoseconds since a reference date with a fractional second', () => {
    // CF/UDUNITS: 1 us = 1e-6 s, 1 ns = 1e-9 s; reference 2026-05-09 10:07:43.6738 UTC = 1778321263.6738 Unix s
    // (Date.UTC(2026, 4, 9, 10, 7, 43) / 1000 = 1778321263, by hand from the calendar).
    for (const [u, step] of [['microseconds', 1e-6], ['us', 1e-6], ['nanoseconds', 1e-9], ['ns', 1e-9]] as const) {
      const a = unitsToSi(`${u} since 2026-05-09 10:07:43.673800`, 'time');
      if (typeof a === 'string') throw new Error(a);
      expect(a.scale).toBe(step);
      expect(Math.abs(a.offset - 1778321263.6738)).toBeLessThan(1e-6); // float64 at 1.8e9 s resolves 2.4e-7 s
    }
  });
});

describe.skipIf(!py.python)(`a file written by xarray from pandas times${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  for (const unit of ['us', 'ns'] as const) {
    it(`int64 "${unit === 'us' ? 'micro' : 'nano'}seconds since": times, ranges, velocities and holes as pandas decodes them`, async () => {
      const path = file(`xr-${unit}.nc`);
      const ref = JSON.parse(ran(unit)) as { units: string; unix: number[]; holes: [number, number][]; vel: (number | null)[][] };
      // xarray chose the unit itself: this is what the file holds, not what we asked for.
      expect(ref.units).toBe(`${unit === 'us' ? 'micro' : 'nano'}seconds since 2026-05-09 10:07:43.673800`);
      const rows: { t: number; r: number; vr: number; ray: number }[] = [];
      const rejected: RejectedRow[] = [];
      for await (const { batch: b, rejected: rj } of openSamples(path, o)) {
        rejected.push(...rj);
        for (let i = 0; i < b.length; i++) rows.push({ t: b.time[i], r: b.range[i], vr: b.radialVelocity[i], ray: b.line[i] });
      }
      // 6 rays x 3 gates = 18 samples; the two NaN holes are rejected as missing_value with their ray and gate.
      expect(rows.length).toBe(16);
      expect(rejected.map((x) => [x.ray, x.gate, x.reason])).toEqual(ref.holes.map(([i, j]) => [i, j, 'missing_value']));
      let k = 0;
      for (let ray = 0; ray < 6; ray++) {
        for (let g = 0; g < 3; g++) {
          if (ref.vel[ray][g] === null) continue;
          const x = rows[k++];
          expect(x.ray).toBe(ray);
          // pandas' Unix seconds of each time; float64 at 1.8e9 s resolves 2.4e-7 s, and the int64 offset times
          // 1e-6 or 1e-9 adds one rounding: 1e-6 s is a few units of the last place.
          expect(Math.abs(x.t - ref.unix[ray])).toBeLessThan(1e-6);
          expect(x.r).toBe(500 + 15 * g + ray); // whole metres stored as float64: exact
          // int16 packing with scale_factor 0.01 of multiples of 0.25: stored = 100 v exactly; 0.01 * stored
          // differs from v by at most one rounding of a double (1e-15 relative), 1e-12 m/s is generous.
          expect(Math.abs(x.vr - ref.vel[ray][g]!)).toBeLessThan(1e-12);
        }
      }
    });
  }
});

describe.skipIf(!py.python)(`a radial velocity stored as (range, time)${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('the one-line error names the radial velocity and the transposition, not the time variable', async () => {
    ran('transposed');
    const err = await checkSamples(file('transposed.nc'), o).then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(/transposed\.nc: variable "radial_velocity": must be on \(time, range\), but its first dimension has 3 and its second 6, the length of "time": stored as \(range, time\)\?/);
    expect((err as Error).message).not.toContain('\n');
  });
});


describe.skipIf(!py.python)(`variables in a group${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('not found at the root: the message points to the group and the path form; mapped by path they are read', async () => {
    ran('group');
    const err = await checkSamples(file('group.nc'), o).then(() => null, (e: unknown) => e);
    expect((err as Error).message).toMatch(/group\.nc: variable "time" for time not found .*the file has: sweep_0\/ \(a group\); variables in a group are named by path, e\.g\. "sweep_0\/time"$/);
    const columns = { time: 'sweep_0/time', azimuth_deg: 'sweep_0/azimuth', elevation_deg: 'sweep_0/elevation', range_m: 'sweep_0/range', radial_velocity_ms: 'sweep_0/radial_velocity' };
    const vr: number[] = [], t: number[] = [];
    for await (const { batch: b } of openSamples(file('group.nc'), { ...o, columns })) for (let i = 0; i < b.length; i++) { vr.push(b.radialVelocity[i]); t.push(b.time[i]); }
    expect(vr).toEqual([0, 1, 2, 3, 4, 5, 6, 7]); // whole numbers stored as float64: exact
    expect(t).toEqual([0, 0, 1, 1, 2, 2, 3, 3].map((k) => 1778321263 + k)); // whole seconds: exact
  });
});

describe.skipIf(!py.python)(`time stored as 32-bit floats${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('seconds since 1970 in single precision: refused naming the variable and the resolution (128 s)', async () => {
    // Regression: 2387 rays a second apart collapsed onto 10 stamps and the run went on. By hand: 1.78e9 lies in
    // [2^30, 2^31), where binary32 values are 2^(30 - 23) = 128 apart.
    ran('time32');
    const err = await checkSamples(file('time32.nc'), o).then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(/time32\.nc: variable "time": stored as 32-bit floats, which resolve only 128 s at these times/);
  });

  it('seconds since a reference near the data in single precision: read, to the float32 values', async () => {
    // Values below 64 s: binary32 spacing 2^(5 - 23) = 3.8e-6 s, well under the 1 s limit.
    const stored = JSON.parse(ran('time32near')) as number[];
    const t: number[] = [];
    for await (const { batch: b } of openSamples(file('time32near.nc'), o)) for (let i = 0; i < b.length; i += 2) t.push(b.time[i]);
    // 2026-05-09T10:07:43Z = 1778321263 Unix s (by hand); python's float32 values plus it: exact to 1e-6 s.
    t.forEach((x, k) => expect(Math.abs(x - (1778321263 + stored[k]))).toBeLessThan(1e-6));
  });
});

describe.skipIf(!py.python)(`ranges per ray in a variable named like its dimension${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('range(time, range): netCDF-C keeps it as _nc4_non_coord_range; read by its NetCDF name, masked gates rejected', async () => {
    // Regression: the reader took the data-less dimension "range" instead, and stopped ("no units attribute").
    const km = JSON.parse(ran('noncoord').replace(/NaN/g, 'null')) as (number | null)[][]; // the float32 values netCDF4 reads back
    const got: [number, number, number][] = [];
    const rejected: RejectedRow[] = [];
    for await (const { batch: b, rejected: rj } of openSamples(file('noncoord.nc'), o)) {
      rejected.push(...rj);
      for (let i = 0; i < b.length; i++) got.push([b.line[i], b.range[i], b.radialVelocity[i]]);
    }
    expect(rejected.map((x) => [x.variable, x.ray, x.gate, x.reason])).toEqual([['range', 1, 2, 'missing_value'], ['range', 3, 0, 'missing_value']]);
    const want: [number, number, number][] = [];
    km.forEach((row, ray) => row.forEach((x, g) => { if (x !== null) want.push([ray, x * 1000, ray * 3 + g]); }));
    expect(got.length).toBe(10);
    // km x 1000 of the same float32 values: equal to 1e-9 m (one rounding of the product)
    got.forEach((x, k) => { expect(x[0]).toBe(want[k][0]); expect(Math.abs(x[1] - want[k][1])).toBeLessThan(1e-9); expect(x[2]).toBe(want[k][2]); });
  });
});
