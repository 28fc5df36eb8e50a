/**
 * Sample files in NetCDF-4 for tests and benchmarks: `writeSampleNetcdf` writes rays (time, azimuth, elevation) by
 * range gates in the layout the NetCDF reader expects, with a choice of units, sign convention, packing, chunking
 * and fill values; `csvToNetcdf` turns a simulated CSV file (one row per gate, rays repeating time and angles) into
 * such a file, so the same samples can be run from both formats.
 */
import { NcWriter, type NcAttr } from '../io/netcdfWrite.ts';
import { readSamples } from '../io/csvSamples.ts';
import type { ColumnMap } from '../campaign/schema.ts';

export interface SampleArrays {
  /** Per ray: Unix seconds, degrees, degrees. */
  time: Float64Array;
  azimuth: Float64Array;
  elevation: Float64Array;
  /** Range of each gate, metres: per gate (G values) or per ray and gate (R * G). */
  range: Float64Array;
  /** Radial velocity (positive away) and CNR, R * G row-major; NaN = missing (written as the fill value). */
  radialVelocity: Float32Array;
  cnr?: Float32Array;
}

export interface SampleNetcdfOptions {
  /** Rays per chunk. @default 1024 */
  chunkRays?: number;
  /** Deflate level. @default 1 */
  deflate?: number;
  /** Units written (values converted accordingly). */
  angleUnits?: 'degrees' | 'radians';
  rangeUnits?: 'm' | 'km';
  /** Time written as `seconds since <epoch>` (ISO date) or `<unit> since`. @default seconds since 1970-01-01 */
  timeEpoch?: string;
  timeUnit?: 'seconds' | 'minutes' | 'hours' | 'days';
  /** Sign convention of the stored radial velocity (standard name says which). @default away */
  sign?: 'away' | 'toward';
  /** Leave the standard name out of the radial velocity. */
  noStandardName?: boolean;
  /** _FillValue of the float variables. @default -9999 */
  fill?: number;
  /** Variable names. */
  names?: Partial<Record<'time' | 'azimuth' | 'elevation' | 'range' | 'radial_velocity' | 'cnr', string>>;
  /** Attributes to override per variable (undefined removes nothing; use {} to add). */
  attrs?: Partial<Record<'time' | 'azimuth' | 'elevation' | 'range' | 'radial_velocity' | 'cnr', Record<string, NcAttr | undefined>>>;
  /** Global attributes. */
  global?: Record<string, NcAttr>;
}

const TIME_STEP = { seconds: 1, minutes: 60, hours: 3600, days: 86400 };

export async function writeSampleNetcdf(path: string, s: SampleArrays, o: SampleNetcdfOptions = {}): Promise<void> {
  const R = s.time.length, G = s.radialVelocity.length / Math.max(1, R);
  const name = { time: 'time', azimuth: 'azimuth', elevation: 'elevation', range: 'range', radial_velocity: 'radial_velocity', cnr: 'cnr', ...o.names };
  const fill = o.fill ?? -9999;
  const w = await NcWriter.create(path);
  try {
    const epoch = o.timeEpoch ?? '1970-01-01';
    const t0 = Date.parse(epoch.length <= 10 ? `${epoch}T00:00:00Z` : epoch) / 1000;
    const step = TIME_STEP[o.timeUnit ?? 'seconds'];
    const ang = o.angleUnits === 'radians' ? Math.PI / 180 : 1;
    const rng = o.rangeUnits === 'km' ? 1e-3 : 1;
    const chunk = Math.max(1, Math.min(o.chunkRays ?? 1024, R));
    const opts = { chunks: [chunk, G], deflate: o.deflate ?? 1 };
    const ray = { chunks: [chunk], deflate: o.deflate ?? 1 };
    const attrs = (k: keyof typeof name, base: Record<string, NcAttr | undefined>) => ({ ...base, ...o.attrs?.[k] });
    w.coordinate(name.time, Float64Array.from(s.time, (t) => (t - t0) / step), attrs('time', { standard_name: 'time', units: `${o.timeUnit ?? 'seconds'} since ${epoch}`, calendar: 'standard' }));
    const perGate = s.range.length === G;
    const gate = perGate ? name.range : 'gate';
    if (perGate) w.coordinate(name.range, Float64Array.from(s.range, (r) => r * rng), attrs('range', { units: o.rangeUnits ?? 'm', long_name: 'distance along the beam' }));
    else w.dimension('gate', G);
    w.variable(name.azimuth, [name.time], Float64Array.from(s.azimuth, (a) => a * ang), attrs('azimuth', { units: o.angleUnits ?? 'degrees', long_name: 'beam azimuth, clockwise from north' }), ray);
    w.variable(name.elevation, [name.time], Float64Array.from(s.elevation, (a) => a * ang), attrs('elevation', { units: o.angleUnits ?? 'degrees', long_name: 'beam elevation above horizontal' }), ray);
    if (!perGate) w.variable(name.range, [name.time, gate], Float64Array.from(s.range, (r) => r * rng), attrs('range', { units: o.rangeUnits ?? 'm', long_name: 'distance along the beam' }), opts);
    const sgn = o.sign === 'toward' ? -1 : 1;
    const vr = Float32Array.from(s.radialVelocity, (v) => (v === v ? sgn * v : fill));
    w.variable(name.radial_velocity, [name.time, gate], vr, attrs('radial_velocity', {
      units: 'm s-1', _FillValue: new Float32Array([fill]),
      standard_name: o.noStandardName ? undefined : o.sign === 'toward' ? 'radial_velocity_of_scatterers_toward_instrument' : 'radial_velocity_of_scatterers_away_from_instrument',
    }), opts);
    if (s.cnr) {
      w.variable(name.cnr, [name.time, gate], Float32Array.from(s.cnr, (v) => (v === v ? v : fill)), attrs('cnr', { units: 'dB', long_name: 'carrier-to-noise ratio', _FillValue: new Float32Array([fill]) }), opts);
    }
    w.global({ Conventions: 'CF-1.8', title: 'line-of-sight samples', ...o.global });
    w.close();
  } catch (e) {
    w.abort();
    throw e;
  }
}

/**
 * Converts a sample CSV (one row per gate; a ray = consecutive rows with the same time, instrument and angles) into
 * a NetCDF-4 file with range on (time, gate), or on the gates alone when every ray has the same ranges; rays with fewer gates than the longest are padded with missing
 * values. Rows the CSV reader rejects are left out. Two passes over the CSV; holds the samples of the file.
 */
export async function csvToNetcdf(csvPath: string, ncPath: string, owner: { id: string; columns?: ColumnMap }, o: SampleNetcdfOptions = {}): Promise<{ rays: number; gates: number; samples: number }> {
  const readOpts = { instrumentIndex: new Map([[owner.id, 0]]), owner: 0, columns: owner.columns ?? {}, sign: 'away' as const };
  let rays = 0, gates = 0, run = 0;
  let pt = NaN, pa = NaN, pe = NaN;
  for await (const { batch: b } of readSamples(csvPath, readOpts)) {
    for (let i = 0; i < b.length; i++) {
      if (b.time[i] !== pt || b.azimuth[i] !== pa || b.elevation[i] !== pe) { rays++; run = 0; pt = b.time[i]; pa = b.azimuth[i]; pe = b.elevation[i]; }
      run++;
      if (run > gates) gates = run;
    }
  }
  const s: SampleArrays = {
    time: new Float64Array(rays), azimuth: new Float64Array(rays), elevation: new Float64Array(rays),
    range: new Float64Array(rays * gates).fill(NaN), radialVelocity: new Float32Array(rays * gates).fill(NaN), cnr: new Float32Array(rays * gates).fill(NaN),
  };
  let r = -1, g = 0, samples = 0;
  pt = NaN; pa = NaN; pe = NaN;
  for await (const { batch: b } of readSamples(csvPath, readOpts)) {
    for (let i = 0; i < b.length; i++) {
      if (b.time[i] !== pt || b.azimuth[i] !== pa || b.elevation[i] !== pe) {
        r++; g = 0; pt = b.time[i]; pa = b.azimuth[i]; pe = b.elevation[i];
        s.time[r] = pt; s.azimuth[r] = pa; s.elevation[r] = pe;
      }
      const k = r * gates + g++;
      s.range[k] = b.range[i]; s.radialVelocity[k] = b.radialVelocity[i]; s.cnr![k] = b.cnr[i];
      samples++;
    }
  }
  // the same gates on every ray (padded gates aside): range on the gate dimension alone (a third less to read)
  const ref = new Float64Array(gates).fill(NaN);
  let same = rays > 0;
  for (let k = 0; same && k < s.range.length; k++) {
    const r = s.range[k], g = k % gates;
    if (r !== r) continue;
    if (ref[g] !== ref[g]) ref[g] = r;
    else same = r === ref[g];
  }
  if (same && ref.every((r) => r === r)) s.range = ref;
  // padded gates need a range too (missing values are read as such only in the radial velocity): repeat the last
  else for (let k = 0; k < s.range.length; k++) if (!(s.range[k] === s.range[k])) s.range[k] = k > 0 ? s.range[k - 1] : 1;
  await writeSampleNetcdf(ncPath, s, o);
  return { rays, gates, samples };
}
