/**
 * Wind profile from one instrument: per height bin, a uniform wind U = (u, v, w) fitted by weighted least squares to
 * the sector means of the radial velocity, v_r = n . U with n the sector's mean beam unit vector (site frame).
 *
 * On a cone at elevation phi, n = (cos phi sin theta, cos phi cos theta, sin phi), so the fit is the velocity-azimuth
 * display fit v_r(theta) = a0 + a1 cos theta + b1 sin theta with u = b1 / cos phi, v = a1 / cos phi, w = a0 / sin phi
 * (Browning & Wexler 1968, J. Appl. Meteor. 7, 105-113 [confirmed citation; notation from memory]); a0 also holds the
 * divergence term when the wind is not uniform over the ring. For a Doppler-beam-swinging set of four beams 90 degrees
 * apart at zenith angle z the same fit gives u = (v_E - v_W) / (2 sin z), v = (v_N - v_S) / (2 sin z) (common
 * practice); a vertical beam enters as one more row. Each sector enters once, weighted by n_s / s_s^2 from its own
 * scatter (floored at sigmaFloor), so a sector scanned longer does not dominate the geometry; the unnormalised mean
 * beam keeps mean(v_r) = mean(n) . U exact for a uniform wind.
 *
 * Uncertainties: Cov(U) = (A^T W A)^-1, multiplied by chi^2/dof when that exceeds 1 (the residual then shows a
 * scatter between sectors larger than within them: turbulence or an inhomogeneous wind). Speed S = |(u, v)| and
 * direction D = atan2(-u, -v) with first-order propagation (GUM, JCGM 100:2008, law of propagation of uncertainty):
 * s_S^2 = (u^2 s_u^2 + v^2 s_v^2 + 2 u v c_uv) / S^2, s_D^2 = (v^2 s_u^2 + u^2 s_v^2 - 2 u v c_uv) / S^4 (rad^2).
 *
 * Homogeneity check: R^2 = 1 - sum n_s r_s^2 / sum n_s (vbar_s - vbar)^2 over the sectors; below minR2 the height is
 * flagged inhomogeneous (values kept). Flags and their rules: types.ts.
 */
import { invertSym3 } from '../geometry/amplification.ts';
import type { CellStats } from '../retrieval/cellStats.ts';
import type { ProfilerLayout } from './target.ts';
import type { ProfileFlag, ProfilePoint } from './types.ts';

const DEG = 180 / Math.PI;

export interface ProfileSolveOptions {
  /** Floor on the per-sector standard deviation of v_r, m/s. @default 0.01 */
  sigmaFloor_ms?: number;
}

/** Speed and direction (from) with their propagated standard uncertainties from (u, v) and their covariance. */
export function speedDirection(u: number, v: number, vuu: number, vvv: number, cuv: number): { speed: number; sspeed: number; dir: number; sdir: number } {
  const S = Math.hypot(u, v);
  let dir = Math.atan2(-u, -v) * DEG;
  if (dir < 0) dir += 360;
  const sspeed = S > 0 ? Math.sqrt(Math.max(0, u * u * vuu + v * v * vvv + 2 * u * v * cuv)) / S : NaN;
  const sdir = S > 0 ? (Math.sqrt(Math.max(0, v * v * vuu + u * u * vvv - 2 * u * v * cuv)) / (S * S)) * DEG : NaN;
  return { speed: S, sspeed, dir, sdir };
}

/** Largest gap between azimuths (degrees, any order), on the circle; 360 for one azimuth or none. */
export function largestGap(az: number[]): number {
  if (az.length < 2) return 360;
  const s = az.map((a) => ((a % 360) + 360) % 360).sort((a, b) => a - b);
  let g = 360 - s[s.length - 1] + s[0];
  for (let i = 1; i < s.length; i++) g = Math.max(g, s[i] - s[i - 1]);
  return g;
}

/** Middle of the largest gap between azimuths, degrees in [0, 360). */
export function gapMiddle(az: number[]): number {
  if (az.length === 0) return NaN;
  const s = az.map((a) => ((a % 360) + 360) % 360).sort((a, b) => a - b);
  let best = 360 - s[s.length - 1] + s[0], mid = s[s.length - 1] + best / 2;
  for (let i = 1; i < s.length; i++) if (s[i] - s[i - 1] > best) { best = s[i] - s[i - 1]; mid = s[i - 1] + best / 2; }
  return mid % 360;
}

function emptyPoint(id: string, h: number, flag: ProfileFlag, reason: string): ProfilePoint {
  return {
    instrumentId: id, height_m: h, sampleHeight_m: NaN, radius_m: NaN, u_ms: NaN, v_ms: NaN, w_ms: NaN, su_ms: NaN, sv_ms: NaN, sw_ms: NaN,
    speed_ms: NaN, sspeed_ms: NaN, direction_deg: NaN, sdirection_deg: NaN, sectors: 0, samples: 0, rmse_ms: NaN, r2: NaN,
    chi2dof: NaN, maxGap_deg: NaN, flag, reason,
  };
}

/** Solves every height of one profiler from a window's (or an ensemble's) kept-sample statistics. */
export function solveProfile(st: CellStats, layout: ProfilerLayout, opts: ProfileSolveOptions = {}): ProfilePoint[] {
  const ins = layout.instrument, p = ins.profile!;
  const I = st.instrumentCount, S = layout.sectors;
  const floor = opts.sigmaFloor_ms ?? 0.01;
  const out: ProfilePoint[] = [];
  for (let hb = 0; hb < layout.heights.length; hb++) {
    const h = layout.heights[hb];
    const rows: number[] = [], y: number[] = [], wt: number[] = [], cnt: number[] = [], az: number[] = [];
    // Heights: of the slanted sectors (they give u and v; a DBS set's vertical beam reaches a bin from other gates).
    let vertical = false, radius = 0, height = 0, nSlant = 0, heightAll = 0, nAll = 0;
    for (let s = 0; s <= S; s++) {
      const key = (layout.offset + hb * (S + 1) + s) * I + ins.index;
      const n = st.n[key];
      if (!(n >= p.minSamplesPerSector)) continue;
      const m = st.sv[key] / n;
      const variance = n > 1 ? Math.max(0, st.sv2[key] - st.sv[key] * m) / (n - 1) : 0;
      const sd = Math.max(floor, Math.sqrt(variance));
      const a = st.sx[key] / n, b = st.sy[key] / n, c = st.sz[key] / n;
      rows.push(a, b, c); y.push(m); wt.push(n / (sd * sd)); cnt.push(n);
      radius += st.spy[key]; heightAll += st.spz[key]; nAll += n;
      if (s < S) { height += st.spz[key]; nSlant += n; }
      if (s === S) vertical = true;
      else az.push(Math.atan2(a, b) * DEG);
    }
    const K = y.length;
    if (K === 0) { out.push(emptyPoint(ins.id, h, 'no_data', `no sector with ${p.minSamplesPerSector} samples`)); continue; }
    const gap = largestGap(az);
    const sampleHeight = nSlant > 0 ? height / nSlant : heightAll / nAll;
    if (K < p.minSectors) {
      const pt = emptyPoint(ins.id, h, 'too_few_azimuths', `${K} sectors with data < ${p.minSectors} needed for the fit and its residual`);
      out.push({ ...pt, sampleHeight_m: sampleHeight, sectors: K, samples: nAll, maxGap_deg: gap });
      continue;
    }
    let flag: ProfileFlag = 'ok', reason = '';
    if (p.mode === 'dbs') {
      if (gap >= 135) {
        const pt = emptyPoint(ins.id, h, 'missing_beam', `DBS: ${az.length} slanted beams with data, a gap of ${gap.toFixed(0)} deg around azimuth ${gapMiddle(az).toFixed(0)} (a beam is missing): no fit`);
        out.push({ ...pt, sampleHeight_m: sampleHeight, sectors: K, samples: nAll, maxGap_deg: gap });
        continue;
      }
      if (p.pattern?.vertical && !vertical) { flag = 'missing_beam'; reason = 'DBS: the declared vertical beam has no data; w from the slanted beams'; }
    } else if (gap > p.maxAzimuthGap_deg) {
      flag = 'azimuth_gap'; reason = `largest azimuth gap ${gap.toFixed(0)} deg > ${p.maxAzimuthGap_deg}: fit poorly conditioned`;
    }
    // Weighted normal equations.
    const N = new Float64Array(9), bvec = [0, 0, 0];
    for (let k = 0; k < K; k++) {
      const a = rows.slice(3 * k, 3 * k + 3);
      for (let i = 0; i < 3; i++) {
        bvec[i] += wt[k] * a[i] * y[k];
        for (let j = 0; j < 3; j++) N[3 * i + j] += wt[k] * a[i] * a[j];
      }
    }
    const inv = invertSym3(N);
    if (!Number.isFinite(inv[0])) {
      const pt = emptyPoint(ins.id, h, 'singular', 'beam directions do not determine u, v and w');
      out.push({ ...pt, sampleHeight_m: sampleHeight, sectors: K, samples: nAll, maxGap_deg: gap });
      continue;
    }
    const U = [0, 1, 2].map((i) => inv[3 * i] * bvec[0] + inv[3 * i + 1] * bvec[1] + inv[3 * i + 2] * bvec[2]);
    let chi2 = 0, ssr = 0, sst = 0, ybar = 0;
    for (let k = 0; k < K; k++) ybar += cnt[k] * y[k] / nAll;
    for (let k = 0; k < K; k++) {
      const r = y[k] - (rows[3 * k] * U[0] + rows[3 * k + 1] * U[1] + rows[3 * k + 2] * U[2]);
      chi2 += wt[k] * r * r;
      ssr += cnt[k] * r * r;
      sst += cnt[k] * (y[k] - ybar) ** 2;
    }
    const dof = K - 3;
    const chi2dof = dof > 0 ? chi2 / dof : NaN;
    const scale = dof > 0 ? Math.max(1, chi2dof) : 1;
    const r2 = sst > 0 ? 1 - ssr / sst : NaN;
    if (flag === 'ok' && r2 < p.minR2) { flag = 'inhomogeneous'; reason = `R^2 ${r2.toFixed(3)} < ${p.minR2}: a uniform wind does not explain the ring`; }
    const sd = speedDirection(U[0], U[1], inv[0] * scale, inv[4] * scale, inv[1] * scale);
    out.push({
      instrumentId: ins.id, height_m: h, sampleHeight_m: sampleHeight, radius_m: radius / nAll,
      u_ms: U[0], v_ms: U[1], w_ms: U[2],
      su_ms: Math.sqrt(inv[0] * scale), sv_ms: Math.sqrt(inv[4] * scale), sw_ms: Math.sqrt(inv[8] * scale),
      speed_ms: sd.speed, sspeed_ms: sd.sspeed, direction_deg: sd.dir, sdirection_deg: sd.sdir,
      sectors: K, samples: nAll, rmse_ms: Math.sqrt(ssr / nAll), r2, chi2dof, maxGap_deg: gap, flag, reason,
    });
  }
  return out;
}
