/**
 * Streaming reader of NetCDF-4 (HDF5) sample files: the same face as the CSV reader (csvSamples.ts), batches of
 * SampleBatch plus the samples it could not use, with units and sign settled here (netcdfLayout.ts) so nothing
 * downstream knows the format.
 *
 * Reads blocks of whole rays: hyperslabs [r0, r1) x all gates of the radial velocity and CNR (r1 - r0 a multiple of
 * the variable's chunk rows, about `batchSize` samples; the first block one chunk of rays when that is less), and
 * the matching slices of time, azimuth, elevation and a per-ray range; only the 1-D range of the gates is read
 * whole. Never the file.
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

/**
 * Screening constants of a variable for the block kernel: [validMin, validMax, scale, offset, fill values...]. One
 * array type for every variable, so the kernel below stays monomorphic (compiled once, not once per variable type).
 */
function screenOf(v: NcVariable): Float64Array {
  return Float64Array.of(v.validMin, v.validMax, v.scale, v.offset, ...v.fills);
}

/** Whether stored value x is missing by screen S (NaN, outside the valid interval, or a fill value). */
function miss(S: Float64Array, x: number): boolean {
  if (x !== x || x < S[0] || x > S[1]) return true;
  for (let k = 4; k < S.length; k++) if (x === S[k]) return true;
  return false;
}

/** A slice as float64: the slice reader's arrays are already; others (h5wasm's slice(), scalars) are copied. */
function f64(a: ArrayLike<number>): Float64Array {
  return a instanceof Float64Array ? a : Float64Array.from(a);
}

const EMPTY = new Float64Array(0);

/** The rejection of a ray (g < 0: every gate) or gate, as the reader reports it: variable, reason, detail. */
function problem(why: Bad, L: NetcdfLayout, tr: number, ar: number, er: number, rr: number, vv: number): [string, RejectReason, string] {
  switch (why) {
    case Bad.time: return [L.time.name, 'missing_value', `time: missing value ${tr}`];
    case Bad.azimuth: return [L.azimuth.name, 'missing_value', `azimuth: missing value ${ar}`];
    case Bad.elevation: return [L.elevation.name, 'missing_value', `elevation: missing value ${er}`];
    case Bad.badTime: return [L.time.name, 'bad_time', `time ${tr} is not a finite time`];
    case Bad.azimuthRange: return [L.azimuth.name, 'angle_out_of_range', `azimuth ${ar * L.azimuth.scale + L.azimuth.offset} degrees outside [-360, 720]`];
    case Bad.elevationRange: return [L.elevation.name, 'angle_out_of_range', `elevation ${er * L.elevation.scale + L.elevation.offset} degrees outside [-90, 90]`];
    case Bad.range: return [L.range.name, 'missing_value', `range: missing value ${rr}`];
    case Bad.radialVelocity: return [L.radialVelocity.name, 'missing_value', `radial velocity: missing value ${vv}`];
    default: return [L.range.name, 'bad_range', `range ${rr * L.range.scale + L.range.offset} m is not positive`];
  }
}

/** Problems the block kernel records: per ray (every gate rejected) or per gate, with the variable at fault. */
const enum Bad { time, azimuth, elevation, badTime, azimuthRange, elevationRange, range, radialVelocity, badRange }

/**
 * Fills batch b from one block of rays (nr rays of G gates): the per-sample work of the reader, in a small function
 * of typed arrays only, so that it is optimised once (the generator around it, with its error paths, was re-optimised
 * ten times over the benchmark). Problems go to `bad` as (ray, gate or -1 for the whole ray, Bad) triples; returns
 * the rows written, and the count of numbers in `bad` in nBad[0].
 */
function fillBlock(
  nr: number, G: number, r0: number, t: Float64Array, az: Float64Array, azStep: number, el: Float64Array, elStep: number,
  rg: Float64Array, rgStep: number, vr: Float64Array, cn: Float64Array, hasCnr: number,
  ST: Float64Array, SA: Float64Array, SE: Float64Array, SR: Float64Array, SV: Float64Array, SC: Float64Array,
  vrScale: number, vrOffset: number, owner: number, b: SampleBatch, bad: Int32Array, nBad: Int32Array,
): number {
  const LN = b.line, T = b.time, IN = b.instrument, AZ = b.azimuth, EL = b.elevation, RG = b.range, VR = b.radialVelocity, CN = b.cnr;
  let n = 0, nb = 0;
  for (let i = 0; i < nr; i++) {
    const tr = t[i], ar = az[i * azStep], er = el[i * elStep];
    let why = -1;
    const ts = tr * ST[2] + ST[3];
    let a = ar * SA[2] + SA[3];
    const e = er * SE[2] + SE[3];
    if (miss(ST, tr)) why = Bad.time;
    else if (miss(SA, ar)) why = Bad.azimuth;
    else if (miss(SE, er)) why = Bad.elevation;
    else if (!(ts > -Infinity && ts < Infinity)) why = Bad.badTime;
    else if (!(a >= -360 && a <= 720)) why = Bad.azimuthRange;
    else if (!(e >= -90 && e <= 90)) why = Bad.elevationRange;
    if (why >= 0) {
      bad[nb++] = i; bad[nb++] = -1; bad[nb++] = why;
      continue;
    }
    a = a >= 0 && a < 360 ? a : wrap360(a);
    const ray = r0 + i, base = i * G, rBase = i * rgStep;
    for (let g = 0; g < G; g++) {
      const rr = rg[rBase + g], vv = vr[base + g];
      const range = rr * SR[2] + SR[3];
      let gw = -1;
      if (miss(SR, rr)) gw = Bad.range;
      else if (miss(SV, vv)) gw = Bad.radialVelocity;
      else if (!(range > 0 && range < Infinity)) gw = Bad.badRange;
      if (gw >= 0) {
        bad[nb++] = i; bad[nb++] = g; bad[nb++] = gw;
        continue;
      }
      let c = NaN;
      if (hasCnr === 1) {
        const cc = cn[base + g];
        if (!miss(SC, cc)) c = cc * SC[2] + SC[3];
      }
      LN[n] = ray; T[n] = ts; IN[n] = owner; AZ[n] = a; EL[n] = e; RG[n] = range;
      VR[n] = vv * vrScale + vrOffset;
      CN[n] = c;
      n++;
    }
  }
  nBad[0] = nb;
  return n;
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
    // The first block one chunk of rays when that is smaller: a run waits for every file's first block before its
    // ingest starts (the CNR pre-pass takes its rows from it), so it comes sooner.
    const firstBlock = Math.min(perBlock, L.chunkRays);
    const cap = perBlock * G;
    const reuse = opts.reuseBatches ?? true;
    let spare: SampleBatch | null = null;
    const gateRange = L.range.shape.length === 1 ? f64(read(L.range, path, [[0, G]], 'the gates')) : null;
    const T = L.time, AZ = L.azimuth, EL = L.elevation, RG = L.range, VR = L.radialVelocity, CN = L.cnr;
    const sr = new SliceReader();
    cleanup = () => sr.free();
    const vrScale = VR.scale * sign, vrOffset = VR.offset * sign;
    const owner = opts.owner;
    const ST = screenOf(T), SA = screenOf(AZ), SE = screenOf(EL), SR = screenOf(RG), SV = screenOf(VR), SC = CN ? screenOf(CN) : EMPTY;
    let bad = new Int32Array(0);
    const nBad = new Int32Array(1);
    for (let r0 = 0, r1 = 0; r0 < L.rays; r0 = r1) {
      r1 = Math.min(L.rays, r0 + (r0 === 0 ? firstBlock : perBlock));
      const nr = r1 - r0;
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
      const tt = f64(t), aa = f64(az), ee = f64(el), rr = f64(rg), vv = f64(vr);
      if (bad.length < 3 * nr * G) bad = new Int32Array(3 * nr * G);
      const n = fillBlock(nr, G, r0, tt, aa, aa.length === 1 ? 0 : 1, ee, ee.length === 1 ? 0 : 1, rr, gateRange ? 0 : G, vv, cn ? f64(cn) : EMPTY, cn ? 1 : 0,
        ST, SA, SE, SR, SV, SC, vrScale, vrOffset, owner, b, bad, nBad);
      for (let k = 0; k < nBad[0]; k += 3) {
        const i = bad[k], g = bad[k + 1], why = bad[k + 2] as Bad;
        const [variable, reason, detail] = problem(why, L, tt[i], aa[aa.length === 1 ? 0 : i], ee[ee.length === 1 ? 0 : i], rr[(gateRange ? 0 : i * G) + Math.max(g, 0)], vv[i * G + Math.max(g, 0)]);
        if (g >= 0) rejected.push({ file: path, line: NaN, variable, ray: r0 + i, gate: g, reason, detail, text: '' });
        else for (let gg = 0; gg < G; gg++) rejected.push({ file: path, line: NaN, variable, ray: r0 + i, gate: gg, reason, detail, text: '' });
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
