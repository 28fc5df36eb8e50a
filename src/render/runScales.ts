/**
 * Scales shared by every figure of a run: one colour range per mapped quantity (from the 1st to the 99th
 * percentile of all its values over all planes and windows, widened to nice numbers, unless fixed in the
 * campaign) and one arrow scale (reference speed and its length in plane metres).
 *
 * The percentiles come from fixed-bin histograms (counts per bin over the usual range of the quantity, and
 * geometric bins beyond it), so that the run keeps a few kilobytes per quantity instead of every value, and
 * histograms of shards or windows merge by adding counts. The bin width (listed per quantity) is far below the nice
 * rounding applied to the range afterwards; beyond the usual range bins grow by 1 % of the distance from it.
 */
import type { FiguresSettings } from '../campaign/figures.ts';
import type { GridSpec } from '../grid/grid.ts';
import type { ArrowScale } from './mapLayers.ts';
import { niceRound } from './scalarMap.ts';
import { niceExtent } from './ticks.ts';

/**
 * A histogram over [lo, hi) with equal bins, and values beyond it in geometric tail bins (each 1 % wider than the
 * one before, starting at the bin width), so that a quantile falling outside [lo, hi) is still found to about 1 % of
 * its distance from the range (an inflow reference far below the flow gives u/u_inf of 6, a long window 50,000
 * samples per cell). Mergeable: counts of the same bins add.
 */
export class ValueHistogram {
  readonly counts: Float64Array;
  under = 0;
  over = 0;
  total = 0;
  /** Tail bins by index k >= 0: [edge(k), edge(k + 1)) of the distance beyond the range. */
  readonly below = new Map<number, number>();
  readonly above = new Map<number, number>();
  constructor(readonly lo: number, readonly hi: number, readonly bins: number) {
    this.counts = new Float64Array(bins);
  }

  add(v: number): void {
    if (!Number.isFinite(v)) return;
    this.total++;
    if (v < this.lo) {
      this.under++;
      const k = this.tailBin(this.lo - v);
      this.below.set(k, (this.below.get(k) ?? 0) + 1);
    } else if (v >= this.hi) {
      this.over++;
      const k = this.tailBin(v - this.hi);
      this.above.set(k, (this.above.get(k) ?? 0) + 1);
    } else this.counts[Math.min(this.bins - 1, Math.floor(((v - this.lo) / (this.hi - this.lo)) * this.bins))]++;
  }

  addAll(values: ArrayLike<number>): void {
    for (let i = 0; i < values.length; i++) this.add(values[i]);
  }

  merge(o: ValueHistogram): void {
    if (o.lo !== this.lo || o.hi !== this.hi || o.bins !== this.bins) throw new RangeError('histograms differ in their bins');
    for (let i = 0; i < this.bins; i++) this.counts[i] += o.counts[i];
    for (const [k, c] of o.below) this.below.set(k, (this.below.get(k) ?? 0) + c);
    for (const [k, c] of o.above) this.above.set(k, (this.above.get(k) ?? 0) + c);
    this.under += o.under;
    this.over += o.over;
    this.total += o.total;
  }

  /** The p-quantile (0..1): linear within the bin that holds it (a tail bin too). NaN when empty. */
  quantile(p: number): number {
    if (this.total === 0) return NaN;
    const target = p * this.total;
    let acc = 0;
    // Below the range: the farthest tail bins first.
    for (const k of [...this.below.keys()].sort((a, b) => b - a)) {
      const c = this.below.get(k)!;
      if (acc + c >= target) return this.lo - this.tailEdge(k + 1) + (this.tailEdge(k + 1) - this.tailEdge(k)) * ((target - acc) / c);
      acc += c;
    }
    const w = (this.hi - this.lo) / this.bins;
    for (let i = 0; i < this.bins; i++) {
      const c = this.counts[i];
      if (c > 0 && acc + c >= target) return this.lo + w * (i + (target - acc) / c);
      acc += c;
    }
    const up = [...this.above.keys()].sort((a, b) => a - b);
    for (const k of up) {
      const c = this.above.get(k)!;
      if (c > 0 && acc + c >= target) return this.hi + this.tailEdge(k) + (this.tailEdge(k + 1) - this.tailEdge(k)) * ((target - acc) / c);
      acc += c;
    }
    return up.length ? this.hi + this.tailEdge(up[up.length - 1] + 1) : this.hi;
  }

  /** Start of tail bin k, as a distance beyond the range: w ((1 + r)^k - 1) / r with w the bin width, r = 1 %. */
  private tailEdge(k: number): number {
    const w = (this.hi - this.lo) / this.bins;
    return (w * ((1 + TAIL_GROWTH) ** k - 1)) / TAIL_GROWTH;
  }

  private tailBin(d: number): number {
    const w = (this.hi - this.lo) / this.bins;
    return Math.max(0, Math.floor(Math.log1p((d * TAIL_GROWTH) / w) / Math.log1p(TAIL_GROWTH)));
  }
}

/** Each tail bin is this much wider than the one before (relative resolution of a quantile beyond the range). */
const TAIL_GROWTH = 0.01;

export type MapQuantity = 'u_norm' | 'u_ms' | 'su_ms' | 'samples';

/** Histogram ranges per quantity: u/u_inf bins of 0.001, speeds 0.01 m/s, uncertainties 0.001 m/s, samples 1 (up to 20,000 per cell). */
const RANGES: Record<MapQuantity | 'speed', [number, number, number]> = {
  u_norm: [-2, 4, 6000],
  u_ms: [-80, 80, 16000],
  su_ms: [0, 20, 20000],
  samples: [0, 20000, 20000],
  speed: [0, 60, 12000],
};

export interface RunScales {
  limits: Record<MapQuantity, [number, number] | undefined>;
  /** Where each range came from: fixed in the campaign or from the run's values. */
  limitSource: Record<MapQuantity, 'campaign' | 'run'>;
  arrows: ArrowScale;
  arrowSource: 'campaign' | 'run';
}

/** Collects the values of every field of a run, then gives the shared scales. */
export class ScaleCollector {
  readonly hist: Record<MapQuantity | 'speed', ValueHistogram>;
  constructor() {
    this.hist = Object.fromEntries(Object.entries(RANGES).map(([k, [lo, hi, b]]) => [k, new ValueHistogram(lo, hi, b)])) as Record<MapQuantity | 'speed', ValueHistogram>;
  }

  add(q: MapQuantity, values: ArrayLike<number>): void {
    this.hist[q].addAll(values);
  }

  addArrows(v: ArrayLike<number>, w: ArrayLike<number>): void {
    for (let i = 0; i < v.length; i++) this.hist.speed.add(Math.hypot(v[i], w[i]));
  }

  merge(o: ScaleCollector): void {
    for (const k of Object.keys(this.hist) as (MapQuantity | 'speed')[]) this.hist[k].merge(o.hist[k]);
  }

  /**
   * The run's scales. Arrow length: 0.75 of the spacing of arrows on the full-size map of the plane with the
   * widest spacing (every ceil(max(ny, nz) / 16)-th cell); planes of smaller cells draw fewer arrows
   * (mapLayers.ts arrowEvery), so that arrows never overlap on any plane.
   */
  scales(settings: Pick<FiguresSettings, 'limits' | 'arrowReference_ms'>, grids: GridSpec[]): RunScales {
    const limits = {} as RunScales['limits'];
    const limitSource = {} as RunScales['limitSource'];
    for (const q of ['u_norm', 'u_ms', 'su_ms', 'samples'] as MapQuantity[]) {
      const fixed = settings.limits[q];
      if (fixed) {
        limits[q] = [fixed[0], fixed[1]];
        limitSource[q] = 'campaign';
        continue;
      }
      limitSource[q] = 'run';
      const h = this.hist[q];
      limits[q] = h.total ? niceExtent(h.quantile(0.01), h.quantile(0.99), 10) : undefined;
    }
    const spacing = Math.max(1, ...grids.map((g) => Math.ceil(Math.max(g.ny, g.nz) / 16) * Math.min(g.dy, g.dz)));
    const ref = settings.arrowReference_ms ?? niceRound(this.hist.speed.quantile(0.9));
    return { limits, limitSource, arrows: { reference_ms: ref, length_m: 0.75 * spacing }, arrowSource: settings.arrowReference_ms ? 'campaign' : 'run' };
  }
}
