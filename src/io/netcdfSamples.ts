/**
 * Streaming reader of NetCDF-4 (HDF5) sample files: the same face as the CSV reader (csvSamples.ts), batches of
 * SampleBatch plus the samples it could not use, with units and sign settled here (netcdfLayout.ts) so nothing
 * downstream knows the format.
 *
 * Reads blocks of whole rays: hyperslabs [r0, r1) x all gates of the radial velocity and CNR (r1 - r0 a multiple of
 * the variable's chunk rows, about `batchSize` samples), and the matching slices of time, azimuth, elevation and a
 * per-ray range; only the 1-D range of the gates is read whole. Never the file.
 *
 * Every sample (ray, gate) ends up either in a batch or rejected, so samples read = batch rows + rejected exactly:
 * a missing value (fill, missing_value, outside the valid range, NaN) of time, azimuth, elevation, range or radial
 * velocity is `missing_value`, naming the variable, ray and gate; angles out of range and non-positive ranges get the
 * CSV reader's reasons (angle_out_of_range, bad_range, bad_time). A missing CNR is NaN, as an empty CNR cell in a
 * CSV file (the CNR rules then let the sample pass). In a batch, `line` holds the ray index.
 */
import { InputError } from '../errors.ts';
import type { RejectReason } from '../qc/reasons.ts';
import type { RejectedRow, SampleBatch } from './batch.ts';
import { pooledBatch, type SampleChunk, type SampleReaderOptions } from './csvSamples.ts';
import { hdf5Message, loadHdf5, SliceReader, type H5Module } from './hdf5.ts';
import { resolveNetcdf, type NcVariable, type NetcdfLayout } from './netcdfLayout.ts';
import { wrap360 } from './sampleRow.ts';

type H5File = InstanceType<H5Module['File']>;

async function openFile(path: string): Promise<H5File> {
  const h5 = await loadHdf5();
  try {
    return new h5.File(path, 'r');
  } catch (e) {
    throw new InputError(path, undefined, `not a readable NetCDF-4/HDF5 file: ${hdf5Message(e)}`);
  }
}

/** Opens the file and resolves its layout; the caller closes the file. */
async function open(path: string, opts: SampleReaderOptions): Promise<{ f: H5File; layout: NetcdfLayout; sign: 1 | -1 }> {
  if (opts.owner < 0) throw new InputError(path, undefined, 'a NetCDF file must belong to one instrument (list it under instruments[].files)');
  const f = await openFile(path);
  try {
    return { f, ...resolveNetcdf(f, path, opts.columns, opts.sign) };
  } catch (e) {
    f.close();
    throw e;
  }
}

/** Resolves the variables, dimensions and units without reading samples; throws InputError naming the variable. */
export async function checkNetcdf(path: string, opts: SampleReaderOptions): Promise<{ rays: number; gates: number }> {
  const { f, layout } = await open(path, opts);
  f.close();
  return { rays: layout.rays, gates: layout.gates };
}

/**
 * A slice of a variable as float64 (int64 and packed integers included): through `sr` into its array `slot` (valid
 * until that slot is read again) when the type allows, else through h5wasm's slice().
 */
function read(v: NcVariable, file: string, ranges: [number, number][], what: string, sr?: SliceReader, slot = 0): ArrayLike<number> {
  let raw: unknown;
  try {
    const r = ranges.slice(0, v.shape.length);
    const fast = sr && v.shape.length > 0 ? sr.read(v.ds, r, slot) : null;
    if (fast) return fast;
    raw = v.shape.length === 0 ? v.ds.value : v.ds.slice(r);
  } catch (e) {
    throw new InputError(file, undefined, `variable "${v.name}": read failed at ${what}: ${hdf5Message(e)}`);
  }
  if (typeof raw === 'number') return [raw];
  if (raw instanceof BigInt64Array || raw instanceof BigUint64Array) return Float64Array.from(raw, Number);
  if (ArrayBuffer.isView(raw)) return raw as unknown as ArrayLike<number>;
  throw new InputError(file, undefined, `variable "${v.name}": not numeric`);
}

function missing(v: NcVariable, x: number): boolean {
  if (x !== x || x < v.validMin || x > v.validMax) return true;
  const f = v.fills;
  for (let k = 0; k < f.length; k++) if (x === f[k]) return true;
  return false;
}

function createBatch(file: string, n: number): SampleBatch {
  return {
    length: 0, file, line: new Float64Array(n), time: new Float64Array(n), instrument: new Uint8Array(n), azimuth: new Float64Array(n),
    elevation: new Float64Array(n), range: new Float64Array(n), radialVelocity: new Float64Array(n), cnr: new Float64Array(n),
  };
}

/**
 * Streams the samples of one NetCDF-4 file as batches of whole rays plus the samples rejected meanwhile. Throws
 * InputError for a structure problem before the first yield. A batch is valid until the next pull (reuseBatches).
 */
export async function* readNetcdfSamples(path: string, opts: SampleReaderOptions): AsyncGenerator<SampleChunk> {
  const { f, layout: L, sign } = await open(path, opts);
  let cleanup = () => {};
  try {
    const G = L.gates, target = opts.batchSize ?? 65536;
    const perBlock = Math.max(1, Math.round(target / G / L.chunkRays)) * L.chunkRays;
    const cap = perBlock * G;
    const reuse = opts.reuseBatches ?? true;
    let spare: SampleBatch | null = null;
    const gateRange = L.range.shape.length === 1 ? read(L.range, path, [[0, G]], 'the gates') : null;
    const T = L.time, AZ = L.azimuth, EL = L.elevation, RG = L.range, VR = L.radialVelocity, CN = L.cnr;
    const sr = new SliceReader();
    cleanup = () => sr.free();
    const vrScale = VR.scale * sign, vrOffset = VR.offset * sign;
    const owner = opts.owner;
    for (let r0 = 0; r0 < L.rays; r0 += perBlock) {
      const r1 = Math.min(L.rays, r0 + perBlock), nr = r1 - r0;
      const what = `rays ${r0}-${r1 - 1}`;
      const sl: [number, number][] = [[r0, r1], [0, G]];
      const t = read(T, path, sl, what, sr, 0), az = read(AZ, path, sl, what, sr, 1), el = read(EL, path, sl, what, sr, 2);
      const rg = gateRange ?? read(RG, path, sl, what, sr, 3);
      const vr = read(VR, path, sl, what, sr, 4);
      const cn = CN ? read(CN, path, sl, what, sr, 5) : null;
      const b: SampleBatch = spare ?? pooledBatch(opts.batchPool, path, cap) ?? createBatch(path, cap);
      spare = null;
      b.length = 0;
      const rejected: RejectedRow[] = [];
      const reject = (ray: number, gate: number, variable: string, reason: RejectReason, detail: string) =>
        rejected.push({ file: path, line: NaN, variable, ray: r0 + ray, gate, reason, detail, text: '' });
      let n = 0;
      for (let i = 0; i < nr; i++) {
        const tr = t[i], ar = az.length === 1 ? az[0] : az[i], er = el.length === 1 ? el[0] : el[i];
        let bad: [string, RejectReason, string] | null = null;
        if (missing(T, tr)) bad = [T.name, 'missing_value', `time: missing value ${tr}`];
        else if (missing(AZ, ar)) bad = [AZ.name, 'missing_value', `azimuth: missing value ${ar}`];
        else if (missing(EL, er)) bad = [EL.name, 'missing_value', `elevation: missing value ${er}`];
        const ts = tr * T.scale + T.offset;
        let a = ar * AZ.scale + AZ.offset;
        const e = er * EL.scale + EL.offset;
        if (!bad && !Number.isFinite(ts)) bad = [T.name, 'bad_time', `time ${tr} is not a finite time`];
        if (!bad && !(a >= -360 && a <= 720)) bad = [AZ.name, 'angle_out_of_range', `azimuth ${a} degrees outside [-360, 720]`];
        if (!bad && !(e >= -90 && e <= 90)) bad = [EL.name, 'angle_out_of_range', `elevation ${e} degrees outside [-90, 90]`];
        if (bad) {
          for (let g = 0; g < G; g++) reject(i, g, bad[0], bad[1], bad[2]);
          continue;
        }
        a = a >= 0 && a < 360 ? a : wrap360(a);
        const ray = r0 + i, base = i * G, rBase = gateRange ? 0 : base;
        for (let g = 0; g < G; g++) {
          const rr = rg[rBase + g], vv = vr[base + g];
          if (missing(RG, rr)) { reject(i, g, RG.name, 'missing_value', `range: missing value ${rr}`); continue; }
          if (missing(VR, vv)) { reject(i, g, VR.name, 'missing_value', `radial velocity: missing value ${vv}`); continue; }
          const range = rr * RG.scale + RG.offset;
          if (!(range > 0 && range < Infinity)) { reject(i, g, RG.name, 'bad_range', `range ${range} m is not positive`); continue; }
          let c = NaN;
          if (cn) {
            const cc = cn[base + g];
            if (!missing(CN!, cc)) c = cc * CN!.scale + CN!.offset;
          }
          b.line[n] = ray;
          b.time[n] = ts;
          b.instrument[n] = owner;
          b.azimuth[n] = a;
          b.elevation[n] = e;
          b.range[n] = range;
          b.radialVelocity[n] = vv * vrScale + vrOffset;
          b.cnr[n] = c;
          n++;
        }
      }
      b.length = n;
      yield { batch: b, rejected };
      if (reuse) spare = b;
    }
  } finally {
    cleanup();
    f.close();
  }
}
