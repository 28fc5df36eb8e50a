/**
 * Robust location and scale: median and median absolute deviation (MAD) on typed arrays, without sorting.
 *
 * MAD = median(|x_i - median(x)|). For Gaussian data 1.4826 * MAD estimates the standard deviation
 * (1.4826 = 1 / Phi^-1(3/4); common practice, e.g. Rousseeuw & Croux 1993, J. Am. Stat. Assoc. 88(424) [memory]).
 * When more than half of the values are equal the MAD is 0 and gives no scale; the fallback scale is then
 * sqrt(pi/2) * mean(|x_i - median|) = 1.253314 * mean absolute deviation, also consistent with the standard
 * deviation for Gaussian data (the "modified z-score" fallback; common practice).
 *
 * The in-place kernels reorder the part of the buffer they work on (selection, Wirth 1976, "Algorithms + Data
 * Structures = Programs", sec. 2.3.4), average O(n); they allocate nothing. Values must be finite.
 */

/** Scale factor from MAD to a standard deviation for Gaussian data: 1 / Phi^-1(0.75). */
export const MAD_TO_SIGMA = 1.482602218505602;
/** Scale factor from the mean absolute deviation to a standard deviation for Gaussian data: sqrt(pi / 2). */
export const MEANAD_TO_SIGMA = 1.2533141373155003;

/**
 * The k-th smallest (0-based) of a[lo .. hi) after partially reordering that range in place: on return a[k] holds
 * it, a[lo .. k) are <= a[k] and a(k .. hi) are >= a[k].
 */
export function selectInPlace(a: Float64Array, lo: number, hi: number, k: number): number {
  let l = lo, r = hi - 1;
  while (r > l) {
    // Median-of-three pivot value (a value present in [l, r], which the scans below need as a sentinel).
    const x0 = a[l], x1 = a[k], x2 = a[r];
    const x = x0 < x1 ? (x1 < x2 ? x1 : x0 < x2 ? x2 : x0) : x0 < x2 ? x0 : x1 < x2 ? x2 : x1;
    let i = l, j = r;
    do {
      while (a[i] < x) i++;
      while (x < a[j]) j--;
      if (i <= j) {
        const t = a[i]; a[i] = a[j]; a[j] = t;
        i++; j--;
      }
    } while (i <= j);
    if (j < k) l = i;
    if (k < i) r = j;
  }
  return a[k];
}

/** Median of a[lo .. hi) (mean of the two middle values for an even count); reorders that range. NaN when empty. */
export function medianInPlace(a: Float64Array, lo: number, hi: number): number {
  const n = hi - lo;
  if (n <= 0) return NaN;
  const k = lo + (n >> 1);
  const upper = selectInPlace(a, lo, hi, k);
  if (n & 1) return upper;
  let lower = a[lo];
  for (let i = lo + 1; i < k; i++) if (a[i] > lower) lower = a[i];
  return (lower + upper) / 2;
}

/** Median of any numeric array (copies it first). NaN when empty. */
export function median(values: ArrayLike<number>): number {
  const a = Float64Array.from(values);
  return medianInPlace(a, 0, a.length);
}

/**
 * MAD of a[lo .. hi) about `centre` (pass the median), using work[lo .. hi) as scratch (work may not alias a).
 * a is not modified.
 */
export function madAbout(a: ArrayLike<number>, lo: number, hi: number, centre: number, work: Float64Array): number {
  for (let i = lo; i < hi; i++) work[i] = Math.abs(a[i] - centre);
  return medianInPlace(work, lo, hi);
}

/** Median absolute deviation about the median (copies the values). NaN when empty. */
export function mad(values: ArrayLike<number>): number {
  const a = Float64Array.from(values);
  const m = medianInPlace(a, 0, a.length);
  return madAbout(a, 0, a.length, m, new Float64Array(a.length));
}

/**
 * Robust standard-deviation estimate of a[lo .. hi) about `centre`: 1.4826 * MAD, or, when the MAD is 0, the
 * 1.2533 * mean-absolute-deviation fallback (see the file header). 0 only when every value equals `centre`.
 * work[lo .. hi) is scratch.
 */
export function robustSigma(a: ArrayLike<number>, lo: number, hi: number, centre: number, work: Float64Array): number {
  const m = madAbout(a, lo, hi, centre, work);
  if (m > 0) return MAD_TO_SIGMA * m;
  let s = 0;
  for (let i = lo; i < hi; i++) s += Math.abs(a[i] - centre);
  return hi > lo ? (MEANAD_TO_SIGMA * s) / (hi - lo) : NaN;
}
