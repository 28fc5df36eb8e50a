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
 * a high part of multiples of 2^26 quanta and a remainder, so both sums stay exact); the key's rays, a ray being the
 * successive samples of the key with one time stamp (the range gates of one beam in the cell): their count, the sum
 * and sum of squares of the ray means a (v_r to 2^-10 m/s, rounded to the nearest); within runs (successive rays
 * with the same beam direction less than BURST_GAP_S apart: a dwell on one point) the sums of squared differences
 * of ray means at lags 1, 2 and 3 with their pair counts and the sum of the lag-1 time gaps (2^-10 s); the number of bursts
 * (rays of the key separated by less than BURST_GAP_S: one pass of a scanner through the cell, whatever points it
 * aimed at) and the burst sums of the sampling term (per burst its weight, mean a_b and mean beam vector e_b,
 * summed as described at W_CAP and E_SCALE below); the count and sum of
 * q of the samples in the later half of the window. These feed the sampling statistics of retrieval/sampling.ts.
 * Ray means within runs rather than successive samples: a fixed pattern along the beam or between the points a
 * scanner visits in one cell would otherwise look like a correlation in time. Squares split at 2^26.
 *
 * A ray is open until a sample of the key with another time arrives: the open ray and the last three ray means of
 * the run are per-slot state (`lag`, not sums). Before serialising `sums` (shards), call `closeRays()`: the sums are
 * then complete and the state can be dropped. `closeRays()` closes the open rays (the filter calls it when a window
 * is finished; `merge` calls it on both sides and then forgets the state): pairs across a merge boundary are not
 * formed, so a window split into S shards loses at most k pairs of lag k (k = 1, 2, 3) per key and boundary (and a
 * ray or burst cut by a boundary counts as two): a bias of the structure sums of at most 3 (S - 1) of a key's pairs,
 * and one extra burst per boundary in the burst variance (stated in DEVELOPERS.md).
 */
import { VrHistograms } from '../qc/vrHistogram.ts';

/**
 * The fixed-point constants, as a const enum: the hot paths below compile to immediate values (a module-level
 * constant is loaded and type-checked at each use in optimised code, dozens of times per ray). Exported one by one
 * below under their documented names.
 */
const enum K {
  VR_SCALE = 2 ** 20,
  DIR_SCALE = 2 ** 26,
  POS_SCALE = 2 ** 10,
  SQ_SPLIT = 2 ** 26,
  INV_SPLIT = 1 / K.SQ_SPLIT,
  /** 1.5 * 2^52: x + RND - RND rounds x to the nearest integer (ties to even), exact for |x| < 2^51. */
  RND = 6755399441055744,
  T_SCALE = 2 ** 6,
  DT_SCALE = 2 ** 10,
  A_SCALE = 2 ** 10,
  Q_TO_A = K.A_SCALE / K.VR_SCALE,
  E_SCALE = 2 ** 12,
  EB_SCALE = 2 ** 20,
  W_CAP = 256,
  BURST_GAP_S = 5,
}

/** Fixed-point scale of the radial velocity: q = round(v_r * VR_SCALE). */
export const VR_SCALE: number = K.VR_SCALE;
/** Fixed-point scale of unit-vector components. */
export const DIR_SCALE: number = K.DIR_SCALE;
/** Fixed-point scale of in-plane positions (metres). */
export const POS_SCALE: number = K.POS_SCALE;
/** Split of q^2 into high and low parts. */
export const SQ_SPLIT: number = K.SQ_SPLIT;
/** Samples per key above which a sum could lose exactness. */
export const MAX_SAMPLES_PER_KEY = 2 ** 27;
/** Largest |v_r| the fixed-point sums hold exactly, m/s. */
export const MAX_ABS_VR = 64;

/** Fixed-point scale of sample times (absolute Unix seconds), 1/s. */
export const T_SCALE: number = K.T_SCALE;
/** Fixed-point scale of time gaps between successive samples of a key, 1/s. */
export const DT_SCALE: number = K.DT_SCALE;

/**
 * Fields of a slot in CellAccumulator.sums (stride STRIDE). Every field is a sum of integers, merged by addition.
 * n .. spz: the retrieval's sums. th, tl: time sums (high part in units of 2^26 quanta, remainder). l1n, l1h, l1l,
 * l1d: lag-1 pair count, product sums (high, low), gap sum; l2n, l2h, l2l: lag-2 pair count and product sums;
 * hn, hv: count and sum of q of the samples in the later half of the window; rb: bursts; sw .. Tez: the burst sums
 * (E_SCALE below). An enum, so that the offsets compile to immediate values; `F` is the same as an object.
 */
enum Field {
  n, sv, sv2h, sv2l, sx, sy, sz, spy, spz,
  th, tl, ra, sa, sa2h, sa2l, rb, l1n, l1h, l1l, l1d, l2n, l2h, l2l,
  l3n, l3h, l3l, hn, hv,
  sw, sw2, sT, sT2h, sT2l, swT, swex, swey, swez, swwex, swwey, swwez,
  exxh, exxl, exyh, exyl, exzh, exzl, eyyh, eyyl, eyzh, eyzl, ezzh, ezzl,
  Texh, Texl, Teyh, Teyl, Tezh, Tezl,
}
/** The field offsets of a slot by name (Field): n 0, sv 1, ..., Tezl 57, in this order. */
export const F = Object.freeze(Object.fromEntries(Object.entries(Field).filter(([, v]) => typeof v === 'number'))) as { readonly [N in keyof typeof Field]: number };
/** Fields per slot. */
export const STRIDE: number = Field.Tezl + 1;
/**
 * Burst sums (fields sw .. Tez): per burst b its weight w_b = min(n_b, W_CAP) (n_b its
 * samples), its mean a_b (A_SCALE units, rounded) and mean beam unit vector e_b (E_SCALE units, each component
 * rounded to 2^-12 = 2.4e-4), T_b = w_b a_b and f_b = w_b e_b; summed: w, w^2, T, T^2, w T, f, w f, f f^T, T f (the
 * squares and products split in high and low parts). Each term stays below 2^48, the single ones below 2^32, so
 * the sums are exact up to 2^21 bursts per key (four months of passes 5 s apart in one window).
 */
export const E_SCALE: number = K.E_SCALE;
/** Largest weight of one burst in the burst sums (samples). */
export const W_CAP: number = K.W_CAP;
/** Values of one sample for CellAccumulator.addValues: v_r, beam nx, ny, nz, position py, pz, time t, window middle tMid. */
export const ADD_FIELDS = 8;
/**
 * Gap in a key's rays (s) that starts a new burst: the bursts of a key are the passes of a scanner through its cell,
 * taken as independent of each other by the sampling statistics (retrieval/sampling.ts). @default 5
 */
export const BURST_GAP_S: number = K.BURST_GAP_S;
/** Fixed-point scale of ray means, 1/(m/s). */
export const A_SCALE: number = K.A_SCALE;
/**
 * Per-slot state of the rays (not a sum; not merged), at [slot * LAG_STRIDE + Lag.x]. Q, M: sum of q and count of
 * the open ray; T, NX, NY, NZ: its time and beam direction (those of the last closed ray while no ray is open);
 * RUN: 1 + the number of earlier rays of its run the open (or last) ray pairs with (0 to 3), 0 before the first
 * ray; A1, A2, A3: the last three closed ray means of the run (A_SCALE units); RQ, RM: sum of q and count of the
 * samples of the open burst's closed rays; RX, RY, RZ: their sums of the beam components (EB_SCALE = 2^20 units,
 * integers). A ray is classified (run, burst) when it opens: everything that needs is known then.
 */
const enum Lag { Q, M, T, NX, NY, NZ, RUN, A1, A2, A3, RQ, RM, RX, RY, RZ, STRIDE = 16 }
/** Doubles of per-slot ray state (Lag; 15 used, 128 bytes). */
export const LAG_STRIDE: number = Lag.STRIDE;

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
  /** Per slot, at [slot * LAG_STRIDE]: the state of its open ray, run and burst (LAG_STRIDE; not a sum, not merged). */
  lag = new Float64Array(64 * LAG_STRIDE);
  /** Values of the sample being added by add() (addValues). */
  private readonly values = new Float64Array(ADD_FIELDS);
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
    const v = this.values;
    v[0] = vr; v[1] = nx; v[2] = ny; v[3] = nz; v[4] = py; v[5] = pz; v[6] = t; v[7] = tMid;
    this.addValues(key, v);
  }

  /**
   * add() with the values in an array (v_r, nx, ny, nz, py, pz, t, tMid: ADD_FIELDS), for hot loops: numbers passed
   * to a call that is not inlined are boxed on the heap, once per sample (gigabytes over a campaign).
   */
  addValues(key: number, v: Float64Array): void {
    const vr = v[0], nx = v[1], ny = v[2], nz = v[3], py = v[4], pz = v[5], t = v[6], tMid = v[7];
    let s = this.slotOf[key];
    if (s < 0) s = this.slot(key);
    // Rounding to the nearest integer (ties to even) by adding and removing 1.5 * 2^52 (K.RND): exact for |x| < 2^51
    // and several times faster than Math.round; every value here is below 2^27.
    const q = vr * K.VR_SCALE + K.RND - K.RND;
    const q2 = q * q;
    const hi = Math.floor(q2 * K.INV_SPLIT); // exact (a power-of-two scale); branch-free, unlike a rounding and a correction
    const m = this.sums, o = s * STRIDE;
    m[o + Field.n]++;
    m[o + Field.sv] += q;
    m[o + Field.sv2h] += hi;
    m[o + Field.sv2l] += q2 - hi * K.SQ_SPLIT;
    m[o + Field.sx] += nx * K.DIR_SCALE + K.RND - K.RND;
    m[o + Field.sy] += ny * K.DIR_SCALE + K.RND - K.RND;
    m[o + Field.sz] += nz * K.DIR_SCALE + K.RND - K.RND;
    m[o + Field.spy] += py * K.POS_SCALE + K.RND - K.RND;
    m[o + Field.spz] += pz * K.POS_SCALE + K.RND - K.RND;
    this.hist.add(s, q);
    if (t === t && this.budget) {
      // The budget sums, inline (doubles passed to a call that is not inlined are boxed on the heap, once per
      // sample; slot offsets are small integers and are not). The samples of a ray share its time: their time sums
      // are added when the ray closes.
      const L = this.lag, lo = s * Lag.STRIDE;
      const M = L[lo + Lag.M];
      if (M > 0 && L[lo + Lag.T] === t) {
        // Another sample of the open ray.
        L[lo + Lag.Q] += q;
        L[lo + Lag.M] = M + 1;
      } else {
        // A new time stamp: close the open ray, if any, and open one with this sample.
        if (M > 0) this.closeRay(o, lo);
        // Its run and burst, against the last closed ray (time and direction still in T, NX, NY, NZ): a new run
        // after another beam direction, a gap of more than BURST_GAP_S (the next pass) or before the first ray; a
        // new burst after such a gap or when none is open (the first ray, or after closeRays()).
        const gap = t - L[lo + Lag.T];
        const far = gap > K.BURST_GAP_S;
        let seen = L[lo + Lag.RUN]; // 1 + the pairs the last ray formed: the earlier rays this one can pair with
        if (seen > 3) seen = 3;
        if (seen === 0 || far || nx !== L[lo + Lag.NX] || ny !== L[lo + Lag.NY] || nz !== L[lo + Lag.NZ]) seen = 0;
        if (seen >= 1) {
          // The pair counts and the lag-1 gap now; the squared differences of the ray means when the ray closes.
          m[o + Field.l1n]++;
          m[o + Field.l1d] += (gap > 0 ? gap : -gap) * K.DT_SCALE + K.RND - K.RND;
          if (seen >= 2) {
            m[o + Field.l2n]++;
            if (seen >= 3) m[o + Field.l3n]++;
          }
        }
        if (far || L[lo + Lag.RM] === 0) {
          this.closeRun(o, lo);
          m[o + Field.rb]++;
        }
        L[lo + Lag.T] = t;
        L[lo + Lag.NX] = nx; L[lo + Lag.NY] = ny; L[lo + Lag.NZ] = nz;
        L[lo + Lag.Q] = q;
        L[lo + Lag.M] = 1;
        L[lo + Lag.RUN] = seen + 1;
      }
      if (t >= tMid) {
        m[o + Field.hn]++;
        m[o + Field.hv] += q;
      }
    }
  }

  /**
   * Close the open ray of the slot at sums offset o and lag offset lo (it has samples): its mean joins the ray sums
   * and the burst's, and pairs with the rays of its run its opening counted (Lag.RUN). Leaves the ray's sum and
   * count (Q, M) for the caller to reset or overwrite, its time and direction for the next ray's classification.
   */
  private closeRay(o: number, lo: number): void {
    const m = this.sums, L = this.lag;
    const Q = L[lo + Lag.Q], M = L[lo + Lag.M], T = L[lo + Lag.T];
    const nx = L[lo + Lag.NX], ny = L[lo + Lag.NY], nz = L[lo + Lag.NZ];
    // The ray mean (A_SCALE units, rounded); a ray of one sample needs no division (Q / 1 = Q exactly).
    const a = (M === 1 ? Q * K.Q_TO_A : (Q / M) * K.Q_TO_A) + K.RND - K.RND;
    // Time sums of the ray's M samples: M times the high part and the remainder of the time (exact integers).
    const tq = T * K.T_SCALE + K.RND - K.RND;
    const th = Math.floor(tq * K.INV_SPLIT);
    m[o + Field.th] += M * th;
    m[o + Field.tl] += M * (tq - th * K.SQ_SPLIT);
    m[o + Field.ra]++;
    m[o + Field.sa] += a;
    splitAdd(m, o + Field.sa2h, a * a);
    L[lo + Lag.RQ] += Q;
    L[lo + Lag.RM] += M;
    // The ray's beam (one direction per time stamp), weighted by its samples, for the burst's mean beam vector.
    L[lo + Lag.RX] += M * (nx * K.EB_SCALE + K.RND - K.RND);
    L[lo + Lag.RY] += M * (ny * K.EB_SCALE + K.RND - K.RND);
    L[lo + Lag.RZ] += M * (nz * K.EB_SCALE + K.RND - K.RND);
    const seen = L[lo + Lag.RUN] - 1;
    if (seen >= 1) {
      const a1 = L[lo + Lag.A1];
      const d1 = a - a1;
      splitAdd(m, o + Field.l1h, d1 * d1);
      if (seen >= 2) {
        const a2 = L[lo + Lag.A2];
        const d2 = a - a2;
        splitAdd(m, o + Field.l2h, d2 * d2);
        if (seen >= 3) {
          const d3 = a - L[lo + Lag.A3];
          splitAdd(m, o + Field.l3h, d3 * d3);
        }
        L[lo + Lag.A3] = a2;
      }
      L[lo + Lag.A2] = a1;
    }
    // The last ray means of the run: A2 and A3 are read only with 2 and 3 earlier rays of the run.
    L[lo + Lag.A1] = a;
  }

  /**
   * Close the open burst of the slot at o, lo: its weight w_b, sample mean a_b (2^-10 m/s) and mean beam vector e_b
   * (E_SCALE) join the burst sums (E_SCALE docblock), from which the sampling statistics take the cluster-robust
   * variance of the key's mean with the part the beam direction explains removed (retrieval/sampling.ts).
   */
  private closeRun(o: number, lo: number): void {
    const m = this.sums, L = this.lag;
    const M = L[lo + Lag.RM];
    if (M === 0) return;
    const a = (L[lo + Lag.RQ] / M) * K.Q_TO_A + K.RND - K.RND;
    const k = K.E_SCALE / (K.EB_SCALE * M);
    const ex = L[lo + Lag.RX] * k + K.RND - K.RND, ey = L[lo + Lag.RY] * k + K.RND - K.RND, ez = L[lo + Lag.RZ] * k + K.RND - K.RND;
    const w = M < K.W_CAP ? M : K.W_CAP;
    const T = w * a, fx = w * ex, fy = w * ey, fz = w * ez;
    m[o + Field.sw] += w; m[o + Field.sw2] += w * w; m[o + Field.sT] += T;
    splitAdd(m, o + Field.sT2h, T * T);
    m[o + Field.swT] += w * T;
    m[o + Field.swex] += fx; m[o + Field.swey] += fy; m[o + Field.swez] += fz;
    m[o + Field.swwex] += w * fx; m[o + Field.swwey] += w * fy; m[o + Field.swwez] += w * fz;
    splitAdd(m, o + Field.exxh, fx * fx); splitAdd(m, o + Field.exyh, fx * fy); splitAdd(m, o + Field.exzh, fx * fz);
    splitAdd(m, o + Field.eyyh, fy * fy); splitAdd(m, o + Field.eyzh, fy * fz); splitAdd(m, o + Field.ezzh, fz * fz);
    splitAdd(m, o + Field.Texh, T * fx); splitAdd(m, o + Field.Teyh, T * fy); splitAdd(m, o + Field.Tezh, T * fz);
    L[lo + Lag.RQ] = 0;
    L[lo + Lag.RM] = 0;
    L[lo + Lag.RX] = 0; L[lo + Lag.RY] = 0; L[lo + Lag.RZ] = 0;
  }

  /** Close every open ray and run (before the budget sums are read, and before a merge). */
  closeRays(): void {
    if (!this.budget) return;
    for (let s = 0; s < this.slots; s++) this.closeOpen(s);
  }

  /** Close slot s's open ray (then empty) and burst. */
  private closeOpen(s: number): void {
    const L = this.lag, lo = s * Lag.STRIDE, o = s * STRIDE;
    if (L[lo + Lag.M] > 0) {
      this.closeRay(o, lo);
      L[lo + Lag.Q] = 0;
      L[lo + Lag.M] = 0;
    }
    this.closeRun(o, lo);
  }

  /**
   * End the sequences of instrument `ins` (keys key % instrumentCount === ins): close its open rays and bursts and
   * forget the run state, so that its next sample starts afresh, as after a merge. The ingest calls it when a file
   * ends: every run, single or sharded by files, then forms the same sequences.
   */
  endSequences(ins: number): void {
    if (!this.budget) return;
    const I = this.instrumentCount;
    for (let s = 0; s < this.slots; s++) {
      if (this.keyOf[s] % I !== ins) continue;
      this.closeOpen(s);
      this.lag.fill(0, s * LAG_STRIDE, (s + 1) * LAG_STRIDE);
    }
  }

  /** Add every key of `other` (same key space) into this accumulator; exact. */
  merge(other: CellAccumulator): void {
    if (other.keyCount !== this.keyCount) throw new RangeError(`cannot merge accumulators of ${other.keyCount} and ${this.keyCount} keys`);
    this.closeRays();
    other.closeRays();
    this.lag.fill(0, 0, this.slots * LAG_STRIDE);
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

/** Add the integer x (|x| < 2^52) to m[at] (multiples of SQ_SPLIT) and m[at + 1] (remainder in [0, SQ_SPLIT)). */
function splitAdd(m: Float64Array, at: number, x: number): void {
  const h = Math.floor(x * K.INV_SPLIT); // exact: x * 2^-26 is exact, and so is its floor
  m[at] += h;
  m[at + 1] += x - h * K.SQ_SPLIT;
}
