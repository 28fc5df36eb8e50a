/**
 * Robust outlier filter per (plane, cell, instrument) group of one window: reject a sample when
 * |v_r - median| > k * sigma_hat, sigma_hat = 1.4826 * MAD (consistent with the standard deviation for Gaussian
 * data; common practice). Groups with fewer than robust.minSamples samples are not filtered.
 *
 * MAD = 0 (more than half of the group shares one value, e.g. quantised or noise-free data): the MAD gives no scale,
 * and rejecting every value that differs from the median would throw away real data. The scale then falls back to
 * 1.2533 * mean absolute deviation about the median (see qc/robust.ts), which is positive as soon as one value
 * differs, so an isolated spike in otherwise constant data is still rejected; a group of identical values loses
 * nothing. For k * 1.4826 >= 1 at least half of a group is kept (half of it lies within one MAD of the median by
 * definition), so a filtered group never becomes empty.
 */
import { medianInPlace, robustSigma } from '../qc/robust.ts';
import type { SampleGroups } from './group.ts';
import type { RobustSettings } from './settings.ts';

export interface RobustResult {
  /** 1 = kept, 0 = rejected; indexed by sample index. */
  keep: Uint8Array;
  /** Rejections per instrument. */
  outliers: Uint32Array;
}

/** Apply the filter to every group. */
export function robustFilter(groups: SampleGroups, robust: RobustSettings): RobustResult {
  const { vrSorted, order } = groups;
  const n = vrSorted.length;
  const keep = new Uint8Array(n).fill(1);
  const outliers = new Uint32Array(groups.instrumentCount);
  if (!robust.enabled) return { keep, outliers };
  const { start, keyCount, instrumentCount: I } = groups;
  let maxLen = 0;
  for (let k = 0; k < keyCount; k++) maxLen = Math.max(maxLen, start[k + 1] - start[k]);
  const buf = new Float64Array(maxLen);
  const work = new Float64Array(maxLen);
  const minN = Math.max(3, robust.minSamples);
  for (let k = 0; k < keyCount; k++) {
    const s = start[k], e = start[k + 1], len = e - s;
    if (len < minN) continue;
    for (let i = 0; i < len; i++) buf[i] = vrSorted[s + i];
    const med = medianInPlace(buf, 0, len);
    const sigma = robustSigma(vrSorted.subarray(s, e), 0, len, med, work);
    if (!(sigma > 0)) continue;
    const limit = robust.k * sigma;
    let rejected = 0;
    for (let p = s; p < e; p++)
      if (Math.abs(vrSorted[p] - med) > limit) {
        keep[order[p]] = 0;
        rejected++;
      }
    outliers[k % I] += rejected;
  }
  return { keep, outliers };
}
