/**
 * The mergeable radial-velocity histogram (src/qc/vrHistogram.ts) and the accumulator (src/grid/accumulator.ts):
 * 1. its median, MAD and rejection decisions against the exact sample statistics (src/qc/robust.ts, itself checked
 *    against a sort-based reference in qc-robust.test.ts) on random groups with a junk population;
 * 2. exactness of merging: the same samples in another order, or split at random into parts that are merged, give
 *    bit-identical histograms and sums (the property sharded runs and ensembles rely on);
 * 3. bounded memory: a slot never holds more than MAX_DISTINCT bins, whatever the number of samples.
 */
import { describe, expect, it } from 'vitest';
import { CellAccumulator, STRIDE, VR_SCALE } from '../src/grid/accumulator.ts';
import { mulberry32 } from '../src/math/random.ts';
import { MAD_TO_SIGMA, medianInPlace, robustSigma } from '../src/qc/robust.ts';
import { DENSE_MAX, FINE_SHIFT, FINE_WIDTH, MAX_DISTINCT, VrHistograms, emptyHistogramStats, robustStats, sortedStats } from '../src/qc/vrHistogram.ts';

function gauss(r: () => number): number {
  let g = 0;
  for (let j = 0; j < 12; j++) g += r();
  return g - 6; // Irwin-Hall approximation of a standard normal (common practice for test data)
}

function histogramOf(values: ArrayLike<number>): VrHistograms {
  const h = new VrHistograms();
  h.ensure(1);
  for (let i = 0; i < values.length; i++) h.add(0, Math.round(values[i] * VR_SCALE));
  return h;
}

describe('statistics walked in the dense array equal those of the sorted bins', () => {
  it('bit for bit, on slots with and without table entries, even and odd counts, single values and coarsened slots', () => {
    const r = mulberry32(29);
    let dense = 0, table = 0;
    for (let t = 0; t < 800; t++) {
      const n = 1 + Math.floor(r() * (t % 50 === 0 ? 20000 : 300));
      const sd = t % 7 === 0 ? 0 : 0.02 + r() * 2; // some slots hold one repeated value (MAD 0: the fallback)
      const v = new Float64Array(n);
      for (let i = 0; i < n; i++) v[i] = -3 + sd * gauss(r) + (t % 3 === 0 && r() < 0.03 ? 90 * r() - 45 : 0);
      const h = histogramOf(v);
      if (h.tkeys[0] === null || h.tused[0] === 0) dense++;
      else table++;
      for (const k of [3.5, 2, Infinity]) {
        const a = robustStats(h, 0, k, emptyHistogramStats()), b = sortedStats(h, 0, k, emptyHistogramStats());
        expect(a).toEqual(b); // toEqual compares numbers with Object.is: identical doubles, NaN equal to NaN
      }
    }
    expect(dense).toBeGreaterThan(100); // both paths were exercised (160 and 640 with this seed)
    expect(table).toBeGreaterThan(10);
  });
});

describe('the span of non-empty dense bins (lo, hi) that the statistics walk', () => {
  it('holds every non-empty dense bin after reuse, merging, restoring and coarsening: statistics equal a fresh slot\'s', () => {
    // robustStats walks only [lo, hi] of the dense array: a bound narrower than the occupied bins would drop
    // samples. Checked against a fresh histogram of the same values, walked through its sorted bins (all of them).
    const r = mulberry32(83);
    const values = (t: number): Float64Array => {
      const n = 1 + Math.floor(r() * (t % 25 === 0 ? 12000 : 400));
      const c = 20 * r() - 10, sd = t % 9 === 0 ? 0 : 0.02 + 2 * r();
      const v = new Float64Array(n);
      for (let i = 0; i < n; i++) v[i] = c + sd * gauss(r) + (t % 4 === 0 && r() < 0.05 ? 100 * r() - 50 : 0);
      return v;
    };
    const h = new VrHistograms();
    h.ensure(3);
    for (let t = 0; t < 300; t++) {
      h.reset(3); // recycled slots, as a run reuses a window's accumulator
      const a = values(t), b = values(t + 1), all = new Float64Array(a.length + b.length);
      all.set(a); all.set(b, a.length);
      for (const x of a) h.add(0, Math.round(x * VR_SCALE));
      h.mergeSlot(0, histogramOf(b), 0); // slot 0: a, then b merged in
      for (const x of all) h.add(1, Math.round(x * VR_SCALE)); // slot 1: the same values added one by one
      const { bins, counts } = histogramOf(all).sorted(0);
      h.restoreSlot(2, histogramOf(all).level[0], bins, counts); // slot 2: read back from stored bins
      const fresh = histogramOf(all);
      for (let s = 0; s < 3; s++) {
        const d = h.dense[s];
        for (let j = 0; j < d.length; j++) if (d[j] !== 0) { expect(h.base[s] + j).toBeGreaterThanOrEqual(h.lo[s]); expect(h.base[s] + j).toBeLessThanOrEqual(h.hi[s]); }
        for (const k of [3.5, 2]) {
          // identical doubles (toEqual compares with Object.is): the same bins and counts give the same statistics
          expect(robustStats(h, s, k, emptyHistogramStats())).toEqual(sortedStats(fresh, 0, k, emptyHistogramStats()));
        }
      }
    }
  });
});

describe('rejected counts and sums', () => {
  it('equal a walk over every occupied bin in ascending order (the definition), bit for bit', () => {
    // robustStats walks only the entries beyond the limit on either side; this walks every bin of the samples
    // (bins from the values' fixed-point form at the slot's level), adding count * centre in ascending order.
    const r = mulberry32(47);
    let withRejections = 0;
    for (let t = 0; t < 600; t++) {
      const n = 2 + Math.floor(r() * (t % 40 === 0 ? 30000 : 400));
      const sd = 0.01 + r() * 2;
      const v = new Float64Array(n);
      for (let i = 0; i < n; i++) v[i] = 4 + sd * gauss(r) + (r() < 0.06 ? 80 * r() - 40 : 0);
      const h = histogramOf(v);
      const w = h.width(0), shift = FINE_SHIFT + h.level[0];
      const counts = new Map<number, number>();
      for (const x of v) { const b = Math.round(x * VR_SCALE) >> shift; counts.set(b, (counts.get(b) ?? 0) + 1); }
      const bins = [...counts.keys()].sort((a, b) => a - b);
      for (const k of [3.5, 2]) {
        const hs = robustStats(h, 0, k, emptyHistogramStats());
        const limit = k * hs.sigma;
        let rej = 0, rs = 0, rss = 0;
        for (const b of bins) {
          const c = counts.get(b)!, x = (b + 0.5) * w;
          if (Math.abs(x - hs.median) > limit) { rej += c; rs += c * x; rss += c * x * x; }
        }
        if (rej > 0) withRejections++;
        expect(hs.rejected).toBe(rej); // exact integers
        expect(hs.rejectedSum).toBe(rs); // tolerance 0: the same additions in the same order
        expect(hs.rejectedSumSq).toBe(rss);
        expect(hs.kept + hs.rejected).toBe(n);
      }
    }
    expect(withRejections).toBeGreaterThan(300); // the tails were exercised (most groups have junk beyond the limit)
  });
});

describe('histogram statistics against the exact sample statistics', () => {
  it('median within delta/2, MAD within delta, and decisions differ only within (1.5 k + 1) delta of the exact limit', () => {
    const r = mulberry32(11);
    const k = 3.5;
    let groups = 0, differing = 0;
    for (let t = 0; t < 1500; t++) {
      const n = 5 + Math.floor(r() * 200);
      const sd = 0.05 + r() * 1.5;
      const v = new Float64Array(n);
      // Bulk plus a 5 % junk population spread over +-30 m/s (junk at another signal level).
      for (let i = 0; i < n; i++) v[i] = 6 + sd * gauss(r) + (r() < 0.05 ? 60 * r() - 30 : 0);
      const h = histogramOf(v);
      const hs = robustStats(h, 0, k, emptyHistogramStats());
      const med = medianInPlace(Float64Array.from(v), 0, n);
      const sig = robustSigma(v, 0, n, med, new Float64Array(n));
      const delta = hs.width;
      // Each value is represented by its bin centre, at most delta/2 away: order statistics move by <= delta/2;
      // the median (mean of two of them) likewise; the MAD by <= delta (its own shift plus the median's).
      expect(Math.abs(hs.median - med)).toBeLessThanOrEqual(delta / 2 + 1e-12);
      if (sig / MAD_TO_SIGMA > delta) expect(Math.abs(hs.sigma - sig)).toBeLessThanOrEqual(MAD_TO_SIGMA * delta + 1e-12);
      // A sample can be decided differently only if it lies within the limit's error band: the limit moves by
      // <= k * 1.4826 * delta (MAD) + delta / 2 (median), the sample's own representation by <= delta / 2.
      const band = (1.5 * k + 1) * delta;
      let exactRejected = 0;
      for (const x of v) {
        const outExact = Math.abs(x - med) > k * sig;
        if (outExact) exactRejected++;
      }
      if (exactRejected !== hs.rejected) {
        differing++;
        const nearLimit = Array.from(v).filter((x) => Math.abs(Math.abs(x - med) - k * sig) <= band).length;
        expect(Math.abs(exactRejected - hs.rejected)).toBeLessThanOrEqual(nearLimit);
      }
      groups++;
    }
    // Sanity of the comparison itself: most groups agree exactly (the band is a few mm/s wide).
    expect(differing / groups).toBeLessThan(0.02);
  });

  it('finest bins are 2^-7 m/s wide, and a few far outliers do not coarsen the bulk', () => {
    const r = mulberry32(5);
    const v = Array.from({ length: 2000 }, () => 5 + 0.3 * gauss(r));
    v.push(-60, 60, 55, -45); // four far junk values
    const h = histogramOf(v);
    expect(h.width(0)).toBe(FINE_WIDTH);
    expect(FINE_WIDTH).toBe(2 ** -7);
  });

  it('MAD = 0 (constant data with one spike): the mean-absolute-deviation fallback rejects the spike only', () => {
    const v = [...Array(20).fill(4.25), 9.0];
    const hs = robustStats(histogramOf(v), 0, 3.5, emptyHistogramStats());
    expect(hs.rejected).toBe(1);
    const same = robustStats(histogramOf(Array(20).fill(4.25)), 0, 3.5, emptyHistogramStats());
    expect(same.rejected).toBe(0);
  });
});

describe('exact merging', () => {
  const r = mulberry32(99);
  // Wide enough to move slots up a level (more than MAX_DISTINCT distinct fine bins): 20,000 values over +-30 m/s.
  const wide = Float64Array.from({ length: 20000 }, () => 60 * r() - 30);
  const narrow = Float64Array.from({ length: 5000 }, () => 7 + 0.4 * gauss(r));
  // Junk first, then the bulk: far values land in the table, and the dense range later grows over some of them.
  const junkFirst = Float64Array.from({ length: 3000 }, (_, i) => (i < 40 ? 40 * r() - 20 : 3 + 0.5 * gauss(r)));

  function canonical(h: VrHistograms): string {
    const { bins, counts } = h.sorted(0);
    return `${h.level[0]}|${Array.from(bins).join(',')}|${Array.from(counts).join(',')}`;
  }

  for (const [name, values] of [['narrow', narrow], ['wide (coarsened)', wide], ['junk first', junkFirst]] as const) {
    it(`${name}: permuted order and random splits merge to the identical histogram`, () => {
      const whole = canonical(histogramOf(values));
      const perm = Array.from(values);
      for (let i = perm.length - 1; i > 0; i--) {
        const j = Math.floor(r() * (i + 1));
        [perm[i], perm[j]] = [perm[j], perm[i]];
      }
      expect(canonical(histogramOf(perm))).toBe(whole);
      for (let trial = 0; trial < 5; trial++) {
        const parts = 2 + Math.floor(r() * 6);
        const hs = Array.from({ length: parts }, () => {
          const h = new VrHistograms();
          h.ensure(1);
          return h;
        });
        for (const x of perm) hs[Math.floor(r() * parts)].add(0, Math.round(x * VR_SCALE));
        const merged = new VrHistograms();
        merged.ensure(1);
        for (const h of hs) merged.mergeSlot(0, h, 0);
        expect(canonical(merged)).toBe(whole);
      }
    });
  }

  it('the wide case moved up a level and stays within MAX_DISTINCT bins (bounded memory)', () => {
    const h = histogramOf(wide);
    expect(h.level[0]).toBeGreaterThan(0);
    expect(h.distinct[0]).toBeLessThanOrEqual(MAX_DISTINCT);
    expect(h.dense[0].length).toBeLessThanOrEqual(DENSE_MAX);
    expect(h.tkeys[0]?.length ?? 0).toBeLessThanOrEqual(4 * MAX_DISTINCT);
  });

  it('accumulators: random shards merge to bit-identical sums for every key', () => {
    const keys = 12, I = 3;
    const samples = Array.from({ length: 30000 }, () => ({
      key: Math.floor(r() * keys), vr: 8 * r() - 4 + (r() < 0.01 ? 50 * r() - 25 : 0),
      nx: 2 * r() - 1, ny: 2 * r() - 1, nz: r(), py: 400 * r() - 200, pz: 200 * r(),
    }));
    const add = (a: CellAccumulator, s: (typeof samples)[number]) => a.add(s.key, s.vr, s.nx, s.ny, s.nz, s.py, s.pz);
    const whole = new CellAccumulator(keys, I);
    for (const s of samples) add(whole, s);
    const parts = Array.from({ length: 4 }, () => new CellAccumulator(keys, I));
    for (const s of samples) add(parts[Math.floor(r() * 4)], s);
    const merged = new CellAccumulator(keys, I);
    for (const p of [parts[2], parts[0], parts[3], parts[1]]) merged.merge(p);
    for (let k = 0; k < keys; k++) {
      const a = whole.slotOf[k], b = merged.slotOf[k];
      for (let f = 0; f < STRIDE; f++) {
        expect(Object.is(whole.get(a, f), merged.get(b, f))).toBe(true); // bit-identical: integer sums
      }
      expect(canonical2(whole.hist, a)).toBe(canonical2(merged.hist, b));
    }
  });

  function canonical2(h: VrHistograms, s: number): string {
    const { bins, counts } = h.sorted(s);
    return `${h.level[s]}|${Array.from(bins).join(',')}|${Array.from(counts).join(',')}`;
  }
});
