/**
 * A colour scale for maps: the value range [lo, hi], the band edges (nice numbers, about ten bands) and one colour
 * per band. Values beyond the range take the end colours and are counted, so that the colour bar can show them as
 * triangular ends with their number of cells.
 */
import { bandColours, type Scheme } from './colour.ts';
import { niceExtent, niceTicks } from './ticks.ts';

export interface ColourScale {
  domain: [number, number];
  /** Band edges from domain[0] to domain[1], ascending. */
  thresholds: number[];
  /** One colour per band (thresholds.length - 1). */
  colours: string[];
  scheme: Scheme;
}

/** Cells below and above the colour range (finite values only). */
export interface RangeCounts {
  under: number;
  over: number;
}

/** Band edges for a value range: nice ticks from lo to hi including both ends (about ten bands). */
export function colourLevels(values: ArrayLike<number>, given?: [number, number]): { domain: [number, number]; thresholds: number[] } {
  let d0: number, d1: number;
  if (given && Number.isFinite(given[0]) && Number.isFinite(given[1]) && given[1] > given[0]) [d0, d1] = given;
  else {
    const finite: number[] = [];
    for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) finite.push(values[i]);
    finite.sort((a, b) => a - b);
    const lo = finite.length ? percentileSorted(finite, 0.01) : 0;
    const hi = finite.length ? percentileSorted(finite, 0.99) : 1;
    [d0, d1] = niceExtent(lo, hi, 10);
  }
  const inner = niceTicks(d0, d1, 10).filter((t) => t > d0 + 1e-9 * (d1 - d0) && t < d1 - 1e-9 * (d1 - d0));
  return { domain: [d0, d1], thresholds: [d0, ...inner, d1] };
}

/** The scale for `values`, on the given range when there is one (shared or fixed limits), else from the values. */
export function colourScale(values: ArrayLike<number>, scheme: Scheme, given?: [number, number]): ColourScale {
  const { domain, thresholds } = colourLevels(values, given);
  return { domain, thresholds, colours: bandColours(scheme, thresholds, domain), scheme };
}

/** Band index of a value (values beyond the range fall in the end bands). */
export function bandOf(s: ColourScale, v: number): number {
  const c = Math.min(s.domain[1], Math.max(s.domain[0], v));
  let k = 0;
  while (k + 1 < s.colours.length && c >= s.thresholds[k + 1]) k++;
  return k;
}

/** Finite values strictly below and above the range. */
export function rangeCounts(values: ArrayLike<number>, domain: [number, number]): RangeCounts {
  let under = 0, over = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v < domain[0]) under++;
    else if (v > domain[1]) over++;
  }
  return { under, over };
}

export function percentileSorted(s: ArrayLike<number>, p: number): number {
  const pos = p * (s.length - 1);
  const i = Math.floor(pos);
  return i + 1 < s.length ? s[i] + (s[i + 1] - s[i]) * (pos - i) : s[i];
}
