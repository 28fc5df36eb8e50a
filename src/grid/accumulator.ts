/**
 * The currency between reading and solving: mergeable per-key accumulators. A key is one (plane cell, instrument)
 * of one averaging window (key = (cellOffset[plane] + cell) * instrumentCount + instrument, the order the retrieval
 * uses). Per key: the sample count, sums of the radial velocity and of its square, of the beam unit vector (rotor
 * frame of the window) and of the in-plane position, plus a radial-velocity histogram for the robust filter
 * (qc/vrHistogram.ts). Memory grows with the keys that received samples, never with the samples.
 *
 * Exact merging: every sum is a sum of integers (fixed-point values, scales below) held in doubles, exact while it
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

export class CellAccumulator {
  /** key -> slot, or -1 when the key has no sample yet. */
  readonly slotOf: Int32Array;
  /** slot -> key. */
  keyOf = new Int32Array(64);
  slots = 0;
  n = new Float64Array(64);
  /** Sum of q = round(v_r * VR_SCALE). */
  sv = new Float64Array(64);
  /** Sum of floor(q^2 / SQ_SPLIT) and of the remainders. */
  sv2h = new Float64Array(64);
  sv2l = new Float64Array(64);
  /** Sums of round(n * DIR_SCALE), rotor-frame beam unit vector. */
  sx = new Float64Array(64);
  sy = new Float64Array(64);
  sz = new Float64Array(64);
  /** Sums of round(p * POS_SCALE), in-plane position (y; z or x). */
  spy = new Float64Array(64);
  spz = new Float64Array(64);
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
    const cap = this.n.length * 2;
    const g = (a: Float64Array) => {
      const b = new Float64Array(cap);
      b.set(a);
      return b;
    };
    const k = new Int32Array(cap);
    k.set(this.keyOf);
    this.keyOf = k;
    this.n = g(this.n); this.sv = g(this.sv); this.sv2h = g(this.sv2h); this.sv2l = g(this.sv2l);
    this.sx = g(this.sx); this.sy = g(this.sy); this.sz = g(this.sz); this.spy = g(this.spy); this.spz = g(this.spz);
    this.hist.ensure(cap);
  }

  /** The slot of a key, created when new. */
  slot(key: number): number {
    let s = this.slotOf[key];
    if (s < 0) {
      if (this.slots === this.n.length) this.grow();
      s = this.slots++;
      this.slotOf[key] = s;
      this.keyOf[s] = key;
    }
    return s;
  }

  /**
   * Add one sample: radial velocity v_r (m/s, positive away), rotor-frame beam unit vector (nx, ny, nz), in-plane
   * position (py, pz) in metres.
   */
  add(key: number, vr: number, nx: number, ny: number, nz: number, py: number, pz: number): void {
    const s = this.slot(key);
    const q = Math.round(vr * VR_SCALE);
    const q2 = q * q;
    const hi = Math.floor(q2 / SQ_SPLIT);
    this.n[s]++;
    this.sv[s] += q;
    this.sv2h[s] += hi;
    this.sv2l[s] += q2 - hi * SQ_SPLIT;
    this.sx[s] += Math.round(nx * DIR_SCALE);
    this.sy[s] += Math.round(ny * DIR_SCALE);
    this.sz[s] += Math.round(nz * DIR_SCALE);
    this.spy[s] += Math.round(py * POS_SCALE);
    this.spz[s] += Math.round(pz * POS_SCALE);
    this.hist.add(s, q);
  }

  /** Add every key of `other` (same key space) into this accumulator; exact. */
  merge(other: CellAccumulator): void {
    if (other.keyCount !== this.keyCount) throw new RangeError(`cannot merge accumulators of ${other.keyCount} and ${this.keyCount} keys`);
    for (let t = 0; t < other.slots; t++) {
      const s = this.slot(other.keyOf[t]);
      this.n[s] += other.n[t];
      this.sv[s] += other.sv[t];
      this.sv2h[s] += other.sv2h[t];
      this.sv2l[s] += other.sv2l[t];
      this.sx[s] += other.sx[t]; this.sy[s] += other.sy[t]; this.sz[s] += other.sz[t];
      this.spy[s] += other.spy[t]; this.spz[s] += other.spz[t];
      this.hist.mergeSlot(s, other.hist, t);
    }
  }

  /** Samples held, all keys. */
  total(): number {
    let t = 0;
    for (let s = 0; s < this.slots; s++) t += this.n[s];
    return t;
  }
}
