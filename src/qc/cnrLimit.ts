/**
 * The CNR limit of one instrument from its evidence (cnrEvidence.ts): the lowest CNR whose samples are still
 * consistent with their neighbours.
 *
 * 1. Inconsistent sample: |normalised deviation| > INCONSISTENT (4 good-signal standard deviations; for Gaussian
 *    good data a share of 6e-5, turbulence tails and wake gradients make it a few per cent).
 * 2. CNR bins are pooled from the top down into classes of at least `minClassSamples` samples (sparse ends merge).
 * 3. Reference share p0: the inconsistent share of the strongest-signal classes holding a quarter of the samples.
 * 4. Junk estimate per class: J = n * clamp((s_low - p0) / (q - p0), 0, 1), s_low the class's inconsistent share
 *    minus two binomial standard errors (a class is called bad only when it is significantly worse than p0), q the
 *    inconsistent share of junk itself, estimated as the highest class share (at least 0.5). Uniformly random
 *    velocities over +/-20 m/s with sigma_g = 0.5 m/s give q of about 0.9.
 * 5. The limit is the class edge L minimising  junkCost * sum_{above L} J + sum_{below L} (n - J): accepted junk
 *    against rejected good samples. junkCost 10 (default): a junk sample that passes the robust filter adds a
 *    deviation up to 3.5 scaled MADs (variance ~(5 sigma)^2 / 3, about 8 good samples' worth), and junk not centred
 *    on the wind also biases; losing one good sample of N costs a factor N/(N-1) in variance.
 * 6. Inside the class just below the limit, when it pools several 1-dB bins (sparse CNR ranges), the same cost over
 *    the class's bin edges, each bin's junk from its own inconsistent share, refines the limit (ties: the higher edge).
 * No edge above the lowest class wins: no clear break; the limit is then the permissive fallback (the lower of
 * `fallback_db` and the lowest CNR seen). Fewer than `minSamples` referenced samples: the limit without evidence.
 *
 * Pure: evidence in, decision with its evidence curve out.
 */
import { CNR_STEP_DB, DEV_BINS, DEV_SPAN, DEV_STEP, cnrEvidence, type CnrEvidence, type CnrEvidenceOptions, type SampleColumnsIn } from './cnrEvidence.ts';

/** |normalised deviation| above which a sample is inconsistent with its neighbours. */
export const INCONSISTENT = 4;

export interface CnrLimitOptions {
  /** Cost of accepting one junk sample in good samples rejected. @default 10 */
  junkCost?: number;
  /** Fewest samples of a CNR class judged on its own. @default 200 */
  minClassSamples?: number;
  /** Fewest referenced samples for an estimate. @default 2000 */
  minSamples?: number;
  /** Limit when the data show no break (all consistent), dB; the lowest CNR seen is used when lower. @default -35 */
  fallback_db?: number;
  /** Limit when there are too few samples (or no CNR), dB. @default -27 */
  withoutEvidence_db?: number;
}

export type CnrLimitStatus = 'break' | 'no-break' | 'too-few-samples' | 'no-cnr';

/** One CNR class of the evidence curve. */
export interface CnrClass {
  lo_db: number;
  hi_db: number;
  samples: number;
  /** Share of inconsistent samples, 0..1. */
  inconsistentShare: number;
  /** Robust scatter of the deviations in the class: 1.4826 * median |d|, m/s (from the histogram, to DEV_STEP * sigma_g). */
  scatter_ms: number;
  /** Estimated junk share, 0..1 (step 4). */
  junkShare: number;
}

export interface CnrLimitDecision {
  min_db: number;
  status: CnrLimitStatus;
  /** Reference inconsistent share p0 and junk share q (steps 3 and 4). */
  referenceShare: number;
  junkInconsistentShare: number;
  /** Estimated junk samples accepted above the limit and good samples rejected below it (step 5), in the evidence. */
  junkAccepted: number;
  goodRejected: number;
  classes: CnrClass[];
}

/** Median |normalised deviation| of a histogram row sum (bins of DEV_STEP; interpolated within the bin). */
function medianAbs(abs: Float64Array, total: number): number {
  let acc = 0;
  for (let k = 0; k < abs.length; k++) {
    if (acc + abs[k] >= total / 2) return (k + (total / 2 - acc) / Math.max(1, abs[k])) * DEV_STEP;
    acc += abs[k];
  }
  return abs.length * DEV_STEP;
}

export function chooseCnrLimit(ev: CnrEvidence, options: CnrLimitOptions = {}): CnrLimitDecision {
  const junkCost = options.junkCost ?? 10, minClass = options.minClassSamples ?? 200, minSamples = options.minSamples ?? 2000;
  const fallback = options.fallback_db ?? -35, without = options.withoutEvidence_db ?? -27;
  const none = (status: CnrLimitStatus): CnrLimitDecision => ({
    min_db: without, status, referenceShare: NaN, junkInconsistentShare: NaN, junkAccepted: 0, goodRejected: 0, classes: [],
  });
  if (ev.samples === 0) return none('no-cnr');
  if (ev.referenced < minSamples) return none('too-few-samples');

  // Per CNR bin: total, inconsistent, and |deviation| counts folded about zero (for the class scatter).
  const half = (DEV_BINS - 2) / 2; // regular bins per side
  const firstOut = half - INCONSISTENT / DEV_STEP; // regular bins 1..firstOut on the negative side are beyond -4
  const rows: { lo: number; n: number; bad: number; abs: Float64Array }[] = [];
  for (let b = 0; b < ev.cnrBins; b++) {
    const row = ev.counts.subarray(b * DEV_BINS, (b + 1) * DEV_BINS);
    let n = 0, bad = 0;
    const abs = new Float64Array(half + 1);
    for (let k = 0; k < DEV_BINS; k++) {
      const c = row[k];
      n += c;
      if (k === 0 || k === DEV_BINS - 1) { bad += c; abs[half] += c; continue; }
      if (k <= firstOut || k >= DEV_BINS - 1 - firstOut) bad += c;
      const off = k - 1 - half; // -half .. half-1: the bin [off, off + 1) * DEV_STEP
      abs[off >= 0 ? off : -off - 1] += c;
    }
    rows.push({ lo: ev.cnrLo_db + b * CNR_STEP_DB, n, bad, abs });
  }
  // Classes from the top down, each with at least minClass samples (the last, lowest one may fall short: merged up).
  type Cls = { lo: number; hi: number; n: number; bad: number; abs: Float64Array };
  const cls: Cls[] = [];
  let cur: Cls | undefined;
  for (let b = rows.length - 1; b >= 0; b--) {
    const r = rows[b];
    cur ??= { lo: r.lo, hi: r.lo + CNR_STEP_DB, n: 0, bad: 0, abs: new Float64Array(half + 1) };
    cur.lo = r.lo; cur.n += r.n; cur.bad += r.bad;
    for (let k = 0; k <= half; k++) cur.abs[k] += r.abs[k];
    if (cur.n >= minClass) { cls.push(cur); cur = undefined; }
  }
  if (cur && cur.n > 0) {
    if (cls.length) {
      const last = cls[cls.length - 1];
      last.lo = cur.lo; last.n += cur.n; last.bad += cur.bad;
      for (let k = 0; k <= half; k++) last.abs[k] += cur.abs[k];
    } else cls.push(cur);
  }
  cls.reverse(); // ascending CNR
  const total = cls.reduce((s, c) => s + c.n, 0);
  // Reference share: strongest classes holding a quarter of the samples.
  let refN = 0, refBad = 0;
  for (let k = cls.length - 1; k >= 0 && refN < total / 4; k--) { refN += cls[k].n; refBad += cls[k].bad; }
  const p0 = refBad / refN;
  const lowShare = cls.map((c) => {
    const s = c.bad / c.n;
    return Math.max(0, s - 2 * Math.sqrt((s * (1 - s)) / c.n));
  });
  const q = Math.max(0.5, ...cls.map((c) => c.bad / c.n));
  const junk = cls.map((c, k) => c.n * Math.min(1, Math.max(0, (lowShare[k] - p0) / Math.max(1e-9, q - p0))));
  // Cost of each edge: keep classes k.. (k = 0 keeps everything).
  let best = 0, bestCost = Infinity;
  let above = junk.reduce((s, x) => s + x, 0), below = 0;
  for (let k = 0; k < cls.length; k++) {
    const cost = junkCost * above + below;
    if (cost < bestCost) { bestCost = cost; best = k; }
    above -= junk[k];
    below += cls[k].n - junk[k];
  }
  const classes: CnrClass[] = cls.map((c, k) => ({
    lo_db: c.lo, hi_db: c.hi, samples: c.n, inconsistentShare: c.bad / c.n,
    scatter_ms: 1.482602218505602 * medianAbs(c.abs, c.n) * ev.scatter_ms, junkShare: junk[k] / c.n,
  }));
  let junkAccepted = 0, goodRejected = 0;
  for (let k = 0; k < cls.length; k++) {
    if (k >= best) junkAccepted += junk[k];
    else goodRejected += cls[k].n - junk[k];
  }
  const base = { referenceShare: p0, junkInconsistentShare: q, junkAccepted, goodRejected, classes };
  if (best === 0) return { min_db: Math.min(fallback, cls[0].lo), status: 'no-break', ...base };
  // Refinement inside the pooled class just below the limit (sparse CNR ranges pool several bins): the same cost as
  // step 5 over the class's 1-dB bin edges, each bin's junk from its own share (point estimate); ties keep the
  // higher edge.
  const under = cls[best - 1];
  let limit = cls[best].lo, refineBest = 0, cost = 0;
  for (let b = Math.round((under.hi - ev.cnrLo_db) / CNR_STEP_DB) - 1; b >= 0 && rows[b].lo > under.lo; b--) {
    const r = rows[b];
    if (r.n === 0) continue;
    const J = r.n * Math.min(1, Math.max(0, (r.bad / r.n - p0) / Math.max(1e-9, q - p0)));
    cost += junkCost * J - (r.n - J); // moving the edge below bin b: its junk accepted, its good no longer rejected
    if (cost < refineBest) { refineBest = cost; limit = r.lo; }
  }
  return { min_db: limit, status: 'break', ...base };
}

/** The evidence's normalised-deviation bin edges, for figures: [lo, hi) of bin k (k = 1 .. DEV_BINS - 2). */
export function devBinEdges(k: number): [number, number] {
  return [-DEV_SPAN + (k - 1) * DEV_STEP, -DEV_SPAN + k * DEV_STEP];
}

/** The limit of one instrument from its samples: evidence (cnrEvidence.ts), then the decision. */
export function estimateCnrLimit(s: SampleColumnsIn, evidenceOptions: CnrEvidenceOptions = {}, options: CnrLimitOptions = {}): { evidence: CnrEvidence; decision: CnrLimitDecision } {
  const evidence = cnrEvidence(s, evidenceOptions);
  return { evidence, decision: chooseCnrLimit(evidence, options) };
}
