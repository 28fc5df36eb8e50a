/**
 * Mergeable radial-velocity histograms, one per accumulator slot (window, cell, instrument), from which the robust
 * filter takes its median and MAD without holding the samples.
 *
 * Values arrive as fixed-point integers q = round(v_r * 2^20) (grid/accumulator.ts). At level L a bin holds the
 * values with floor(q / 2^(13 + L)) equal: bins of width delta_L = 2^(L - 7) m/s (0.0078 m/s at level 0) with edges
 * at multiples of delta_L. A slot holds at most MAX_DISTINCT distinct bins: beyond that it moves up a level (pairs
 * of bins merge) until its bins fit, so memory per slot is bounded whatever the number of samples.
 *
 * Storage (does not change the content): the bulk of a slot's bins in a dense array over a contiguous bin range
 * (fast to update), the rest (far outliers, junk) in a small open-addressing table, so a few far values neither
 * coarsen the bins nor make the dense array wide. The dense range starts at DENSE_START bins around the first value
 * and grows as values arrive, up to DENSE_MAX bins (and no more than a few times the slot's sample count); when
 * most bins end up in the table (the first values were junk) it is moved to the median.
 *
 * Exactness of merging: counts are integers and bin edges are global, so the histogram of a set of samples does not
 * depend on the order in which they arrived nor on how they were split into parts: a slot ends at the smallest level
 * at which its distinct bins fit (a slot only moves up when they no longer fit, and the distinct bins of a growing
 * set only grow), and merging brings both parts to the higher level, then moves up again while the union does not
 * fit. Where a bin is stored (dense or table) does not matter to any result.
 *
 * Statistics (robustStats): each value is represented by the centre of its bin, so the median is within delta/2 of
 * the exact sample median and the MAD within delta of the exact MAD (delta = the slot's bin width; tested in
 * test/qc-histogram.test.ts against the exact sample statistics of qc/robust.ts).
 */

/**
 * The constants of the per-sample path (add) as a const enum, written into the code by the build (a module-level
 * constant is loaded and checked at every use in optimised code); exported one by one below.
 */
const enum H { FINE_SHIFT = 13, MAX_DISTINCT = 4096 }
/** Distinct bins per slot at most; more moves the slot up a level. */
export const MAX_DISTINCT: number = H.MAX_DISTINCT;
/** Widest dense range of one slot, bins. */
export const DENSE_MAX = 4096;
/**
 * Bits below the finest bin: q >> FINE_SHIFT is the level-0 bin (width 2^-7 m/s = 0.0078 m/s for q in units of 2^-20
 * m/s; instruments report radial velocities to 0.01 m/s or coarser). Finer bins (2^-9 m/s before) made every window
 * walk four times the bins for the same samples (the robust filter's statistics took 0.2 s of a 2.7 s run on the
 * benchmark) and the histograms four times the memory, for a median that moved by less than 0.004 m/s.
 */
export const FINE_SHIFT: number = H.FINE_SHIFT;
/** Bin width at level 0, m/s. */
export const FINE_WIDTH = 2 ** (FINE_SHIFT - 20);
const MAX_LEVEL = 20;
const EMPTY = new Uint32Array(0);
/** Marks a recycled dense array whose range is not placed yet (no bin index can be this low). */
const NEW_RANGE = -(2 ** 31);
/** lo/hi of a slot with no bin in its dense array. */
const NO_LO = 2 ** 31 - 1, NO_HI = -(2 ** 31);

/** Bins of a new dense range (8 m/s at level 0: the bulk of a cell's radial velocities over a window). */
const DENSE_START = 1024;

/** Widest dense range for a slot holding `total` samples. */
function denseLimit(total: number): number {
  return Math.min(DENSE_MAX, Math.max(DENSE_START, 4 * total));
}

/** Histograms of many slots. A slot's storage is allocated when it receives its first value. */
export class VrHistograms {
  /** Dense counts per slot over bins [base, base + dense.length). */
  dense: Uint32Array[] = [];
  base = new Int32Array(0);
  /** Table of the bins outside the dense range: keys and counts (count 0 = empty entry), size a power of two. */
  tkeys: (Int32Array | null)[] = [];
  tcounts: (Uint32Array | null)[] = [];
  /** Entries used in each table. */
  tused = new Int32Array(0);
  level = new Uint8Array(0);
  /** Distinct bins per slot (dense and table). */
  distinct = new Int32Array(0);
  /** Samples per slot (limits the dense width for slots with few samples). */
  total = new Float64Array(0);
  /**
   * Bounds of the non-empty bins in each slot's dense array (bin indices; lo <= every such bin <= hi; NO_LO, NO_HI
   * when there is none), so the statistics walk that span rather than the whole array. Kept wherever a dense count
   * becomes non-zero; they may be wider than the span (after bins moved to the table), never narrower.
   */
  lo = new Int32Array(0);
  hi = new Int32Array(0);

  /** Make room for slots [0, n). */
  ensure(n: number): void {
    if (n <= this.level.length) return;
    const cap = Math.max(n, this.level.length * 2, 64);
    const grow = <T extends Int32Array | Uint8Array | Float64Array>(a: T): T => {
      const b = new (a.constructor as new (n: number) => T)(cap);
      b.set(a);
      return b;
    };
    const old = this.level.length;
    this.lo = grow(this.lo).fill(NO_LO, old); this.hi = grow(this.hi).fill(NO_HI, old);
    this.base = grow(this.base); this.tused = grow(this.tused); this.level = grow(this.level);
    this.distinct = grow(this.distinct); this.total = grow(this.total);
    while (this.dense.length < cap) { this.dense.push(EMPTY); this.tkeys.push(null); this.tcounts.push(null); }
  }

  /**
   * Empty slots [0, n) for reuse (a window's accumulator recycled for the next window): counts are zeroed, the
   * dense arrays kept (their range is placed anew by the next first value), tables dropped.
   */
  reset(n: number): void {
    for (let s = 0; s < n; s++) {
      if (this.total[s] === 0) continue;
      const d = this.dense[s];
      if (d.length) {
        d.fill(0);
        this.base[s] = NEW_RANGE;
      }
      this.tkeys[s] = null; this.tcounts[s] = null; this.tused[s] = 0;
      this.level[s] = 0; this.distinct[s] = 0; this.total[s] = 0;
      this.lo[s] = NO_LO; this.hi[s] = NO_HI;
    }
  }

  /** Add one value (fixed-point q, |q| < 2^31) to slot s. */
  add(s: number, q: number): void {
    this.total[s]++;
    const bin = q >> (H.FINE_SHIFT + this.level[s]);
    const d = this.dense[s];
    const j = bin - this.base[s];
    if (j >= 0 && j < d.length) {
      if (d[j]++ === 0) {
        if (bin < this.lo[s]) this.lo[s] = bin;
        if (bin > this.hi[s]) this.hi[s] = bin;
        if (++this.distinct[s] > H.MAX_DISTINCT) this.coarsen(s, 1);
      }
      return;
    }
    this.addBin(s, bin, 1);
  }

  /** True while a slot is rebuilt: no level change may start inside (coarsen checks again after it). */
  private rebuilding = false;

  /** Add `count` to bin `bin` (at the slot's current level) of slot s, growing the dense range or the table. */
  private addBin(s: number, bin: number, count: number): void {
    let d = this.dense[s];
    if (this.base[s] === NEW_RANGE) this.base[s] = bin - (d.length >> 1); // a recycled, empty dense array
    let j = bin - this.base[s];
    if (!(j >= 0 && j < d.length)) {
      // Grow the dense range to take the bin, when the new range stays within the limits; else use the table.
      const lo = d.length ? Math.min(this.base[s], bin) : bin;
      const hi = d.length ? Math.max(this.base[s] + d.length - 1, bin) : bin;
      const span = hi - lo + 1;
      const limit = denseLimit(this.total[s]);
      if (span <= limit) {
        const want = Math.min(limit, Math.max(span + (span >> 1), DENSE_START));
        const slack = want - span;
        const newBase = d.length && bin < this.base[s] ? lo - slack : d.length ? lo : bin - (slack >> 1);
        const nd = new Uint32Array(want);
        if (d.length) nd.set(d, this.base[s] - newBase);
        this.dense[s] = d = nd;
        this.base[s] = newBase;
        j = bin - newBase;
        this.absorbTable(s);
      } else {
        this.tableAdd(s, bin, count);
        return;
      }
    }
    const was = d[j];
    d[j] += count;
    if (bin < this.lo[s]) this.lo[s] = bin;
    if (bin > this.hi[s]) this.hi[s] = bin;
    if (was === 0) this.newBin(s); // after the count is in: a level change rebuilds from the stored counts
  }

  /** Move the table's bins that now lie in the dense range into it (a bin is stored in one place only). */
  private absorbTable(s: number): void {
    const k = this.tkeys[s], c = this.tcounts[s];
    if (!k || !c || this.tused[s] === 0) return;
    const d = this.dense[s], b0 = this.base[s];
    let moved = 0;
    for (let i = 0; i < k.length; i++) {
      if (c[i] === 0) continue;
      const j = k[i] - b0;
      if (j >= 0 && j < d.length) {
        d[j] += c[i]; c[i] = 0; moved++;
        if (k[i] < this.lo[s]) this.lo[s] = k[i];
        if (k[i] > this.hi[s]) this.hi[s] = k[i];
      }
    }
    if (moved) {
      this.tused[s] -= moved;
      this.rehashTable(s, k.length); // open addressing: rebuild instead of leaving holes in probe chains
    }
  }

  private newBin(s: number): void {
    if (++this.distinct[s] > MAX_DISTINCT && !this.rebuilding) this.coarsen(s, 1);
  }

  private tableAdd(s: number, bin: number, count: number): void {
    let k = this.tkeys[s], c = this.tcounts[s];
    if (k === null || c === null) {
      k = this.tkeys[s] = new Int32Array(16);
      c = this.tcounts[s] = new Uint32Array(16);
    }
    const mask = k.length - 1;
    let h = (Math.imul(bin, 0x9e3779b1) >>> 0) & mask;
    for (;;) {
      if (c[h] === 0) break;
      if (k[h] === bin) { c[h] += count; return; }
      h = (h + 1) & mask;
    }
    k[h] = bin;
    c[h] = count;
    if (2 * ++this.tused[s] > k.length) this.rehashTable(s, k.length * 2);
    this.newBin(s);
    // Most bins in the table: the dense range sits away from the bulk (its first values were junk): move it.
    const t = this.tused[s];
    if (!this.rebuilding && t >= 64 && (t & (t - 1)) === 0 && 2 * t > this.distinct[s]) this.recentre(s);
  }

  /** Rebuild slot s with its dense range around the median bin (storage only: the counts do not change). */
  private recentre(s: number): void {
    const { bins, counts } = this.sorted(s);
    let n = 0;
    for (let i = 0; i < counts.length; i++) n += counts[i];
    let cum = 0, med = bins[0];
    for (let i = 0; i < bins.length; i++) {
      cum += counts[i];
      if (cum * 2 >= n) { med = bins[i]; break; }
    }
    const outer = this.rebuilding;
    this.rebuilding = true;
    const limit = denseLimit(this.total[s]);
    this.dense[s] = new Uint32Array(limit);
    this.base[s] = med - (limit >> 1);
    this.tkeys[s] = null; this.tcounts[s] = null; this.tused[s] = 0; this.distinct[s] = 0;
    this.lo[s] = NO_LO; this.hi[s] = NO_HI;
    for (let i = 0; i < bins.length; i++) this.addBin(s, bins[i], counts[i]);
    this.rebuilding = outer;
  }

  private rehashTable(s: number, size: number): void {
    const k = this.tkeys[s]!, c = this.tcounts[s]!;
    const nk = new Int32Array(size), nc = new Uint32Array(size);
    const mask = size - 1;
    for (let i = 0; i < k.length; i++) {
      if (c[i] === 0) continue;
      let h = (Math.imul(k[i], 0x9e3779b1) >>> 0) & mask;
      while (nc[h] !== 0) h = (h + 1) & mask;
      nk[h] = k[i]; nc[h] = c[i];
    }
    this.tkeys[s] = nk; this.tcounts[s] = nc;
  }

  /** Move slot s up `shift` levels (bin b -> b >> shift), further while its bins do not fit. */
  private coarsen(s: number, shift: number): void {
    this.rebuild(s, shift);
    while (this.distinct[s] > MAX_DISTINCT && this.level[s] < MAX_LEVEL) this.rebuild(s, 1);
  }

  private rebuild(s: number, shift: number): void {
    const d = this.dense[s], b0 = this.base[s], k = this.tkeys[s], c = this.tcounts[s];
    const outer = this.rebuilding;
    this.rebuilding = true;
    this.dense[s] = EMPTY; this.base[s] = 0; this.tkeys[s] = null; this.tcounts[s] = null; this.tused[s] = 0;
    this.distinct[s] = 0;
    this.lo[s] = NO_LO; this.hi[s] = NO_HI;
    this.level[s] += shift;
    for (let j = 0; j < d.length; j++) if (d[j] !== 0) this.addBin(s, (b0 + j) >> shift, d[j]);
    if (k && c) for (let i = 0; i < k.length; i++) if (c[i] !== 0) this.addBin(s, k[i] >> shift, c[i]);
    this.rebuilding = outer;
  }

  /** Add every count of `other`'s slot t into this slot s (exact; see the file header). */
  mergeSlot(s: number, other: VrHistograms, t: number): void {
    if (other.total[t] === 0) return;
    const ol = other.level[t];
    if (this.total[s] === 0) this.level[s] = ol;
    else if (this.level[s] < ol) this.coarsen(s, ol - this.level[s]);
    this.total[s] += other.total[t];
    const { bins, counts } = other.sorted(t);
    for (let i = 0; i < bins.length; i++) {
      // Recomputed per bin: adding a bin can move this slot up a level.
      this.addBin(s, bins[i] >> (this.level[s] - ol), counts[i]);
    }
  }

  /**
   * Set an empty slot s to the given content: its level and its bins (ascending, at that level) with their counts,
   * as `sorted` returns them. Used to read a stored histogram back (grid/accumulatorState.ts); the storage may differ
   * from the original's, the content and every result do not.
   */
  restoreSlot(s: number, level: number, bins: ArrayLike<number>, counts: ArrayLike<number>): void {
    if (this.total[s] !== 0) throw new RangeError('restoreSlot needs an empty slot');
    this.level[s] = level;
    let n = 0;
    for (let i = 0; i < counts.length; i++) n += counts[i];
    this.total[s] = n;
    const m = bins.length;
    if (m === 0) return;
    // Usually every bin fits one dense range (as add() would have laid it out): filled directly, in one pass.
    const span = bins[m - 1] - bins[0] + 1, limit = denseLimit(n);
    if (span <= limit && m <= MAX_DISTINCT) {
      // A recycled slot's dense array (zeroed by reset) is reused when it is wide enough, as add() reuses it.
      let d = this.dense[s];
      if (d.length < span) d = new Uint32Array(Math.min(limit, Math.max(span + (span >> 1), DENSE_START)));
      const base = bins[0] - ((d.length - span) >> 1);
      for (let i = 0; i < m; i++) d[bins[i] - base] = counts[i];
      this.dense[s] = d;
      this.base[s] = base;
      this.tkeys[s] = null; this.tcounts[s] = null; this.tused[s] = 0;
      this.distinct[s] = m;
      this.lo[s] = bins[0]; this.hi[s] = bins[m - 1];
      return;
    }
    for (let i = 0; i < m; i++) this.addBin(s, bins[i] >> (this.level[s] - level), counts[i]);
  }

  /** Bin width of slot s, m/s. */
  width(s: number): number {
    return FINE_WIDTH * 2 ** this.level[s];
  }

  /** The slot's bins in ascending order with their counts (allocates; for the filter, merging and tests). */
  sorted(s: number): { bins: Int32Array; counts: Float64Array } {
    const d = this.dense[s], b0 = this.base[s], k = this.tkeys[s], c = this.tcounts[s];
    const n = this.distinct[s];
    const bins = new Int32Array(n), counts = new Float64Array(n);
    // Table entries sorted, then merged with the (already sorted) dense bins; the two never share a bin.
    const tb: number[] = [];
    if (k && c) for (let i = 0; i < k.length; i++) if (c[i] !== 0) tb.push(i);
    tb.sort((x, y) => k![x] - k![y]);
    let j = 0, p = 0, m = 0;
    while (j < d.length && d[j] === 0) j++;
    while (j < d.length || p < tb.length) {
      if (p >= tb.length || (j < d.length && b0 + j < k![tb[p]])) {
        bins[m] = b0 + j; counts[m++] = d[j];
        j++;
        while (j < d.length && d[j] === 0) j++;
      } else {
        bins[m] = k![tb[p]]; counts[m++] = c![tb[p]];
        p++;
      }
    }
    return { bins, counts };
  }
}

/** Median, robust scale and the kept range of one slot (see robustStats). */
export interface HistogramStats {
  n: number;
  median: number;
  /** 1.4826 * MAD, or the mean-absolute-deviation fallback when the MAD is 0 (qc/robust.ts). */
  sigma: number;
  /** Samples kept by |v - median| <= k * sigma (bin centres), and rejected. */
  kept: number;
  rejected: number;
  /** Sum and sum of squares of the rejected samples' bin centres, m/s and m^2/s^2. */
  rejectedSum: number;
  rejectedSumSq: number;
  /** Bin width of the slot, m/s. */
  width: number;
}

const MAD_TO_SIGMA = 1.482602218505602;
const MEANAD_TO_SIGMA = 1.2533141373155003;

/**
 * Robust statistics of slot s: the median of the bin centres (mean of the two middle ones for an even count), the
 * MAD about it (the same rule), the scale sigma = 1.4826 * MAD (fallback 1.2533 * mean absolute deviation when the
 * MAD is 0, as qc/robust.ts does), and the bins farther than k * sigma from the median as rejected.
 * k = Infinity keeps everything.
 */
export function robustStats(h: VrHistograms, s: number, k: number, out: HistogramStats): HistogramStats {
  // A slot whose bins are all in its dense array (the common case) is walked in place: no sorted copy (two arrays
  // per slot and window); the same steps in the same order as over the sorted bins.
  // Every sample of such a slot is in its dense array, so its count is the slot's total (no walk to sum it).
  if (h.tkeys[s] === null || h.tused[s] === 0) {
    // Only the span [lo, hi] of the dense array can hold counts (clamped: an empty slot has lo > hi).
    const d = h.dense[s], base = h.base[s];
    const j0 = Math.max(0, h.lo[s] - base), j1 = Math.min(d.length, h.hi[s] - base + 1);
    return binStats(d, base, null, h.width(s), k, out, h.total[s], j0, Math.max(j0, j1));
  }
  return sortedStats(h, s, k, out);
}

/** robustStats through the slot's bins in ascending order (sorted()): any slot; robustStats uses it when some bins are in the table. */
export function sortedStats(h: VrHistograms, s: number, k: number, out: HistogramStats): HistogramStats {
  const { bins, counts } = h.sorted(s);
  // Counts are integers below 2^32: as Uint32Array, so binStats sees one array type (one compiled form).
  return binStats(Uint32Array.from(counts), 0, bins, h.width(s), k, out);
}

/**
 * Scratch of binStats, reused across slots and windows: the non-empty entries of the slot being summarised, in
 * ascending order, as bin index and count (grown when a slot has more; never shrunk).
 */
let nzBin = new Int32Array(1024);
let nzCount = new Float64Array(1024);

/** Room for m non-empty entries in the scratch. */
function nzEnsure(m: number): void {
  if (m <= nzBin.length) return;
  const cap = Math.max(m, 2 * nzBin.length);
  nzBin = new Int32Array(cap);
  nzCount = new Float64Array(cap);
}

/**
 * The statistics of robustStats over ascending bins: entry j has count counts[j] (empty entries skipped) and bin
 * index bins[j], or base + j without `bins` (a dense array); w the bin width, m/s.
 *
 * A dense array is mostly empty (a few dozen samples of a window spread over a thousand bins or more): its
 * non-empty entries are first gathered, in ascending order, into a scratch list (empty entries skipped four at a
 * time), and every step below walks that list, in the same order and with the same arithmetic as a walk over the
 * whole array would, so the results are the same bit for bit.
 */
function binStats(counts: Uint32Array, base: number, bins: Int32Array | null, w: number, k: number, out: HistogramStats, total = -1, from = 0, to = counts.length): HistogramStats {
  out.n = out.kept = out.rejected = 0;
  out.median = out.sigma = NaN;
  out.rejectedSum = out.rejectedSumSq = 0;
  out.width = w;
  const len = to;
  nzEnsure(len);
  const B = nzBin, C = nzCount;
  let m = 0, sum = 0;
  if (bins) {
    for (let j = from; j < len; j++) {
      const c = counts[j];
      if (c === 0) continue;
      B[m] = bins[j]; C[m++] = c; sum += c;
    }
  } else {
    let j = from;
    for (; j + 4 <= len; j += 4) {
      if ((counts[j] | counts[j + 1] | counts[j + 2] | counts[j + 3]) === 0) continue;
      for (let i = j; i < j + 4; i++) {
        const c = counts[i];
        if (c === 0) continue;
        B[m] = base + i; C[m++] = c; sum += c;
      }
    }
    for (; j < len; j++) {
      const c = counts[j];
      if (c === 0) continue;
      B[m] = base + j; C[m++] = c; sum += c;
    }
  }
  const n = total < 0 ? sum : total;
  out.n = n;
  if (n === 0) return out;
  // Median: the values of rank (n-1)/2 and n/2 (0-based; the same for odd n).
  const r1 = Math.floor((n - 1) / 2), r2 = Math.floor(n / 2);
  let cum = 0, j1 = -1, j2 = -1;
  for (let j = 0; j < m && j2 < 0; j++) {
    const c = C[j];
    if (j1 < 0 && cum + c > r1) j1 = j;
    if (cum + c > r2) j2 = j;
    cum += c;
  }
  const med = ((B[j1] + 0.5) * w + (B[j2] + 0.5) * w) / 2;
  out.median = med;
  // MAD: the same two ranks among |centre - med|, walking outward from the median over the entries (distances
  // ascend). Entries up to j1 have centres <= med, from j1 + 1 on > med (j2 is j1 or the next one).
  let l = j1, r = j1 + 1;
  let rank = 0, m1 = NaN, m2 = NaN;
  while (Number.isNaN(m2)) {
    const dl = l >= 0 ? med - (B[l] + 0.5) * w : Infinity;
    const dr = r < m ? (B[r] + 0.5) * w - med : Infinity;
    let j: number, dist: number;
    if (dl <= dr) { j = l; dist = dl; l--; } else { j = r; dist = dr; r++; }
    const c = C[j];
    if (Number.isNaN(m1) && rank + c > r1) m1 = dist;
    if (rank + c > r2) m2 = dist;
    rank += c;
  }
  const madv = (m1 + m2) / 2;
  let sigma: number;
  if (madv > 0) sigma = MAD_TO_SIGMA * madv;
  else {
    let s = 0;
    for (let j = 0; j < m; j++) s += C[j] * Math.abs((B[j] + 0.5) * w - med);
    sigma = (MEANAD_TO_SIGMA * s) / n;
  }
  out.sigma = sigma;
  const limit = k * sigma;
  let rej = 0, rs = 0, rss = 0;
  if (sigma > 0 && Number.isFinite(limit)) {
    // Centres ascend with j, so |x - med| > limit holds on a prefix (x below med) and a suffix (x above) of the
    // entries: only those are walked, in ascending order as a walk over all entries would add them (same sums,
    // bit for bit). Below med |x - med| is med - x exactly (IEEE subtraction is sign-symmetric).
    let j = 0;
    for (; j < m; j++) {
      const x = (B[j] + 0.5) * w;
      if (!(med - x > limit)) break;
      const c = C[j];
      rej += c; rs += c * x; rss += c * x * x;
    }
    let top = m;
    while (top > j && (B[top - 1] + 0.5) * w - med > limit) top--;
    for (let i = top; i < m; i++) {
      const c = C[i];
      const x = (B[i] + 0.5) * w;
      rej += c; rs += c * x; rss += c * x * x;
    }
  }
  out.rejected = rej;
  out.kept = n - rej;
  out.rejectedSum = rs;
  out.rejectedSumSq = rss;
  return out;
}

export function emptyHistogramStats(): HistogramStats {
  return { n: 0, median: NaN, sigma: NaN, kept: 0, rejected: 0, rejectedSum: 0, rejectedSumSq: 0, width: NaN };
}
