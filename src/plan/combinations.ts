/**
 * Combinations of candidate indices (one per instrument): all of them when their number is within the cap, else a
 * seeded uniform random sample of `cap` distinct combinations (math/random.ts: a small public-domain 32-bit generator,
 * common practice for reproducible sampling in JavaScript).
 */
import { mulberry32 } from '../math/random.ts';

export interface CombinationSet {
  combos: Int32Array[];
  /** Number of possible combinations (may exceed 2^53 for huge searches: then approximate). */
  total: number;
  sampled: boolean;
}

export function combinations(counts: readonly number[], cap: number, seed: number): CombinationSet {
  const total = counts.reduce((p, c) => p * c, 1);
  const k = counts.length;
  if (total <= cap) {
    const combos: Int32Array[] = [];
    const cur = new Int32Array(k);
    for (let n = 0; n < total; n++) {
      combos.push(Int32Array.from(cur));
      for (let d = k - 1; d >= 0; d--) {
        if (++cur[d] < counts[d]) break;
        cur[d] = 0;
      }
    }
    return { combos, total, sampled: false };
  }
  const rnd = mulberry32(seed);
  const seen = new Set<string>();
  const combos: Int32Array[] = [];
  for (let tries = 0; combos.length < cap && tries < 50 * cap; tries++) {
    const c = Int32Array.from(counts, (m) => Math.floor(rnd() * m));
    const key = c.join(',');
    if (seen.has(key)) continue;
    seen.add(key);
    combos.push(c);
  }
  return { combos, total, sampled: true };
}
