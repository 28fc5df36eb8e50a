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

/** Fields of a slot in CellAccumulator.sums (stride STRIDE): one cache line or two per slot. */
export const F = { n: 0, sv: 1, sv2h: 2, sv2l: 3, sx: 4, sy: 5, sz: 6, spy: 7, spz: 8 } as const;
export const STRIDE = 9;

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
  readonly hist = new VrHistograms();

  constructor(
    /** Number of keys (cells of all planes times instruments). */
    readonly keyCount: number,
    readonly instrumentCount: number,
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
   * position (py, pz) in metres.
   */
  add(key: number, vr: number, nx: number, ny: number, nz: number, py: number, pz: number): void {
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
  }

  /** Add every key of `other` (same key space) into this accumulator; exact. */
  merge(other: CellAccumulator): void {
    if (other.keyCount !== this.keyCount) throw new RangeError(`cannot merge accumulators of ${other.keyCount} and ${this.keyCount} keys`);
    for (let t = 0; t < other.slots; t++) {
      const s = this.slot(other.keyOf[t]);
      for (let f = 0; f < STRIDE; f++) this.sums[s * STRIDE + f] += other.sums[t * STRIDE + f];
      this.hist.mergeSlot(s, other.hist, t);
    }
  }

  /** Empty every slot for reuse with the same key space (keeps the allocations). */
  reset(): void {
    for (let s = 0; s < this.slots; s++) this.slotOf[this.keyOf[s]] = -1;
    this.sums.fill(0, 0, this.slots * STRIDE);
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
