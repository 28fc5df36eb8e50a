/**
 * Reconstruction for a nacelle-mounted forward-looking instrument, per window.
 *
 * Per range gate and beam pair (two beams at the same gate): the horizontal wind (u east, v north) from the two mean
 * radial velocities, v_i = a_i . (u, v, 0), a_i the beams' mean site-frame unit vectors (turned with the nacelle at
 * each sample): w = 0 is assumed (a vertical wind w adds w sin(el) to each beam; stated in the outputs). For two
 * horizontal beams at +/- alpha from the axis this is tan gamma = (v_1 - v_2) / ((v_1 + v_2) tan alpha),
 * U = -(v_1 + v_2) / (2 cos phi cos alpha cos gamma) (common practice; the horizontal-wind and relative-direction
 * definitions of IEC 61400-50-3:2022 for two-beam nacelle lidars [from memory]). Homogeneous flow across the beam
 * separation is assumed. Covariance of (u, v): (A^T W A)^-1, W = n / s^2 from each beam's scatter.
 *
 * Four beams (an upper and a lower pair): shear exponent alpha = ln(S_up / S_low) / ln(z_up / z_low) of the power
 * law V(z) = V_hub (z / H)^alpha (IEC 61400-1 normal wind profile form [from memory]), hub speed corrected for it
 * V_hub = S_low (H / z_low)^alpha; uncertainties by first-order propagation of the pairs' independent speed
 * uncertainties (GUM, JCGM 100:2008).
 *
 * At the chosen upstream distance x* (nacelle.distance_D rotor diameters): values interpolated linearly in the gates'
 * upstream distance between the two ok gates around x* (the nearest gate, flagged, when x* lies outside them).
 * Yaw misalignment = window-mean nacelle direction minus the wind direction at x*, wrapped to (-180, 180]; its
 * uncertainty is the direction's (the nacelle direction taken as exact). Free-stream estimate: the hub speed
 * (shear-corrected with 4 beams) divided by the on-axis induction ratio at x* (induction.ts), with Ct from the
 * campaign's thrust curve at the measured speed.
 */
import type { CellStats } from '../retrieval/cellStats.ts';
import { speedDirection } from '../profile/solve.ts';
import { inductionFactor, inductionRatio } from './induction.ts';
import type { NacelleLayout } from './target.ts';
import type { NacelleFlag, NacelleGate, NacelleWindow, PairWind } from './types.ts';

export interface NacelleSolveContext {
  hubHeight_m: number;
  rotorDiameter_m: number;
  /** Thrust coefficient at a hub-height speed (the campaign's curve). */
  ctAt(speed_ms: number): number;
  /** Window-mean nacelle direction from the turbine series, degrees (NaN when none). */
  nacelle_deg: number;
  /** A turbine-series gap inside the window, described (empty when none). */
  seriesGap: string;
  /** Minimum kept samples for a beam at a gate. @default 3 */
  minSamples?: number;
  /** Floor on a beam's standard deviation of v_r, m/s. @default 0.01 */
  sigmaFloor_ms?: number;
}

interface BeamMean { n: number; vr: number; a: [number, number, number]; w: number; up: number; z: number }

export function wrap180(d: number): number {
  let x = ((d % 360) + 360) % 360;
  if (x > 180) x -= 360;
  return x;
}

/** Horizontal wind of a beam pair, w = 0 assumed; null when the pair is singular. */
export function pairWind(b1: BeamMean, b2: BeamMean): { u: number; v: number; vuu: number; vvv: number; cuv: number } | null {
  const A = [b1.a[0], b1.a[1], b2.a[0], b2.a[1]];
  const det = A[0] * A[3] - A[1] * A[2];
  if (!(Math.abs(det) > 1e-9)) return null;
  const inv = [A[3] / det, -A[1] / det, -A[2] / det, A[0] / det];
  const u = inv[0] * b1.vr + inv[1] * b2.vr, v = inv[2] * b1.vr + inv[3] * b2.vr;
  // Cov = A^-1 diag(1/w) A^-T.
  const s1 = 1 / b1.w, s2 = 1 / b2.w;
  const vuu = inv[0] * inv[0] * s1 + inv[1] * inv[1] * s2;
  const vvv = inv[2] * inv[2] * s1 + inv[3] * inv[3] * s2;
  const cuv = inv[0] * inv[2] * s1 + inv[1] * inv[3] * s2;
  return { u, v, vuu, vvv, cuv };
}

/** Shear exponent between two heights and the corrected hub speed, with propagated uncertainties. */
export function shearCorrection(sUp: number, ssUp: number, zUp: number, sLow: number, ssLow: number, zLow: number, H: number) {
  const L = Math.log(zUp / zLow);
  const alpha = Math.log(sUp / sLow) / L;
  const salpha = Math.hypot(ssUp / sUp, ssLow / sLow) / Math.abs(L);
  const hub = sLow * Math.pow(H / zLow, alpha);
  // d hub / d sUp = hub * (ln(H/zLow)/L) / sUp ; d hub / d sLow = hub * (1 - ln(H/zLow)/L) / sLow.
  const q = Math.log(H / zLow) / L;
  const shub = Math.hypot((hub * q * ssUp) / sUp, (hub * (1 - q) * ssLow) / sLow);
  return { alpha, salpha, hub, shub };
}

export function solveNacelle(st: CellStats, layout: NacelleLayout, window: NacelleWindow['window'], ctx: NacelleSolveContext): NacelleWindow {
  const ins = layout.instrument, cfg = ins.nacelle!;
  const I = st.instrumentCount, G = layout.ranges.length;
  const minN = ctx.minSamples ?? 3, floor = ctx.sigmaFloor_ms ?? 0.01;
  const H = ctx.hubHeight_m, D = ctx.rotorDiameter_m;
  const beams = cfg.beams;
  const groups: { name: string; idx: number[] }[] = beams.length === 2
    ? [{ name: 'hub', idx: [0, 1] }]
    : [{ name: 'upper', idx: beams.map((b, k) => (b.elevation_deg > 0 ? k : -1)).filter((k) => k >= 0) }, { name: 'lower', idx: beams.map((b, k) => (b.elevation_deg < 0 ? k : -1)).filter((k) => k >= 0) }];
  let samples = 0;
  const gates: NacelleGate[] = [];
  const missing: string[] = [];
  for (let g = 0; g < G; g++) {
    const means: (BeamMean | null)[] = beams.map((_, b) => {
      const key = (layout.offset + b * G + g) * I + ins.index;
      const n = st.n[key];
      samples += n;
      if (!(n >= minN)) return null;
      const m = st.sv[key] / n;
      const variance = n > 1 ? Math.max(0, st.sv2[key] - st.sv[key] * m) / (n - 1) : 0;
      const sd = Math.max(floor, Math.sqrt(variance));
      return { n, vr: m, a: [st.sx[key] / n, st.sy[key] / n, st.sz[key] / n], w: n / (sd * sd), up: st.spy[key] / n, z: st.spz[key] / n };
    });
    const pairs: PairWind[] = [];
    const notes: string[] = [];
    for (const grp of groups) {
      const [b1, b2] = grp.idx.map((k) => means[k]);
      if (!b1 || !b2) { notes.push(`${grp.name} pair: beam ${grp.idx.filter((k) => !means[k]).map((k) => k + 1).join(', ')} without data`); continue; }
      const pw = pairWind(b1, b2);
      if (!pw) { notes.push(`${grp.name} pair singular`); continue; }
      const sd = speedDirection(pw.u, pw.v, pw.vuu, pw.vvv, pw.cuv);
      pairs.push({ pair: grp.name, height_m: (b1.z * b1.n + b2.z * b2.n) / (b1.n + b2.n), u_ms: pw.u, v_ms: pw.v, speed_ms: sd.speed, sspeed_ms: sd.sspeed, direction_deg: sd.dir, sdirection_deg: sd.sdir, samples: b1.n + b2.n });
    }
    const present = means.filter((m): m is BeamMean => m !== null);
    const upstream = present.length ? present.reduce((s, m) => s + m.up * m.n, 0) / present.reduce((s, m) => s + m.n, 0) : NaN;
    const gate: NacelleGate = {
      range_m: layout.ranges[g], upstream_m: upstream, pairs, alpha: NaN, salpha: NaN, hubSpeed_ms: NaN, shubSpeed_ms: NaN, speedHeight_m: NaN,
      hubSpeedShear_ms: NaN, shubSpeedShear_ms: NaN, direction_deg: NaN, sdirection_deg: NaN, ok: pairs.length === groups.length, note: notes.join('; '),
    };
    if (notes.length && present.length) missing.push(`${layout.ranges[g]} m (${notes.join('; ')})`);
    if (pairs.length === groups.length) {
      if (pairs.length === 1) {
        const p = pairs[0];
        gate.hubSpeed_ms = p.speed_ms; gate.shubSpeed_ms = p.sspeed_ms; gate.direction_deg = p.direction_deg; gate.sdirection_deg = p.sdirection_deg;
        gate.speedHeight_m = p.height_m;
      } else {
        const [up, lo] = pairs;
        gate.hubSpeed_ms = (up.speed_ms + lo.speed_ms) / 2;
        gate.shubSpeed_ms = Math.hypot(up.sspeed_ms, lo.sspeed_ms) / 2;
        gate.speedHeight_m = (up.height_m + lo.height_m) / 2;
        const sc = shearCorrection(up.speed_ms, up.sspeed_ms, up.height_m, lo.speed_ms, lo.sspeed_ms, lo.height_m, H);
        gate.alpha = sc.alpha; gate.salpha = sc.salpha; gate.hubSpeedShear_ms = sc.hub; gate.shubSpeedShear_ms = sc.shub;
        // Direction of the mean horizontal wind of the two pairs.
        const u = (up.u_ms + lo.u_ms) / 2, v = (up.v_ms + lo.v_ms) / 2;
        const d = speedDirection(u, v, 0, 0, 0);
        gate.direction_deg = d.dir;
        gate.sdirection_deg = Math.hypot(up.sdirection_deg, lo.sdirection_deg) / 2;
      }
    }
    gates.push(gate);
  }

  const target = cfg.distance_D * D;
  const ok = gates.filter((g) => g.ok && Number.isFinite(g.upstream_m)).sort((a, b) => a.upstream_m - b.upstream_m);
  const base: NacelleWindow = {
    instrumentId: ins.id, window, nacelle_deg: ctx.nacelle_deg, distance_m: target, distance_D: cfg.distance_D,
    hubSpeed_ms: NaN, shubSpeed_ms: NaN, speedHeight_m: NaN, hubSpeedShear_ms: NaN, shubSpeedShear_ms: NaN, alpha: NaN, salpha: NaN,
    direction_deg: NaN, sdirection_deg: NaN, yawMisalignment_deg: NaN, syawMisalignment_deg: NaN,
    induction_a: NaN, inductionRatio: NaN, freeStream_ms: NaN, sfreeStream_ms: NaN, samples, gates, flag: 'ok', reason: '',
  };
  let flag: NacelleFlag = 'ok';
  const reasons: string[] = [];
  if (ctx.seriesGap) { flag = 'nacelle_series_gap'; reasons.push(ctx.seriesGap); }
  if (ok.length === 0) {
    return { ...base, flag: 'no_data', reason: [samples === 0 ? 'no samples on the declared beams and gates' : `no gate with both beams of every pair (${missing.join(', ') || 'too few samples'})`, ...reasons].join('; ') };
  }
  if (missing.length && flag === 'ok') { flag = 'missing_beam'; }
  if (missing.length) reasons.push(`gates left out: ${missing.join(', ')}`);
  // Interpolate in upstream distance.
  let lo = ok[0], hi = ok[0], f = 0;
  if (target <= ok[0].upstream_m || target >= ok[ok.length - 1].upstream_m) {
    const near = target <= ok[0].upstream_m ? ok[0] : ok[ok.length - 1];
    lo = hi = near;
    if (Math.abs(near.upstream_m - target) > 1) {
      if (flag === 'ok') flag = 'distance_outside_gates';
      reasons.push(`distance ${target.toFixed(0)} m outside the gates' ${ok[0].upstream_m.toFixed(0)}-${ok[ok.length - 1].upstream_m.toFixed(0)} m: nearest gate (${near.upstream_m.toFixed(0)} m) reported`);
    }
  } else {
    for (let k = 1; k < ok.length; k++) if (ok[k].upstream_m >= target) { lo = ok[k - 1]; hi = ok[k]; break; }
    f = hi.upstream_m > lo.upstream_m ? (target - lo.upstream_m) / (hi.upstream_m - lo.upstream_m) : 0;
  }
  const lerp = (a: number, b: number) => a + f * (b - a);
  const lerpSd = (a: number, b: number) => Math.hypot((1 - f) * a, f * b);
  const dirLo = lo.direction_deg, dirHi = hi.direction_deg;
  const direction = (((dirLo + f * wrap180(dirHi - dirLo)) % 360) + 360) % 360;
  const out: NacelleWindow = {
    ...base,
    hubSpeed_ms: lerp(lo.hubSpeed_ms, hi.hubSpeed_ms), shubSpeed_ms: lerpSd(lo.shubSpeed_ms, hi.shubSpeed_ms), speedHeight_m: lerp(lo.speedHeight_m, hi.speedHeight_m),
    hubSpeedShear_ms: lerp(lo.hubSpeedShear_ms, hi.hubSpeedShear_ms), shubSpeedShear_ms: lerpSd(lo.shubSpeedShear_ms, hi.shubSpeedShear_ms),
    alpha: lerp(lo.alpha, hi.alpha), salpha: lerpSd(lo.salpha, hi.salpha),
    direction_deg: direction, sdirection_deg: lerpSd(lo.sdirection_deg, hi.sdirection_deg),
    flag, reason: reasons.join('; '),
  };
  out.yawMisalignment_deg = wrap180(ctx.nacelle_deg - direction);
  out.syawMisalignment_deg = out.sdirection_deg;
  const measured = Number.isFinite(out.hubSpeedShear_ms) ? out.hubSpeedShear_ms : out.hubSpeed_ms;
  const smeasured = Number.isFinite(out.hubSpeedShear_ms) ? out.shubSpeedShear_ms : out.shubSpeed_ms;
  // Ct belongs to the free-stream speed: two fixed-point passes from the measured one.
  out.induction_a = inductionFactor(ctx.ctAt(measured));
  out.inductionRatio = inductionRatio(out.induction_a, target, D / 2);
  out.induction_a = inductionFactor(ctx.ctAt(measured / out.inductionRatio));
  out.inductionRatio = inductionRatio(out.induction_a, target, D / 2);
  out.freeStream_ms = measured / out.inductionRatio;
  out.sfreeStream_ms = smeasured / out.inductionRatio;
  return out;
}
