/**
 * Per-(plane, cell, instrument) statistics of the kept samples of one window: count n, mean radial velocity, mean
 * beam unit vector (rotor frame) and its length, and the sample variance s^2 of v_r (denominator n - 1; NaN for
 * n = 1). Two passes over the window in sample order (sums, then squared deviations from the group mean, for
 * numerical stability), accumulating into per-key arrays.
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
  /** Mean in-plane position of the kept samples, metres (NaN when positions were not recorded). */
  py: Float64Array;
  pz: Float64Array;
}

export function instrumentMeans(samples: WindowSamples, keep: Uint8Array, groups: SampleGroups): InstrumentMeans {
  const K = groups.keyCount;
  const n = new Uint32Array(K);
  const sv = new Float64Array(K), sx = new Float64Array(K), sy = new Float64Array(K), sz = new Float64Array(K);
  const spy = new Float64Array(K), spz = new Float64Array(K);
  const { keys } = groups;
  const { vr, nx, ny, nz, py, pz } = samples;
  const N = samples.length;
  // Accumulate in window order: sequential reads, per-key sums small enough to stay in cache.
  for (let i = 0; i < N; i++) {
    if (!keep[i]) continue;
    const k = keys[i];
    n[k]++; sv[k] += vr[i]; sx[k] += nx[i]; sy[k] += ny[i]; sz[k] += nz[i];
    spy[k] += py[i]; spz[k] += pz[i];
  }
  const len = new Float64Array(K).fill(NaN);
  for (let k = 0; k < K; k++) {
    const c = n[k];
    if (c === 0) { sv[k] = sx[k] = sy[k] = sz[k] = spy[k] = spz[k] = NaN; continue; }
    sv[k] /= c; sx[k] /= c; sy[k] /= c; sz[k] /= c; spy[k] /= c; spz[k] /= c;
    len[k] = Math.hypot(sx[k], sy[k], sz[k]);
  }
  const ss = new Float64Array(K);
  for (let i = 0; i < N; i++) {
    if (!keep[i]) continue;
    const k = keys[i];
    const d = vr[i] - sv[k];
    ss[k] += d * d;
  }
  for (let k = 0; k < K; k++) ss[k] = n[k] > 1 ? ss[k] / (n[k] - 1) : NaN;
  return { n, vr: sv, nx: sx, ny: sy, nz: sz, variance: ss, len, py: spy, pz: spz };
}
