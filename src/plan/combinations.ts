/**
 * Combinations of candidate indices (one per instrument): all of them when their number is within the cap, else a
 * seeded uniform random sample of `cap` distinct combinations (mulberry32 generator, a public-domain 32-bit PRNG by
 * T. Ettinger, 2017; common practice for reproducible sampling in JavaScript).
 */

export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

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
