/**
 * The currency between reading and solving: mergeable per-key accumulators. A key is one (plane cell, instrument)
 * of one averaging window (key = (cellOffset[plane] + cell) * instrumentCount + instrument, the order the retrieval
 * uses). Per key: the sample count, sums of the radial velocity and of its square, of the beam unit vector (rotor
 * frame of the window) and of the in-plane position, plus a radial-velocity histogram for the robust filter
 * (qc/vrHistogram.ts). Memory grows with the keys that received samples, never with the samples.
 *
 * Exact merging: every sum is a sum of integers (fixed-point values rounded to the nearest, ties to even; scales below) held in doubles, exact while it
 * stays below 2^53. So the accumulator of a set of samples is the same however the samples were ordered or split
 * into shards, files or batches, and merging accumulators is exact. The squares of the fixed-point radial
 * velocity (up to 2^52) are split into a high part (multiples of 2^26) and a low part, each summed exactly.
 *
 * Limits that keep every sum exact: |v_r| < 64 m/s (the schema caps the radial-velocity limit there), |position| <
 * 65 km, and at most MAX_SAMPLES_PER_KEY = 2^27 samples per key (checked when a window is finished).
 * Quantisation: v_r to 2^-20 m/s (1e-6 m/s), beam components to 2^-26 (1.5e-8), positions to 2^-10 m (1 mm).
 *
 * Uncertainty-budget sums (fields th .. hv; filled only when a sample comes with its time, i.e. from the plane
 * target, and the accumulator was made with `budget` on): the sample time (absolute Unix seconds to 2^-6 s, split in
 * a high part of multiples of 2^26 quanta and a remainder, so both sums stay exact), and per key the lag-1 and lag-2
 * products of successive samples of the key (q_k q_{k-1}, q_k q_{k-2}: the order in which the key's samples arrive,
 * that is time order within an instrument's files and range order within a ray) with their pair counts, the sum of
 * the lag-1 time gaps (2^-10 s) and the count and sum of q of the samples in the later half of the window. These
 * feed the integral time scale, the effective sample count, the noise variance (Lenschow, Wulfmeyer & Senff 2000:
 * the autocovariance extrapolated to lag 0) and the trend of the key's radial velocity (retrieval/sampling.ts).
 * Products split like q^2 (|q_k q_j| <= 2^52). The last two samples of each key (field `lag`, not a sum) carry the
 * pairs across batches; merging two accumulators does not form the pairs across their boundary: a window split into
 * S shards loses at most one lag-1 and two lag-2 pairs per key and boundary (S - 1 and 2 (S - 1) of n - 1 and n - 2
 * pairs), which biases the lag covariances by at most that share of a key's pairs (stated in DEVELOPERS.md).
 */
import { VrHistograms } from '../qc/vrHistogram.ts';

/** Fixed-point scale of the radial velocity: q = round(v_r * VR_SCALE). */
export const VR_SCALE = 2 ** 20;
/** Fixed-point scale of unit-vector components. */
export const DIR_SCALE = 2 ** 26;
/** Fixed-point scale of in-plane positions (metres). */
export const POS_SCALE = 2 ** 10;
/** Split of q^2 into high and low parts. */
export const SQ_SPLIT = 2 ** 26;
/** Samples per key above which a sum could lose exactness. */
export const MAX_SAMPLES_PER_KEY = 2 ** 27;
/** Largest |v_r| the fixed-point sums hold exactly, m/s. */
export const MAX_ABS_VR = 64;

const RND = 6755399441055744; // 1.5 * 2^52
const INV_SPLIT = 1 / SQ_SPLIT;

/** Fixed-point scale of sample times (absolute Unix seconds), 1/s. */
export const T_SCALE = 2 ** 6;
/** Fixed-point scale of time gaps between successive samples of a key, 1/s. */
export const DT_SCALE = 2 ** 10;

/**
 * Fields of a slot in CellAccumulator.sums (stride STRIDE). Every field is a sum of integers, merged by addition.
 * n .. spz: the retrieval's sums. th, tl: time sums (high part in units of 2^26 quanta, remainder). l1n, l1h, l1l,
 * l1d: lag-1 pair count, product sums (high, low), gap sum; l2n, l2h, l2l: lag-2 pair count and product sums;
 * hn, hv: count and sum of q of the samples in the later half of the window.
 */
export const F = {
  n: 0, sv: 1, sv2h: 2, sv2l: 3, sx: 4, sy: 5, sz: 6, spy: 7, spz: 8,
  th: 9, tl: 10, l1n: 11, l1h: 12, l1l: 13, l1d: 14, l2n: 15, l2h: 16, l2l: 17, hn: 18, hv: 19,
} as const;
export const STRIDE = 20;
/** Per-slot state of the lag pairs (not a sum; not merged): q of the last and second-last sample, last time, count (0-2). */
export const LAG_STRIDE = 4;

export class CellAccumulator {
  /** key -> slot, or -1 when the key has no sample yet. */
  readonly slotOf: Int32Array;
  /** slot -> key. */
  keyOf = new Int32Array(64);
  slots = 0;
  /**
   * Per slot, at [slot * STRIDE + F.x]: n (count); sv (sum of q = round(v_r * VR_SCALE)); sv2h, sv2l (sums of
   * floor(q^2 / SQ_SPLIT) and of the remainders); sx, sy, sz (sums of round(n * DIR_SCALE), rotor-frame beam unit
   * vector); spy, spz (sums of round(p * POS_SCALE), in-plane position).
   */
  sums = new Float64Array(64 * STRIDE);
  /** Per slot, at [slot * LAG_STRIDE]: q of the last sample, q of the one before, time of the last, samples seen (capped at 2). */
  lag = new Float64Array(64 * LAG_STRIDE);
  readonly hist = new VrHistograms();

  constructor(
    /** Number of keys (cells of all planes times instruments). */
    readonly keyCount: number,
    readonly instrumentCount: number,
    /** Fill the uncertainty-budget sums (fields th .. hv) for samples given with a time. @default true */
    readonly budget = true,
  ) {
    this.slotOf = new Int32Array(keyCount).fill(-1);
    this.hist.ensure(64);
  }

  private grow(): void {
    const cap = this.keyOf.length * 2;
    const k = new Int32Array(cap);
    k.set(this.keyOf);
    this.keyOf = k;
    const m = new Float64Array(cap * STRIDE);
    m.set(this.sums);
    this.sums = m;
    const l = new Float64Array(cap * LAG_STRIDE);
    l.set(this.lag);
    this.lag = l;
    this.hist.ensure(cap);
  }

  /** The slot of a key, created when new. */
  slot(key: number): number {
    let s = this.slotOf[key];
    if (s < 0) {
      if (this.slots === this.keyOf.length) this.grow();
      s = this.slots++;
      this.slotOf[key] = s;
      this.keyOf[s] = key;
    }
    return s;
  }

  /** Field f of slot s. */
  get(s: number, f: number): number {
    return this.sums[s * STRIDE + f];
  }

  /**
   * Add one sample: radial velocity v_r (m/s, positive away), rotor-frame beam unit vector (nx, ny, nz), in-plane
   * position (py, pz) in metres; optionally the sample time t (Unix s) and the middle of its window tMid (Unix s;
   * NaN when unknown, e.g. a whole-record window): with a finite t and `budget` on, the budget sums are filled too.
   */
  add(key: number, vr: number, nx: number, ny: number, nz: number, py: number, pz: number, t = NaN, tMid = NaN): void {
    let s = this.slotOf[key];
    if (s < 0) s = this.slot(key);
    // Rounding to the nearest integer (ties to even) by adding and removing 1.5 * 2^52: exact for |x| < 2^51 and
    // several times faster than Math.round; every value here is below 2^27.
    const q = vr * VR_SCALE + RND - RND;
    const q2 = q * q;
    let hi = q2 * INV_SPLIT + RND - RND;
    if (hi * SQ_SPLIT > q2) hi -= 1; // floor
    const m = this.sums, o = s * STRIDE;
    m[o]++;
    m[o + 1] += q;
    m[o + 2] += hi;
    m[o + 3] += q2 - hi * SQ_SPLIT;
    m[o + 4] += nx * DIR_SCALE + RND - RND;
    m[o + 5] += ny * DIR_SCALE + RND - RND;
    m[o + 6] += nz * DIR_SCALE + RND - RND;
    m[o + 7] += py * POS_SCALE + RND - RND;
    m[o + 8] += pz * POS_SCALE + RND - RND;
    this.hist.add(s, q);
    if (t === t && this.budget) this.addTiming(s, o, q, t, tMid);
  }

  /** The budget sums of one sample (slot s, offset o, fixed-point v_r q, time t, window middle tMid). */
  private addTiming(s: number, o: number, q: number, t: number, tMid: number): void {
    const m = this.sums, L = this.lag, lo = s * LAG_STRIDE;
    const tq = t * T_SCALE + RND - RND;
    let th = tq * INV_SPLIT + RND - RND;
    if (th * SQ_SPLIT > tq) th -= 1;
    m[o + 9] += th;
    m[o + 10] += tq - th * SQ_SPLIT;
    const seen = L[lo + 3];
    if (seen >= 1) {
      const p1 = q * L[lo];
      let h1 = p1 * INV_SPLIT + RND - RND;
      if (h1 * SQ_SPLIT > p1) h1 -= 1;
      m[o + 11]++;
      m[o + 12] += h1;
      m[o + 13] += p1 - h1 * SQ_SPLIT;
      const gap = t - L[lo + 2];
      m[o + 14] += (gap > 0 ? gap : -gap) * DT_SCALE + RND - RND;
      if (seen >= 2) {
        const p2 = q * L[lo + 1];
        let h2 = p2 * INV_SPLIT + RND - RND;
        if (h2 * SQ_SPLIT > p2) h2 -= 1;
        m[o + 15]++;
        m[o + 16] += h2;
        m[o + 17] += p2 - h2 * SQ_SPLIT;
      }
    }
    L[lo + 1] = L[lo];
    L[lo] = q;
    L[lo + 2] = t;
    L[lo + 3] = seen >= 2 ? 2 : seen + 1;
    if (t >= tMid) {
      m[o + 18]++;
      m[o + 19] += q;
    }
  }

  /** Add every key of `other` (same key space) into this accumulator; exact. */
  merge(other: CellAccumulator): void {
    if (other.keyCount !== this.keyCount) throw new RangeError(`cannot merge accumulators of ${other.keyCount} and ${this.keyCount} keys`);
    for (let t = 0; t < other.slots; t++) {
      const s = this.slot(other.keyOf[t]);
      for (let f = 0; f < STRIDE; f++) this.sums[s * STRIDE + f] += other.sums[t * STRIDE + f];
      this.hist.mergeSlot(s, other.hist, t);
      // The lag state: a key new here continues from the other's last samples (pairs across the boundary are lost).
      if (this.lag[s * LAG_STRIDE + 3] === 0) for (let f = 0; f < LAG_STRIDE; f++) this.lag[s * LAG_STRIDE + f] = other.lag[t * LAG_STRIDE + f];
    }
  }

  /** Empty every slot for reuse with the same key space (keeps the allocations). */
  reset(): void {
    for (let s = 0; s < this.slots; s++) this.slotOf[this.keyOf[s]] = -1;
    this.sums.fill(0, 0, this.slots * STRIDE);
    this.lag.fill(0, 0, this.slots * LAG_STRIDE);
    this.hist.reset(this.slots);
    this.slots = 0;
  }

  /** Samples held, all keys. */
  total(): number {
    let t = 0;
    for (let s = 0; s < this.slots; s++) t += this.sums[s * STRIDE];
    return t;
  }
}
