/**
 * A window's accumulator as plain typed arrays and numbers, and back: how partial results of sharded runs carry
 * accumulators between processes (pipeline/partialFile.ts).
 *
 * Generic on purpose: every own field of CellAccumulator that is a number travels in `meta`, every typed array whose
 * length is a multiple of the slot capacity travels as a per-slot array (cut to the used slots), any other typed
 * array whole. A field added to the accumulator later (a further sum, a per-slot count) therefore travels without a
 * change here, as long as the accumulator grows it with its slots. Two fields are derived or stored canonically:
 * `slotOf` (the key index, rebuilt from `keyOf`) and `hist` (the radial-velocity histograms, stored as each slot's
 * level and its bins with their counts in ascending order: the content, not the storage, see qc/vrHistogram.ts).
 *
 * `accumulatorLayout()` describes the fields, their types and widths, the fixed-point scales and the histogram
 * constants; a partial written under another layout is refused (the merge would not be exact).
 */
import { CellAccumulator, DIR_SCALE, F, MAX_SAMPLES_PER_KEY, POS_SCALE, SQ_SPLIT, STRIDE, VR_SCALE } from './accumulator.ts';
import { FINE_SHIFT, MAX_DISTINCT, VrHistograms } from '../qc/vrHistogram.ts';

export type TypedArray = Float64Array | Float32Array | Int32Array | Uint32Array | Int16Array | Uint16Array | Int8Array | Uint8Array;

/**
 * Fields rebuilt (slotOf), stored in canonical form (hist) or dropped (lag: the state of the open rays and runs of
 * the budget sums, dropped after closeRays() as a merge drops it; grid/accumulator.ts) instead of as they are held.
 */
const SPECIAL = new Set(['slotOf', 'hist', 'lag']);

export interface ArrayState {
  /** Numbers and small descriptions (JSON). */
  meta: Record<string, unknown>;
  /** Named typed arrays. */
  arrays: Record<string, TypedArray>;
}

function isTyped(v: unknown): v is TypedArray {
  return ArrayBuffer.isView(v) && !(v instanceof DataView);
}

/** Own fields of an accumulator: numbers, per-slot typed arrays with their width, other typed arrays. */
function fieldsOf(acc: CellAccumulator): { numbers: string[]; perSlot: [string, number][]; whole: string[] } {
  const cap = acc.keyOf.length;
  const numbers: string[] = [], perSlot: [string, number][] = [], whole: string[] = [];
  for (const [name, v] of Object.entries(acc)) {
    if (SPECIAL.has(name)) continue;
    if (typeof v === 'number' || typeof v === 'boolean') numbers.push(name);
    else if (isTyped(v)) {
      if (v.length % cap === 0) perSlot.push([name, v.length / cap]);
      else whole.push(name);
    } else if (v !== undefined) throw new TypeError(`accumulatorState: field "${name}" of CellAccumulator is neither a number, a flag nor a typed array; teach grid/accumulatorState.ts how to carry it`);
  }
  return { numbers: numbers.sort(), perSlot: perSlot.sort((a, b) => (a[0] < b[0] ? -1 : 1)), whole: whole.sort() };
}

let layoutText: string | undefined;

/**
 * The layout of the accumulator in this build: field names, array types and per-slot widths, the slot layout of
 * `sums` (F, STRIDE), the fixed-point scales and the histogram constants. Partials carry it; the merge refuses another.
 */
export function accumulatorLayout(): string {
  if (layoutText) return layoutText;
  const a = new CellAccumulator(1, 1);
  const f = fieldsOf(a);
  const rec = a as unknown as Record<string, TypedArray>;
  layoutText = JSON.stringify({
    numbers: f.numbers,
    perSlot: f.perSlot.map(([n, w]) => [n, rec[n].constructor.name, w]),
    whole: f.whole.map((n) => [n, rec[n].constructor.name]),
    F, STRIDE, VR_SCALE, DIR_SCALE, POS_SCALE, SQ_SPLIT, MAX_SAMPLES_PER_KEY,
    hist: { FINE_SHIFT, MAX_DISTINCT, form: 'level+sorted-bins', counts: 'Uint32Array' },
  });
  return layoutText;
}

/** The accumulator's content as arrays (copies; the accumulator may be reset afterwards). */
export function accumulatorState(acc: CellAccumulator): ArrayState {
  // Open rays and runs closed: the sums are complete and the ray state can be dropped (as merge() does).
  acc.closeRays();
  const f = fieldsOf(acc);
  const rec = acc as unknown as Record<string, unknown>;
  const meta: Record<string, unknown> = {};
  for (const n of f.numbers) meta[n] = rec[n];
  const arrays: Record<string, TypedArray> = {};
  for (const [n, w] of f.perSlot) arrays[n] = (rec[n] as TypedArray).slice(0, acc.slots * w);
  for (const n of f.whole) arrays[n] = (rec[n] as TypedArray).slice();
  // Histograms: per slot its level and number of bins, then all bins and counts in slot order.
  const h = acc.hist;
  const level = new Uint8Array(acc.slots), nb = new Int32Array(acc.slots);
  const parts: { bins: Int32Array; counts: Float64Array }[] = [];
  let total = 0;
  for (let s = 0; s < acc.slots; s++) {
    const p = h.sorted(s);
    parts.push(p);
    level[s] = h.level[s];
    nb[s] = p.bins.length;
    total += p.bins.length;
  }
  // Counts fit 32 bits: at most MAX_SAMPLES_PER_KEY (2^27) samples per key.
  const bins = new Int32Array(total), counts = new Uint32Array(total);
  let o = 0;
  for (const p of parts) { bins.set(p.bins, o); counts.set(p.counts, o); o += p.bins.length; }
  Object.assign(arrays, { 'hist.level': level, 'hist.bins_per_slot': nb, 'hist.bins': bins, 'hist.counts': counts });
  return { meta, arrays };
}

/**
 * One accumulator holding the sum of several states of the same key space (the parts of one window read by
 * different shards). When no key occurs in two states (shards by instrument files: the usual case) the slots are
 * laid side by side, a copy; otherwise each state is restored and merged with CellAccumulator.merge.
 */
export function accumulatorFromStates(states: ArrayState[], into?: CellAccumulator): CellAccumulator {
  if (states.length === 1) return accumulatorFromState(states[0], into);
  const keyCount = states[0].meta.keyCount as number;
  const seen = new Uint8Array(keyCount);
  let clash = false;
  for (const st of states) {
    if (st.meta.keyCount !== keyCount) throw new RangeError('accumulator states of different key spaces');
    const keys = st.arrays.keyOf as Int32Array;
    for (let i = 0; i < keys.length && !clash; i++) {
      if (seen[keys[i]]) clash = true;
      seen[keys[i]] = 1;
    }
    if (clash) break;
  }
  if (clash) {
    const acc = accumulatorFromState(states[0], into);
    for (let k = 1; k < states.length; k++) acc.merge(accumulatorFromState(states[k]));
    return acc;
  }
  // Disjoint keys: concatenate the states' slots (a per-slot field of slot j of a state goes to the slot made for
  // its key, in order) and restore each histogram.
  const slots = states.reduce((a, st) => a + (st.meta.slots as number), 0);
  const keyOf = new Int32Array(slots);
  const perSlot = new Map<string, TypedArray>();
  const probe = fieldsOf(new CellAccumulator(1, 1));
  for (const [n, w] of probe.perSlot) {
    const first = states[0].arrays[n];
    if (!first) throw new RangeError(`accumulator state: field "${n}" missing`);
    perSlot.set(n, new (first.constructor as new (n: number) => TypedArray)(slots * w));
  }
  const hl = new Uint8Array(slots), hn = new Int32Array(slots);
  let nb = 0;
  for (const st of states) nb += st.arrays['hist.bins'].length;
  const hb = new Int32Array(nb), hc = new Uint32Array(nb);
  let o = 0, ob = 0;
  for (const st of states) {
    const m = st.meta.slots as number;
    keyOf.set(st.arrays.keyOf as Int32Array, o);
    for (const [n, w] of probe.perSlot) perSlot.get(n)!.set(st.arrays[n] as never, o * w);
    hl.set(st.arrays['hist.level'] as Uint8Array, o);
    hn.set(st.arrays['hist.bins_per_slot'] as Int32Array, o);
    hb.set(st.arrays['hist.bins'] as Int32Array, ob);
    hc.set(st.arrays['hist.counts'] as Uint32Array, ob);
    o += m;
    ob += st.arrays['hist.bins'].length;
  }
  const arrays: Record<string, TypedArray> = { ...states[0].arrays, ...Object.fromEntries(perSlot), keyOf, 'hist.level': hl, 'hist.bins_per_slot': hn, 'hist.bins': hb, 'hist.counts': hc };
  return accumulatorFromState({ meta: { ...states[0].meta, slots }, arrays }, into);
}

/**
 * An accumulator with exactly the content of `state` (written by accumulatorState under the same layout); `into`, an
 * accumulator of the same key space no longer needed, is emptied and reused (its allocations kept, as the ingest
 * recycles the accumulators of finished windows).
 */
export function accumulatorFromState(state: ArrayState, into?: CellAccumulator): CellAccumulator {
  const { meta, arrays } = state;
  const keyCount = meta.keyCount as number, instrumentCount = meta.instrumentCount as number, slots = meta.slots as number;
  const budget = meta.budget === undefined ? undefined : Boolean(meta.budget);
  let acc: CellAccumulator;
  if (into && into.keyCount === keyCount && into.instrumentCount === instrumentCount && (budget === undefined || into.budget === budget)) {
    into.reset();
    acc = into;
  } else acc = new CellAccumulator(keyCount, instrumentCount, budget);
  const keyOf = arrays.keyOf as Int32Array;
  if (!keyOf || keyOf.length !== slots) throw new RangeError('accumulator state: keyOf does not hold one key per slot');
  for (let s = 0; s < slots; s++) {
    const k = keyOf[s];
    if (!(k >= 0 && k < keyCount) || acc.slotOf[k] >= 0) throw new RangeError(`accumulator state: bad or repeated key ${k}`);
    acc.slot(k); // slots are created in the stored order and every per-slot array grows with them
  }
  const f = fieldsOf(acc);
  const rec = acc as unknown as Record<string, unknown>;
  for (const n of f.numbers) if (n !== 'slots' && n !== 'keyCount' && n !== 'instrumentCount' && n !== 'budget') rec[n] = meta[n];
  for (const [n, w] of f.perSlot) {
    const src = arrays[n];
    if (!src || src.length !== slots * w) throw new RangeError(`accumulator state: field "${n}" missing or of the wrong length`);
    (rec[n] as TypedArray).set(src as never);
  }
  for (const n of f.whole) {
    const src = arrays[n];
    if (!src) throw new RangeError(`accumulator state: field "${n}" missing`);
    rec[n] = src.slice();
  }
  const level = arrays['hist.level'], nb = arrays['hist.bins_per_slot'], bins = arrays['hist.bins'], counts = arrays['hist.counts'];
  const h: VrHistograms = acc.hist;
  let o = 0;
  for (let s = 0; s < slots; s++) {
    const m = nb[s];
    h.restoreSlot(s, level[s], bins.subarray(o, o + m), counts.subarray(o, o + m));
    o += m;
  }
  return acc;
}
