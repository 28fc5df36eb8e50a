/**
 * Per-(plane, cell, instrument) statistics of the kept samples of one window: count n, mean radial velocity, mean
 * beam unit vector (rotor frame) and its length, and the sample variance s^2 of v_r (denominator n - 1; NaN for
 * n = 1). Two passes per group (mean, then squared deviations) for numerical stability.
 *
 * The mean vector is kept unnormalised for the solve: for a wind uniform over the cell, mean(v_r) = mean(n) . U
 * exactly, while the renormalised mean would bias v_r by the factor |mean(n)| = 1 - (angular variance)/2 (about
 * 1e-4 for a 1 degree spread). The renormalised direction (nx/len, ...) describes the geometry (amplification,
 * condition, crossing angle).
 */
import type { WindowSamples } from '../grid/windowSamples.ts';
import type { SampleGroups } from './group.ts';

export interface InstrumentMeans {
  n: Uint32Array;
  vr: Float64Array;
  nx: Float64Array;
  ny: Float64Array;
  nz: Float64Array;
  variance: Float64Array;
  /** Length of the mean unit vector (1 when every sample has the same beam direction). */
  len: Float64Array;
}

export function instrumentMeans(
  samples: WindowSamples, vrSorted: Float64Array, keep: Uint8Array, groups: SampleGroups,
): InstrumentMeans {
  const K = groups.keyCount;
  const out: InstrumentMeans = {
    n: new Uint32Array(K), vr: new Float64Array(K).fill(NaN), nx: new Float64Array(K).fill(NaN),
    ny: new Float64Array(K).fill(NaN), nz: new Float64Array(K).fill(NaN), variance: new Float64Array(K).fill(NaN),
    len: new Float64Array(K).fill(NaN),
  };
  const { start, order } = groups;
  const { nx, ny, nz } = samples;
  for (let k = 0; k < K; k++) {
    const s = start[k], e = start[k + 1];
    if (e === s) continue;
    let cnt = 0, sv = 0, sx = 0, sy = 0, sz = 0;
    for (let p = s; p < e; p++) {
      if (!keep[p]) continue;
      const i = order[p];
      cnt++;
      sv += vrSorted[p]; sx += nx[i]; sy += ny[i]; sz += nz[i];
    }
    if (cnt === 0) continue;
    const m = sv / cnt;
    let ss = 0;
    for (let p = s; p < e; p++) if (keep[p]) ss += (vrSorted[p] - m) ** 2;
    out.n[k] = cnt;
    out.vr[k] = m;
    out.nx[k] = sx / cnt; out.ny[k] = sy / cnt; out.nz[k] = sz / cnt;
    out.len[k] = Math.hypot(sx, sy, sz) / cnt;
    out.variance[k] = cnt > 1 ? ss / (cnt - 1) : NaN;
  }
  return out;
}
