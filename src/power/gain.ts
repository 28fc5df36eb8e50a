/**
 * Power gain of wake steering for one downstream turbine against a reference, from per-window mean powers.
 *
 * Per (wind-direction, wind-speed) bin b and state (baseline: no yaw offset; steered: the yaw-offset level), the
 * energy ratio R = sum_w P_turbine(w) / sum_w P_reference(w) over the state's windows in the bin (a ratio of sums, so
 * windows weigh by the energy they carry; the "energy ratio" of field wake-steering studies, common practice). The
 * bin's gain is g_b = R_steered / R_baseline - 1. The combined gain over the direction-speed distribution weighs each
 * bin holding both states (at least minWindowsPerState windows each, default 2: one window has no spread to
 * resample) by its share f_b of all windows in those bins:
 *   G = sum_b f_b (R_steered,b - R_baseline,b) / sum_b f_b R_baseline,b,
 * the change in the turbine's energy relative to the reference had the site seen that distribution in both states.
 * Intervals and standard errors: the two-sample bootstrap (bootstrap.ts) resampling windows within each bin and
 * state, with the weights f_b kept fixed.
 *
 * Assumptions (stated with every result): the flow is stationary within each bin (the windows of the two states
 * differ only by the yaw offset); the reference turbine's power is unaffected by the yaw offset (not so when the
 * reference is the yawed upstream turbine itself: its own loss under yaw then raises the ratio); only windows in
 * which both turbines were available enter (windowPower.ts).
 */
import { bootstrapGroups, type BootstrapSettings } from './bootstrap.ts';

export interface GainWindow {
  /** Window id (ordinal in the run). */
  window: number;
  direction_deg: number;
  speed_ms: number;
  steered: boolean;
  power_kw: number;
  reference_kw: number;
  /** Measured lateral centre of the upstream turbine's wake at this turbine (rotor frame, metres), NaN if none. */
  centre_m: number;
}

export interface GainEdges {
  direction_deg: readonly number[];
  speed_ms: readonly number[];
}

export interface GainBin {
  directionLo: number;
  directionHi: number;
  speedLo: number;
  speedHi: number;
  nBaseline: number;
  nSteered: number;
  ratioBaseline: number;
  ratioSteered: number;
  gain: number;
  gainLo: number;
  gainHi: number;
  gainSe: number;
  /** Share of the bins' windows (weight in the combined gain); 0 when a state is missing. */
  weight: number;
  /** Mean measured wake centre at the turbine, steered minus baseline windows, metres; with the windows behind each. */
  deflection_m: number;
  nDeflectionBaseline: number;
  nDeflectionSteered: number;
}

export interface GainResult {
  bins: GainBin[];
  combined: { gain: number; lo: number; hi: number; se: number; nBaseline: number; nSteered: number; binsUsed: number; deflection_m: number };
  /** Windows outside every bin. */
  outside: number;
  replicates: number;
  confidence: number;
}

/** Bin index of v in ascending edges ([e_i, e_i+1)), -1 outside. Directions wrap: v and v - 360 are both tried. */
function binOf(edges: readonly number[], v: number, circular = false): number {
  const tries = circular ? [v, v - 360, v + 360] : [v];
  for (const x of tries) for (let i = 0; i + 1 < edges.length; i++) if (x >= edges[i] && x < edges[i + 1]) return i;
  return -1;
}

const mean = (a: number[]) => (a.length ? a.reduce((s, x) => s + x, 0) / a.length : NaN);

export function powerGain(windows: readonly GainWindow[], edges: GainEdges, boot: BootstrapSettings, minWindowsPerState = 2): GainResult {
  const nd = edges.direction_deg.length - 1, ns = edges.speed_ms.length - 1;
  const groups: { base: GainWindow[]; steer: GainWindow[] }[] = Array.from({ length: nd * ns }, () => ({ base: [], steer: [] }));
  let outside = 0;
  for (const w of windows) {
    const i = binOf(edges.direction_deg, w.direction_deg, true), j = binOf(edges.speed_ms, w.speed_ms);
    if (i < 0 || j < 0 || !Number.isFinite(w.power_kw) || !Number.isFinite(w.reference_kw)) { outside++; continue; }
    (w.steered ? groups[i * ns + j].steer : groups[i * ns + j].base).push(w);
  }
  const used = groups.map((g) => g.base.length >= minWindowsPerState && g.steer.length >= minWindowsPerState);
  const total = groups.reduce((s, g, k) => s + (used[k] ? g.base.length + g.steer.length : 0), 0);
  const weight = groups.map((g, k) => (used[k] ? (g.base.length + g.steer.length) / total : 0));
  // Groups for the bootstrap: per used bin its baseline and its steered windows.
  const members: GainWindow[][] = [];
  groups.forEach((g, k) => { if (used[k]) members.push(g.base, g.steer); });
  const ratio = (list: GainWindow[], idx: Int32Array) => {
    let a = 0, b = 0;
    for (let i = 0; i < idx.length; i++) { a += list[idx[i]].power_kw; b += list[idx[i]].reference_kw; }
    return a / b;
  };
  const usedIdx = groups.map((_, k) => k).filter((k) => used[k]);
  const stat = (ix: Int32Array[]) => {
    const out: number[] = [];
    let num = 0, den = 0;
    usedIdx.forEach((k, u) => {
      const rb = ratio(members[2 * u], ix[2 * u]), rs = ratio(members[2 * u + 1], ix[2 * u + 1]);
      out.push(rs / rb - 1);
      num += weight[k] * (rs - rb); den += weight[k] * rb;
    });
    out.push(num / den);
    return out;
  };
  const res = usedIdx.length ? bootstrapGroups(members.map((m) => m.length), stat, boot) : [];
  const bins: GainBin[] = [];
  groups.forEach((g, k) => {
    const i = Math.floor(k / ns), j = k % ns;
    const u = usedIdx.indexOf(k);
    const r = u >= 0 ? res[u] : undefined;
    const all = (list: GainWindow[]) => ratio(list, Int32Array.from(list.keys()));
    const cb = g.base.map((w) => w.centre_m).filter(Number.isFinite), cs = g.steer.map((w) => w.centre_m).filter(Number.isFinite);
    bins.push({
      directionLo: edges.direction_deg[i], directionHi: edges.direction_deg[i + 1], speedLo: edges.speed_ms[j], speedHi: edges.speed_ms[j + 1],
      nBaseline: g.base.length, nSteered: g.steer.length,
      ratioBaseline: g.base.length ? all(g.base) : NaN, ratioSteered: g.steer.length ? all(g.steer) : NaN,
      gain: r ? r.estimate : NaN, gainLo: r ? r.lo : NaN, gainHi: r ? r.hi : NaN, gainSe: r ? r.se : NaN, weight: weight[k],
      deflection_m: mean(cs) - mean(cb), nDeflectionBaseline: cb.length, nDeflectionSteered: cs.length,
    });
  });
  const c = res.length ? res[res.length - 1] : undefined;
  const defl = bins.filter((b) => Number.isFinite(b.deflection_m) && b.weight > 0);
  const wsum = defl.reduce((s, b) => s + b.weight, 0);
  return {
    bins,
    combined: {
      gain: c ? c.estimate : NaN, lo: c ? c.lo : NaN, hi: c ? c.hi : NaN, se: c ? c.se : NaN,
      nBaseline: usedIdx.reduce((s, k) => s + groups[k].base.length, 0), nSteered: usedIdx.reduce((s, k) => s + groups[k].steer.length, 0),
      binsUsed: usedIdx.length,
      deflection_m: wsum > 0 ? defl.reduce((s, b) => s + b.weight * b.deflection_m, 0) / wsum : NaN,
    },
    outside,
    replicates: boot.replicates,
    confidence: boot.confidence,
  };
}
