/**
 * The uncertainty budget's sums in the accumulator (grid/accumulator.ts) against a direct computation from their
 * definitions in its docblock: each key's samples in arrival order cut into rays (successive samples with one time
 * stamp; a ray's direction is its first sample's), runs (successive rays with one direction less than BURST_GAP_S
 * apart, pairs at lags 1-3) and bursts (rays less than BURST_GAP_S apart), summed with BigInt. Not an outside
 * check: a second, plain implementation of the same definitions, so that the accumulator's fast path (a ray's run
 * and burst classified when it opens, ray state in a few doubles) can be changed without changing a number.
 * Tolerance 0: every field is a sum of integers held exactly (the split fields compared as high * 2^26 + low, and
 * the time fields also part by part, since sampling.ts reads them separately).
 */
import { describe, expect, it } from 'vitest';
import { A_SCALE, BURST_GAP_S, CellAccumulator, DT_SCALE, E_SCALE, F, SQ_SPLIT, STRIDE, T_SCALE, VR_SCALE, W_CAP } from '../src/grid/accumulator.ts';
import { mulberry32 } from '../src/math/random.ts';

/** Nearest integer, ties to even (the accumulator's rounding). */
function rint(x: number): number {
  const f = Math.floor(x), d = x - f;
  return d > 0.5 || (d === 0.5 && f % 2 !== 0) ? f + 1 : f;
}

interface Sample { key: number; vr: number; n: [number, number, number]; t: number; tMid: number }

/** The budget sums of one key's sequence of samples (one sequence: no file end inside), by definition. */
function reference(seq: Sample[]): Map<string, bigint> {
  const out = new Map<string, bigint>();
  const add = (k: string, v: number | bigint) => out.set(k, (out.get(k) ?? 0n) + BigInt(v));
  // Rays: successive samples with one time stamp.
  const rays: { M: number; Q: number; T: number; n: [number, number, number] }[] = [];
  for (const s of seq) {
    const q = rint(s.vr * VR_SCALE);
    const tq = rint(s.t * T_SCALE), th = Math.floor(tq / SQ_SPLIT);
    add('th', th); add('tl', tq - th * SQ_SPLIT);
    if (s.t >= s.tMid) { add('hn', 1); add('hv', q); }
    const last = rays[rays.length - 1];
    if (last && last.T === s.t) { last.M++; last.Q += q; } else rays.push({ M: 1, Q: q, T: s.t, n: s.n });
  }
  const a = rays.map((r) => rint((r.Q / r.M) * (A_SCALE / VR_SCALE)));
  let runStart = 0;
  type Burst = { M: number; Q: number; e: [number, number, number] };
  const bursts: Burst[] = [];
  for (let r = 0; r < rays.length; r++) {
    add('ra', 1); add('sa', a[r]); add('sa2', BigInt(a[r]) * BigInt(a[r]));
    const gap = r > 0 ? rays[r].T - rays[r - 1].T : Infinity;
    const sameDir = r > 0 && rays[r].n.every((c, i) => c === rays[r - 1].n[i]);
    if (!(r > 0 && sameDir && gap <= BURST_GAP_S)) runStart = r;
    for (let k = 1; k <= 3 && r - k >= runStart; k++) {
      add(`l${k}n`, 1);
      const d = BigInt(a[r] - a[r - k]);
      add(`l${k}`, d * d);
      if (k === 1) add('l1d', rint(Math.abs(gap) * DT_SCALE));
    }
    if (r === 0 || gap > BURST_GAP_S) bursts.push({ M: 0, Q: 0, e: [0, 0, 0] });
    const b = bursts[bursts.length - 1];
    b.M += rays[r].M; b.Q += rays[r].Q;
    for (let i = 0; i < 3; i++) b.e[i] += rays[r].M * rint(rays[r].n[i] * 2 ** 20);
  }
  for (const b of bursts) {
    add('rb', 1);
    const ab = rint((b.Q / b.M) * (A_SCALE / VR_SCALE));
    const e = b.e.map((c) => rint(c * (E_SCALE / (2 ** 20 * b.M))));
    const w = Math.min(b.M, W_CAP), T = BigInt(w * ab), f = e.map((c) => BigInt(w * c)), W = BigInt(w);
    add('sw', W); add('sw2', W * W); add('sT', T); add('sT2', T * T); add('swT', W * T);
    ['x', 'y', 'z'].forEach((c, i) => { add(`swe${c}`, f[i]); add(`swwe${c}`, W * f[i]); add(`Te${c}`, T * f[i]); });
    add('exx', f[0] * f[0]); add('exy', f[0] * f[1]); add('exz', f[0] * f[2]); add('eyy', f[1] * f[1]); add('eyz', f[1] * f[2]); add('ezz', f[2] * f[2]);
  }
  return out;
}

/** The same quantities read from a slot of the accumulator (rays closed). */
function fromAccumulator(acc: CellAccumulator, s: number): Map<string, bigint> {
  const m = acc.sums, o = s * STRIDE;
  const one = (f: number) => BigInt(m[o + f]);
  const split = (h: number) => BigInt(m[o + h]) * BigInt(SQ_SPLIT) + BigInt(m[o + h + 1]);
  const out = new Map<string, bigint>();
  const names: [string, bigint][] = [
    ['th', one(F.th)], ['tl', one(F.tl)], ['hn', one(F.hn)], ['hv', one(F.hv)], ['ra', one(F.ra)], ['sa', one(F.sa)], ['sa2', split(F.sa2h)],
    ['l1n', one(F.l1n)], ['l1', split(F.l1h)], ['l1d', one(F.l1d)], ['l2n', one(F.l2n)], ['l2', split(F.l2h)], ['l3n', one(F.l3n)], ['l3', split(F.l3h)],
    ['rb', one(F.rb)], ['sw', one(F.sw)], ['sw2', one(F.sw2)], ['sT', one(F.sT)], ['sT2', split(F.sT2h)], ['swT', one(F.swT)],
    ['swex', one(F.swex)], ['swey', one(F.swey)], ['swez', one(F.swez)], ['swwex', one(F.swwex)], ['swwey', one(F.swwey)], ['swwez', one(F.swwez)],
    ['Tex', split(F.Texh)], ['Tey', split(F.Teyh)], ['Tez', split(F.Tezh)],
    ['exx', split(F.exxh)], ['exy', split(F.exyh)], ['exz', split(F.exzh)], ['eyy', split(F.eyyh)], ['eyz', split(F.eyzh)], ['ezz', split(F.ezzh)],
  ];
  for (const [k, v] of names) if (v !== 0n) out.set(k, v);
  return out;
}

function nonZero(m: Map<string, bigint>): Map<string, bigint> {
  return new Map([...m].filter(([, v]) => v !== 0n));
}

/**
 * Random streams of one instrument over `keys` keys: rays of 1-4 gates spread over 1-2 keys, dwells on a beam
 * (runs), beams repeated or new, gaps beyond BURST_GAP_S, times that step back, times near 0 (the state's
 * zero time), a window middle or none.
 */
function stream(seed: number, keys: number, n: number, nearZero: boolean): Sample[] {
  const rnd = mulberry32(seed);
  const unit = (): [number, number, number] => {
    const az = rnd() * 2 * Math.PI, el = rnd() * 1.2;
    return [Math.cos(el) * Math.sin(az), Math.cos(el) * Math.cos(az), Math.sin(el)];
  };
  const beams = [unit(), unit(), unit()];
  let t = nearZero ? rnd() * 2 : 1.7e9 + rnd() * 1e6;
  const tMid = rnd() < 0.5 ? NaN : t + n * 0.2;
  const out: Sample[] = [];
  let beam = beams[0];
  while (out.length < n) {
    const u = rnd();
    t += u < 0.08 ? 5 + rnd() * 10 : u < 0.12 ? -rnd() * 2 : u < 0.16 ? 0 : 0.05 + rnd() * 0.6;
    if (rnd() < 0.25) beam = rnd() < 0.6 ? beams[Math.floor(rnd() * 3)] : unit(); // else a dwell on the beam
    const k0 = Math.floor(rnd() * keys), gates = 1 + Math.floor(rnd() * 4);
    for (let g = 0; g < gates; g++) out.push({ key: g < 2 ? k0 : (k0 + 1) % keys, vr: (rnd() - 0.3) * 40, n: beam, t, tMid });
  }
  return out;
}

describe('budget sums against their definitions', () => {
  it('random streams (rays, runs, bursts, steps back in time, times near 0): every sum equal, key by key', () => {
    let compared = 0, pairs = 0;
    for (let c = 0; c < 60; c++) {
      const keys = 1 + (c % 5);
      const seq = stream(100 + c, keys, 50 + 40 * c, c % 7 === 3);
      const acc = new CellAccumulator(keys, 1);
      for (const s of seq) acc.add(s.key, s.vr, s.n[0], s.n[1], s.n[2], 1, 2, s.t, s.tMid);
      acc.closeRays();
      for (let s = 0; s < acc.slots; s++) {
        const key = acc.keyOf[s];
        const want = nonZero(reference(seq.filter((x) => x.key === key)));
        expect(fromAccumulator(acc, s)).toEqual(want);
        compared++;
        pairs += Number(want.get('l3n') ?? 0n);
      }
    }
    expect(compared).toBeGreaterThan(150);
    expect(pairs).toBeGreaterThan(1000); // the streams do form runs of four rays and more
  });

  it('a file end cuts the sequences: the sums are those of the two parts, each by definition', () => {
    // The second file starts 0.1 s after the first ends: without the cut its rays would continue the runs and bursts.
    const a = stream(7, 3, 600, false), b1 = stream(8, 3, 600, false);
    const shift = a[a.length - 1].t + 0.1 - b1[0].t;
    const b = b1.map((s) => ({ ...s, t: s.t + shift }));
    const acc = new CellAccumulator(3, 1);
    for (const s of a) acc.add(s.key, s.vr, s.n[0], s.n[1], s.n[2], 1, 2, s.t, NaN);
    acc.endSequences(0);
    for (const s of b) acc.add(s.key, s.vr, s.n[0], s.n[1], s.n[2], 1, 2, s.t, NaN);
    acc.closeRays();
    for (let s = 0; s < acc.slots; s++) {
      const key = acc.keyOf[s];
      const want = reference(a.filter((x) => x.key === key));
      for (const [k, v] of reference(b.filter((x) => x.key === key))) want.set(k, (want.get(k) ?? 0n) + v);
      expect(fromAccumulator(acc, s)).toEqual(nonZero(want));
    }
  });
});
