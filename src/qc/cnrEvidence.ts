/**
 * Evidence for a data-driven CNR limit: how far each sample's radial velocity lies from a local reference, against
 * its carrier-to-noise ratio, as a small 2-D histogram per instrument (CNR x normalised deviation).
 *
 * The idea follows the dynamic filter of Beck & Kuhn (2017), Remote Sensing 9(6), 561: good samples crowd around the
 * local flow in a dense ridge of the (CNR, normalised velocity) histogram, noise-dominated samples spread thinly over
 * the whole velocity range; the signal level where the ridge dissolves separates the two [method as recalled from
 * the paper; their normalisation and density threshold differ in detail from ours: memory]. We reduce it to one CNR
 * limit per instrument (cnrLimit.ts decides it from this histogram).
 *
 * Local reference (so that wake deficits and shear do not count as scatter): the median of the stronger-signal
 * samples of the same instrument in the same reference group: time block floor(t / timeBlock_s), azimuth bin,
 * elevation bin and range bin of the reported beam (instrument coordinates: a group is one place seen from one
 * direction, so the group's radial velocities measure the same thing). "Stronger": every member of the group with a
 * higher CNR (at most the strongest 101); the strongest minGroup - 1 members of a group have no reference. When junk
 * lies below some CNR, a good sample is then compared only with good samples, whatever share of its group is junk:
 * a plain group median (or comparing the strongest members with each other) is dragged by the junk of groups that
 * are mostly junk and moves the limit up by about the CNR spread at one range. Rows with their own angles fall into
 * groups by the bins; groups with fewer than `minGroup` samples give no reference. When fewer than half of the
 * samples have a reference the bins are doubled (up to three times).
 *
 * Deviation d = v_r - reference; normalised by the good-signal scatter sigma_g = 1.4826 * median |d| of the samples
 * in the top quarter of CNR (the strongest signals: taken as good), floored at 0.1 m/s.
 *
 * Pure: typed arrays in, histogram out; allocation per call, none per sample (grouping by a counting sort).
 */
import { MAD_TO_SIGMA, selectInPlace } from './robust.ts';

/** Binning of the local reference and the histogram. */
export interface CnrEvidenceOptions {
  /** Time block of a reference group, s. @default 600 */
  timeBlock_s?: number;
  /** Azimuth bin, degrees. @default 1 */
  azimuthBin_deg?: number;
  /** Elevation bin, degrees. @default 1 */
  elevationBin_deg?: number;
  /** Range bin, m (the gate length of a pulsed instrument). @default 30 */
  rangeBin_m?: number;
  /** Fewest samples of a group that gives a reference. @default 5 */
  minGroup?: number;
  /** Samples with CNR above this are hard targets and left out, dB. @default Infinity */
  cnrMax_db?: number;
  /** Samples with |v_r| above this are left out, m/s. @default Infinity */
  radialVelocityLimit_ms?: number;
}

/** Histogram layout: CNR bins of CNR_STEP_DB from cnrLo_db; deviation bins of DEV_STEP from -DEV_SPAN, plus one under- and one overflow. */
export const CNR_STEP_DB = 1;
export const DEV_STEP = 0.5;
export const DEV_SPAN = 20;
export const DEV_BINS = (2 * DEV_SPAN) / DEV_STEP + 2;
/** CNR below this is counted in the lowest bin, dB. */
export const CNR_FLOOR_DB = -60;
/** Floor of the good-signal scatter, m/s (quantised or perfectly steady data). */
export const SCATTER_FLOOR_MS = 0.1;

export interface CnrEvidence {
  /** Samples given (with a finite CNR, below cnrMax, within the velocity limit). */
  samples: number;
  /** Of those, samples with a local reference (counted in the histogram). */
  referenced: number;
  /** Lower edge of the first CNR bin, dB; bins are CNR_STEP_DB wide. */
  cnrLo_db: number;
  cnrBins: number;
  /** Row-major [cnrBin * DEV_BINS + devBin]; devBin 0 is below -DEV_SPAN, DEV_BINS - 1 above +DEV_SPAN. */
  counts: Uint32Array;
  /** Good-signal scatter sigma_g, m/s: the unit of the normalised deviation. */
  scatter_ms: number;
  /** The binning used (after any doubling). */
  binning: { timeBlock_s: number; azimuthBin_deg: number; elevationBin_deg: number; rangeBin_m: number };
}

export interface SampleColumnsIn {
  length: number;
  time: ArrayLike<number>;
  azimuth: ArrayLike<number>;
  elevation: ArrayLike<number>;
  range: ArrayLike<number>;
  radialVelocity: ArrayLike<number>;
  cnr: ArrayLike<number>;
}

interface SampleColumns {
  length: number;
  time: Float64Array;
  azimuth: Float64Array;
  elevation: Float64Array;
  range: Float64Array;
  radialVelocity: Float64Array;
  cnr: Float64Array;
}

/** A reference uses at most this many stronger members (the strongest ones): bounded work in large groups. */
const MAX_REFERENCE = 101;

function insertSorted(a: Float64Array, len: number, v: number): void {
  let j = len;
  while (j > 0 && a[j - 1] > v) { a[j] = a[j - 1]; j--; }
  a[j] = v;
}

function medianOfSorted(a: Float64Array, len: number): number {
  return len % 2 === 1 ? a[(len - 1) >> 1] : 0.5 * (a[len / 2 - 1] + a[len / 2]);
}

/** Group key of each used sample for one binning (time block, azimuth, elevation and range bins). */
function groupKeys(s: SampleColumns, use: Uint32Array, bins: CnrEvidence['binning']): Float64Array {
  const n = use.length;
  let t0 = Infinity;
  for (let k = 0; k < n; k++) t0 = Math.min(t0, Math.floor(s.time[use[k]] / bins.timeBlock_s));
  const na = Math.ceil(360 / bins.azimuthBin_deg) + 1, ne = Math.ceil(181 / bins.elevationBin_deg) + 1;
  let maxR = 0;
  for (let k = 0; k < n; k++) maxR = Math.max(maxR, Math.floor(s.range[use[k]] / bins.rangeBin_m));
  const nr = maxR + 1;
  const key = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const i = use[k];
    const az = ((s.azimuth[i] % 360) + 360) % 360;
    const tb = Math.floor(s.time[i] / bins.timeBlock_s) - t0;
    const ab = Math.floor(az / bins.azimuthBin_deg);
    const eb = Math.floor((s.elevation[i] + 90) / bins.elevationBin_deg);
    const rb = Math.floor(s.range[i] / bins.rangeBin_m);
    key[k] = ((tb * na + ab) * ne + eb) * nr + rb; // exact below 2^53 for any real campaign (blocks x bins)
  }
  return key;
}

/**
 * Members grouped together (groups in key order, members in sample order): the distinct keys by a native numeric
 * sort, each sample's group by binary search, then a counting sort. Returns the group starts (G + 1 entries) and the
 * members' positions in group order.
 */
function groupMembers(key: Float64Array): { starts: Uint32Array; order: Uint32Array } {
  const n = key.length;
  const uniq = Float64Array.from(key).sort();
  let G = 0;
  for (let k = 0; k < n; k++) if (k === 0 || uniq[k] !== uniq[G - 1]) uniq[G++] = uniq[k];
  const groupOf = new Uint32Array(n);
  for (let k = 0; k < n; k++) {
    const x = key[k];
    let a = 0, b = G - 1;
    while (a < b) { const c = (a + b) >> 1; if (uniq[c] < x) a = c + 1; else b = c; }
    groupOf[k] = a;
  }
  const starts = new Uint32Array(G + 1);
  for (let k = 0; k < n; k++) starts[groupOf[k] + 1]++;
  for (let g = 0; g < G; g++) starts[g + 1] += starts[g];
  const fill = starts.slice(0, G);
  const order = new Uint32Array(n);
  for (let k = 0; k < n; k++) order[fill[groupOf[k]]++] = k;
  return { starts, order };
}

/** Sorts mem[0, m) by CNR, strongest first (ties by position: deterministic). */
function byCnr(s: SampleColumns, use: Uint32Array, mem: Uint32Array, m: number): void {
  if (m <= 32) {
    for (let k = 1; k < m; k++) {
      const x = mem[k], cx = s.cnr[use[x]];
      let j = k;
      while (j > 0 && (s.cnr[use[mem[j - 1]]] < cx || (s.cnr[use[mem[j - 1]]] === cx && mem[j - 1] > x))) { mem[j] = mem[j - 1]; j--; }
      mem[j] = x;
    }
  } else mem.subarray(0, m).sort((a, b) => s.cnr[use[b]] - s.cnr[use[a]] || a - b);
}

/**
 * Each member of a group (mem[0, m), strongest first) with at least minGroup - 1 stronger ones: its deviation from
 * their median (a running sorted list in `sorted`, at least m long). The strongest minGroup - 1 have no
 * reference: in a group that is mostly junk they could be good samples among junk, and comparing them with each
 * other would count junk as their neighbours.
 */
function groupDeviations(s: SampleColumns, use: Uint32Array, mem: Uint32Array, m: number, minGroup: number, sorted: Float64Array, d: Float64Array): void {
  const top = minGroup - 1;
  let L = 0;
  for (let j = 0; j < top; j++) insertSorted(sorted, L++, s.radialVelocity[use[mem[j]]]);
  for (let k = top; k < m; k++) {
    d[mem[k]] = s.radialVelocity[use[mem[k]]] - medianOfSorted(sorted, L);
    if (L < MAX_REFERENCE) insertSorted(sorted, L++, s.radialVelocity[use[mem[k]]]);
  }
}

/**
 * Deviations from stronger neighbours for one binning: d[i] = v[i] - median of the members of i's group with a higher
 * CNR (the strongest minGroup members: the median of the other minGroup - 1 of them); NaN where the group is smaller
 * than minGroup. Returns the number of samples with a deviation. (Its steps are small functions of their own: one
 * function holding every loop was recompiled by the optimiser about ten times per run as each loop became hot.)
 */
function deviations(s: SampleColumns, use: Uint32Array, bins: CnrEvidence['binning'], minGroup: number, d: Float64Array): number {
  const { starts, order } = groupMembers(groupKeys(s, use, bins));
  const G = starts.length - 1;
  d.fill(NaN);
  let mem = new Uint32Array(64), sorted = new Float64Array(64);
  let withRef = 0;
  for (let g = 0; g < G; g++) {
    const lo = starts[g], m = starts[g + 1] - lo;
    if (m < minGroup) continue;
    if (mem.length < m) { mem = new Uint32Array(2 * m); sorted = new Float64Array(2 * m); }
    for (let k = 0; k < m; k++) mem[k] = order[lo + k];
    byCnr(s, use, mem, m);
    groupDeviations(s, use, mem, m, minGroup, sorted, d);
    withRef += m - (minGroup - 1);
  }
  return withRef;
}

/**
 * The (CNR, normalised deviation) histogram of one instrument's samples. Samples with NaN CNR, CNR above cnrMax_db
 * or |v_r| above the limit are left out.
 */
export function cnrEvidence(input: SampleColumnsIn, options: CnrEvidenceOptions = {}): CnrEvidence {
  const cnrMax = options.cnrMax_db ?? Infinity, vLim = options.radialVelocityLimit_ms ?? Infinity;
  const minGroup = options.minGroup ?? 5;
  let bins = {
    timeBlock_s: options.timeBlock_s ?? 600,
    azimuthBin_deg: options.azimuthBin_deg ?? 1,
    elevationBin_deg: options.elevationBin_deg ?? 1,
    rangeBin_m: options.rangeBin_m ?? 30,
  };
  // Local copies of the used samples (monomorphic typed arrays for the loops below); `use` is then the identity.
  const N = input.length;
  const s: SampleColumns = {
    length: 0, time: new Float64Array(N), azimuth: new Float64Array(N), elevation: new Float64Array(N), range: new Float64Array(N),
    radialVelocity: new Float64Array(N), cnr: new Float64Array(N),
  };
  let n = 0;
  for (let i = 0; i < N; i++) {
    const c = input.cnr[i], v = input.radialVelocity[i], t = input.time[i], r = input.range[i];
    if (!(c === c && c <= cnrMax && Math.abs(v) <= vLim && Number.isFinite(t) && Number.isFinite(r))) continue;
    s.time[n] = t; s.azimuth[n] = input.azimuth[i]; s.elevation[n] = input.elevation[i]; s.range[n] = r; s.radialVelocity[n] = v; s.cnr[n] = c;
    n++;
  }
  s.length = n;
  const use = new Uint32Array(n);
  for (let k = 0; k < n; k++) use[k] = k;
  const d = new Float64Array(n);
  let withRef = n > 0 ? deviations(s, use, bins, minGroup, d) : 0;
  for (let grow = 0; grow < 3 && n > 0 && withRef < n / 2; grow++) {
    bins = { timeBlock_s: 2 * bins.timeBlock_s, azimuthBin_deg: 2 * bins.azimuthBin_deg, elevationBin_deg: 2 * bins.elevationBin_deg, rangeBin_m: 2 * bins.rangeBin_m };
    withRef = deviations(s, use, bins, minGroup, d);
  }

  // CNR range of the referenced samples.
  let cMin = Infinity, cMax = -Infinity;
  for (let k = 0; k < n; k++) if (d[k] === d[k]) { const c = s.cnr[use[k]]; if (c < cMin) cMin = c; if (c > cMax) cMax = c; }
  if (withRef === 0) return { samples: n, referenced: 0, cnrLo_db: NaN, cnrBins: 0, counts: new Uint32Array(0), scatter_ms: NaN, binning: bins };
  const lo = Math.max(CNR_FLOOR_DB, Math.floor(cMin / CNR_STEP_DB) * CNR_STEP_DB);
  const cnrBins = Math.max(1, Math.floor((cMax - lo) / CNR_STEP_DB) + 1);

  // Good-signal scatter: 1.4826 * median |d| over the top quarter of CNR.
  const cs = new Float64Array(withRef), ad = new Float64Array(withRef);
  let j = 0;
  for (let k = 0; k < n; k++) if (d[k] === d[k]) { cs[j] = s.cnr[use[k]]; ad[j] = Math.abs(d[k]); j++; }
  const q = Math.min(withRef - 1, Math.floor(0.75 * withRef));
  const cq = selectInPlace(Float64Array.from(cs), 0, withRef, q);
  let m = 0;
  for (let k = 0; k < withRef; k++) if (cs[k] >= cq) ad[m++] = ad[k];
  const med = m % 2 === 1 ? selectInPlace(ad, 0, m, (m - 1) >> 1) : 0.5 * (selectInPlace(ad, 0, m, m / 2 - 1) + selectInPlace(ad, 0, m, m / 2));
  const scatter = Math.max(SCATTER_FLOOR_MS, MAD_TO_SIGMA * med);

  const counts = new Uint32Array(cnrBins * DEV_BINS);
  for (let k = 0; k < n; k++) {
    if (d[k] !== d[k]) continue;
    const cb = Math.min(cnrBins - 1, Math.max(0, Math.floor((s.cnr[use[k]] - lo) / CNR_STEP_DB)));
    const x = d[k] / scatter;
    const db = x < -DEV_SPAN ? 0 : x >= DEV_SPAN ? DEV_BINS - 1 : 1 + Math.floor((x + DEV_SPAN) / DEV_STEP);
    counts[cb * DEV_BINS + db]++;
  }
  return { samples: n, referenced: withRef, cnrLo_db: lo, cnrBins, counts, scatter_ms: scatter, binning: bins };
}
