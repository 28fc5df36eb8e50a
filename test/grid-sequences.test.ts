/**
 * The uncertainty budget's sequence sums (rays, runs, bursts: grid/accumulator.ts) depend on which samples follow
 * each other. The ingest ends every instrument's sequences when a file ends, so a run over two files equals the
 * exact merge of one accumulator per file: the property that makes runs sharded by files (or spread over cores by
 * files) give the same budget columns as one run. Exact equality of integer sums (tolerance 0: every field is a sum
 * of integers held exactly in doubles).
 */
import { describe, expect, it } from 'vitest';
import { CellAccumulator, STRIDE } from '../src/grid/accumulator.ts';
import { mulberry32, gaussian } from '../src/math/random.ts';

/** Scanner-like samples of two instruments over keys 0..5 (key % 2 = instrument): rays of 1-3 gates, dwells, gaps. */
function samples(seed: number, t0: number, n: number): number[][] {
  const rnd = mulberry32(seed), g = () => gaussian(rnd);
  const out: number[][] = [];
  let t = t0;
  for (let k = 0; k < n; k++) {
    t += rnd() < 0.05 ? 6 + rnd() * 4 : 0.1; // sometimes a gap longer than a burst's
    const key = Math.floor(rnd() * 6);
    const gates = 1 + Math.floor(rnd() * 3);
    const dir = rnd() < 0.5 ? 0.6 : 0.8;
    for (let j = 0; j < gates; j++) out.push([key, 5 + g(), dir, Math.sqrt(1 - dir * dir), 0, 10 * j, 100, t]);
  }
  return out;
}

function fill(acc: CellAccumulator, rows: number[][], tMid: number): void {
  for (const r of rows) acc.add(r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7], tMid);
}

function slots(acc: CellAccumulator): Map<number, number[]> {
  acc.closeRays();
  const m = new Map<number, number[]>();
  for (let s = 0; s < acc.slots; s++) m.set(acc.keyOf[s], [...acc.sums.subarray(s * STRIDE, (s + 1) * STRIDE)]);
  return m;
}

describe('budget sequences end with a file', () => {
  it('one accumulator over two files, sequences ended between them, equals the merge of one per file', () => {
    const a = samples(1, 1000, 3000), b = samples(2, a[a.length - 1][7] + 0.1, 3000); // b follows a within a burst
    const tMid = b[0][7];
    const single = new CellAccumulator(6, 2);
    fill(single, a, tMid);
    single.endSequences(0);
    single.endSequences(1);
    fill(single, b, tMid);
    const pa = new CellAccumulator(6, 2), pb = new CellAccumulator(6, 2);
    fill(pa, a, tMid);
    fill(pb, b, tMid);
    pa.merge(pb);
    expect(slots(single)).toEqual(slots(pa));
  });

  it('without ending them the sums differ (the check can fail): pairs across the files are formed', () => {
    const a = samples(1, 1000, 3000), b = samples(2, a[a.length - 1][7] + 0.1, 3000);
    const tMid = b[0][7];
    const joined = new CellAccumulator(6, 2);
    fill(joined, a, tMid);
    fill(joined, b, tMid);
    const pa = new CellAccumulator(6, 2), pb = new CellAccumulator(6, 2);
    fill(pa, a, tMid);
    fill(pb, b, tMid);
    pa.merge(pb);
    expect(slots(joined)).not.toEqual(slots(pa));
  });

  it('ending one instrument leaves the other instrument\'s sequences running', () => {
    const a = samples(3, 1000, 2000), b = samples(4, a[a.length - 1][7] + 0.1, 2000);
    const tMid = b[0][7];
    const x = new CellAccumulator(6, 2), y = new CellAccumulator(6, 2);
    fill(x, a, tMid); fill(y, a, tMid);
    x.endSequences(0);
    fill(x, b, tMid); fill(y, b, tMid);
    const sx = slots(x), sy = slots(y);
    for (const key of [1, 3, 5]) expect(sx.get(key)).toEqual(sy.get(key)); // instrument 1: untouched
  });
});
