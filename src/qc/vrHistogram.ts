/**
 * Mergeable radial-velocity histograms, one per accumulator slot (window, cell, instrument), from which the robust
 * filter takes its median and MAD without holding the samples.
 *
 * Values arrive as fixed-point integers q = round(v_r * 2^20) (grid/accumulator.ts). At level L a bin holds the
 * values with floor(q / 2^(11 + L)) equal: bins of width delta_L = 2^(L - 9) m/s (0.002 m/s at level 0) with edges
 * at multiples of delta_L. Bins are kept sparsely (an open-addressing hash table of bin -> count per slot), so a
 * few far outliers cost a few entries and do not coarsen the bulk. A slot holds at most MAX_DISTINCT distinct bins:
 * beyond that it moves up a level (pairs of bins merge) until its bins fit. Memory per slot is therefore bounded
 * (MAX_DISTINCT entries) whatever the number of samples, and small for slots with few samples.
 *
 * Exactness of merging: counts are integers and bin edges are global, so the histogram of a set of samples does not
 * depend on the order in which they arrived nor on how they were split into parts: a slot ends at the smallest level
 * at which its distinct bins fit (a slot only moves up when they no longer fit, and the distinct bins of a growing
 * set only grow), and merging brings both parts to the higher level, then moves up again while the union does not
 * fit.
 *
 * Statistics (robustStats): each value is represented by the centre of its bin, so the median is within delta/2 of
 * the exact sample median and the MAD within delta of the exact MAD (delta = the slot's bin width; tested in
 * test/qc-histogram.test.ts against the exact sample statistics of qc/robust.ts).
 */

/** Distinct bins per slot at most; more moves the slot up a level. */
export const MAX_DISTINCT = 4096;
/** Bits below the finest bin: q >> FINE_SHIFT is the level-0 bin (width 2^-9 m/s for q in units of 2^-20 m/s). */
export const FINE_SHIFT = 11;
/** Bin width at level 0, m/s. */
export const FINE_WIDTH = 2 ** (FINE_SHIFT - 20);
const MAX_LEVEL = 20;

/** Histograms of many slots. A slot's table is allocated when it receives its first value. */
export class VrHistograms {
  /** Per slot: bin keys and counts (count 0 = empty entry), table size a power of two. */
  keys: (Int32Array | null)[] = [];
  counts: (Uint32Array | null)[] = [];
  level = new Uint8Array(0);
  /** Distinct bins per slot. */
  distinct = new Int32Array(0);

  /** Make room for slots [0, n). */
  ensure(n: number): void {
    if (n <= this.level.length) return;
    const cap = Math.max(n, this.level.length * 2, 64);
    const l = new Uint8Array(cap); l.set(this.level); this.level = l;
    const d = new Int32Array(cap); d.set(this.distinct); this.distinct = d;
    while (this.keys.length < cap) { this.keys.push(null); this.counts.push(null); }
  }

  /** Add one value (fixed-point q, |q| < 2^31) to slot s. */
  add(s: number, q: number): void {
    this.addBin(s, q >> (FINE_SHIFT + this.level[s]), 1);
  }

  /** Add `count` to bin `bin` (at the slot's current level) of slot s. */
  private addBin(s: number, bin: number, count: number): void {
    let k = this.keys[s], c = this.counts[s];
    if (k === null || c === null) {
      k = this.keys[s] = new Int32Array(16);
      c = this.counts[s] = new Uint32Array(16);
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
    const n = ++this.distinct[s];
    if (n > MAX_DISTINCT && !this.rehashing) this.coarsen(s, 1);
    else if (2 * n > k.length) this.rehash(s, k.length * 2, 0);
  }

  /** True while a table is rebuilt: no level change may start inside (coarsen checks again after it). */
  private rehashing = false;

  /** Rebuild slot s's table with `size` entries, moving every bin up `shift` levels. */
  private rehash(s: number, size: number, shift: number): void {
    const k = this.keys[s]!, c = this.counts[s]!;
    const outer = this.rehashing;
    this.rehashing = true;
    this.keys[s] = new Int32Array(size);
    this.counts[s] = new Uint32Array(size);
    this.distinct[s] = 0;
    this.level[s] += shift;
    for (let i = 0; i < k.length; i++) if (c[i] !== 0) this.addBin(s, k[i] >> shift, c[i]);
    this.rehashing = outer;
  }

  /** Move slot s up `shift` levels (bin b -> b >> shift), further while its bins do not fit. */
  private coarsen(s: number, shift: number): void {
    const size = this.keys[s]!.length;
    this.rehash(s, size, shift);
    while (this.distinct[s] > MAX_DISTINCT && this.level[s] < MAX_LEVEL) this.rehash(s, size, 1);
  }

  /** Add every count of `other`'s slot t into this slot s (exact; see the file header). */
  mergeSlot(s: number, other: VrHistograms, t: number): void {
    const ok = other.keys[t], oc = other.counts[t];
    if (ok === null || oc === null) return;
    const ol = other.level[t];
    if (this.keys[s] === null) this.level[s] = ol;
    else if (this.level[s] < ol) this.coarsen(s, ol - this.level[s]);
    for (let i = 0; i < ok.length; i++) {
      if (oc[i] === 0) continue;
      // Recomputed per bin: adding a bin can move this slot up a level.
      this.addBin(s, ok[i] >> (this.level[s] - ol), oc[i]);
    }
  }

  /** Bin width of slot s, m/s. */
  width(s: number): number {
    return FINE_WIDTH * 2 ** this.level[s];
  }

  /** The slot's bins in ascending order with their counts (allocates; for the filter and tests). */
  sorted(s: number): { bins: Int32Array; counts: Float64Array } {
    const k = this.keys[s], c = this.counts[s];
    const n = this.distinct[s];
    const bins = new Int32Array(n), counts = new Float64Array(n);
    if (k === null || c === null) return { bins, counts };
    let j = 0;
    for (let i = 0; i < k.length; i++) if (c[i] !== 0) bins[j++] = k[i];
    bins.sort();
    // Counts in bin order: look each bin up again (tables are at most half full).
    const mask = k.length - 1;
    for (let m = 0; m < n; m++) {
      let h = (Math.imul(bins[m], 0x9e3779b1) >>> 0) & mask;
      while (k[h] !== bins[m] || c[h] === 0) h = (h + 1) & mask;
      counts[m] = c[h];
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
  out.n = out.kept = out.rejected = 0;
  out.median = out.sigma = NaN;
  out.rejectedSum = out.rejectedSumSq = 0;
  out.width = h.width(s);
  const { bins, counts } = h.sorted(s);
  const used = bins.length;
  let n = 0;
  for (let j = 0; j < used; j++) n += counts[j];
  out.n = n;
  if (n === 0) return out;
  const w = out.width;
  const centre = (j: number) => (bins[j] + 0.5) * w;
  // Median: the values of rank (n-1)/2 and n/2 (0-based; the same for odd n).
  const r1 = Math.floor((n - 1) / 2), r2 = Math.floor(n / 2);
  let cum = 0, j1 = -1, j2 = -1;
  for (let j = 0; j < used && j2 < 0; j++) {
    const c = counts[j];
    if (j1 < 0 && cum + c > r1) j1 = j;
    if (cum + c > r2) j2 = j;
    cum += c;
  }
  const med = (centre(j1) + centre(j2)) / 2;
  out.median = med;
  // MAD: the same two ranks among |centre - med|, walking outward from the median (distances ascend). Entries up
  // to j1 have centres <= med, from j1 + 1 on > med (j2 is j1 or j1 + 1).
  let l = j1, r = j1 + 1;
  let rank = 0, m1 = NaN, m2 = NaN;
  while (Number.isNaN(m2)) {
    const dl = l >= 0 ? med - centre(l) : Infinity;
    const dr = r < used ? centre(r) - med : Infinity;
    let j: number, dist: number;
    if (dl <= dr) { j = l--; dist = dl; } else { j = r++; dist = dr; }
    const c = counts[j];
    if (Number.isNaN(m1) && rank + c > r1) m1 = dist;
    if (rank + c > r2) m2 = dist;
    rank += c;
  }
  const madv = (m1 + m2) / 2;
  let sigma: number;
  if (madv > 0) sigma = MAD_TO_SIGMA * madv;
  else {
    let sum = 0;
    for (let j = 0; j < used; j++) sum += counts[j] * Math.abs(centre(j) - med);
    sigma = (MEANAD_TO_SIGMA * sum) / n;
  }
  out.sigma = sigma;
  const limit = k * sigma;
  let rej = 0, rs = 0, rss = 0;
  if (sigma > 0 && Number.isFinite(limit)) {
    for (let j = 0; j < used; j++) {
      const x = centre(j);
      if (Math.abs(x - med) > limit) {
        const c = counts[j];
        rej += c; rs += c * x; rss += c * x * x;
      }
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
