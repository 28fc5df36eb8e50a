/**
 * Scan order of a set of pointings: a closed tour (the scanner returns to the first point to repeat the plane) that
 * keeps slews short.
 *
 * Slew between two pointings (reported azimuth a, elevation e, degrees): max(|da|, |de|) with da wrapped to
 * [0, 180], the time-limiting axis of a two-axis scanner that moves both axes at once at the same rate (common
 * practice). Orders tried: raster (each row in the same direction, the naive order), serpentine (boustrophedon: rows
 * alternate direction), nearest neighbour from the first point; the shortest of them is improved by 2-opt (reverse
 * a stretch of the tour whenever that shortens it; Croes 1958) until no move helps or the pass cap is reached. 2-opt
 * only accepts improvements, so the result is never longer than the raster.
 */

export interface Pointing {
  azimuth_deg: number;
  elevation_deg: number;
}

export function slewAngle(a: Pointing, b: Pointing): number {
  let da = Math.abs(a.azimuth_deg - b.azimuth_deg) % 360;
  if (da > 180) da = 360 - da;
  return Math.max(da, Math.abs(a.elevation_deg - b.elevation_deg));
}

/** Total slew of the closed tour through `order` (degrees). */
export function tourSlew(points: readonly Pointing[], order: ArrayLike<number>): number {
  const n = order.length;
  let s = 0;
  for (let i = 0; i < n; i++) s += slewAngle(points[order[i]], points[order[(i + 1) % n]]);
  return s;
}

/**
 * Raster and serpentine orders of points on a grid: `row[i]` and `col[i]` give the grid position of point i.
 * Rows are visited in increasing order; raster runs every row by increasing column, serpentine alternates.
 */
export function gridOrders(row: ArrayLike<number>, col: ArrayLike<number>): { raster: Int32Array; serpentine: Int32Array } {
  const idx = Array.from({ length: row.length }, (_, i) => i);
  const raster = Int32Array.from([...idx].sort((a, b) => row[a] - row[b] || col[a] - col[b]));
  const rows = [...new Set(Array.from(raster, (i) => row[i]))];
  const rank = new Map(rows.map((r, k) => [r, k]));
  const serpentine = Int32Array.from([...idx].sort((a, b) => row[a] - row[b] || (rank.get(row[a])! % 2 ? col[b] - col[a] : col[a] - col[b])));
  return { raster, serpentine };
}

export function nearestNeighbourOrder(points: readonly Pointing[], start = 0): Int32Array {
  const n = points.length;
  const out = new Int32Array(n);
  const used = new Uint8Array(n);
  if (n === 0) return out;
  let cur = start;
  used[cur] = 1;
  out[0] = cur;
  for (let k = 1; k < n; k++) {
    let best = -1, bd = Infinity;
    for (let j = 0; j < n; j++) {
      if (used[j]) continue;
      const d = slewAngle(points[cur], points[j]);
      if (d < bd) { bd = d; best = j; }
    }
    used[best] = 1;
    out[k] = best;
    cur = best;
  }
  return out;
}

/** 2-opt on a closed tour, in place; returns the number of passes made. */
export function twoOpt(points: readonly Pointing[], order: Int32Array, maxPasses = 50): number {
  const n = order.length;
  if (n < 4) return 0;
  const d = (i: number, j: number) => slewAngle(points[order[i]], points[order[j]]);
  let pass = 0;
  for (; pass < maxPasses; pass++) {
    let improved = false;
    for (let i = 0; i < n - 2; i++) {
      for (let j = i + 2; j < n; j++) {
        const jn = (j + 1) % n;
        if (jn === i) continue;
        const delta = d(i, j) + d(i + 1, jn) - d(i, i + 1) - d(j, jn);
        if (delta < -1e-9) {
          // reverse order[i+1 .. j]
          for (let a = i + 1, b = j; a < b; a++, b--) {
            const t = order[a]; order[a] = order[b]; order[b] = t;
          }
          improved = true;
        }
      }
    }
    if (!improved) return pass + 1;
  }
  return pass;
}

export interface ScanOrder {
  order: Int32Array;
  /** Closed-tour slew of the naive raster, of the serpentine, and of the chosen order, degrees. */
  rasterSlew_deg: number;
  serpentineSlew_deg: number;
  slew_deg: number;
  /** Which order 2-opt started from. */
  start: 'raster' | 'serpentine' | 'nearest-neighbour';
}

/** Options: `maxPasses` caps the 2-opt passes (default 50); 2-opt is skipped above `maxTwoOptPoints` (default 4000). */
export function planScanOrder(
  points: readonly Pointing[],
  row: ArrayLike<number>,
  col: ArrayLike<number>,
  opts: { maxPasses?: number; maxTwoOptPoints?: number } = {},
): ScanOrder {
  const { raster, serpentine } = gridOrders(row, col);
  const rasterSlew = tourSlew(points, raster);
  const serpSlew = tourSlew(points, serpentine);
  const nn = nearestNeighbourOrder(points, serpentine.length ? serpentine[0] : 0);
  const cands: [ScanOrder['start'], Int32Array, number][] = [
    ['raster', raster, rasterSlew],
    ['serpentine', serpentine, serpSlew],
    ['nearest-neighbour', nn, tourSlew(points, nn)],
  ];
  cands.sort((a, b) => a[2] - b[2]);
  const [start, best] = cands[0];
  const order = Int32Array.from(best);
  if (points.length <= (opts.maxTwoOptPoints ?? 4000)) twoOpt(points, order, opts.maxPasses ?? 50);
  // Start the tour at the raster's first point (a rotation of a closed tour keeps its length).
  const k = raster.length ? order.indexOf(raster[0]) : 0;
  if (k > 0) order.set([...order.subarray(k), ...order.subarray(0, k)]);
  return { order, rasterSlew_deg: rasterSlew, serpentineSlew_deg: serpSlew, slew_deg: tourSlew(points, order), start };
}
