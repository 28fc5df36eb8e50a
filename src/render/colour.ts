/**
 * Colour schemes for scalar maps. Sequential: cividis, designed to read the same for viewers with and without
 * red-green colour-vision deficiency (Nunez, Anderton & Renslow 2018, PLOS ONE 13(7) e0199239). Diverging: PuOr
 * from ColorBrewer, listed there as colour-blind safe (Harrower & Brewer 2003, The Cartographic Journal 40(1)).
 * Both come from d3-scale-chromatic.
 */
import { interpolateCividis, interpolatePuOr } from 'd3-scale-chromatic';

export type Scheme = 'sequential' | 'diverging';

/** Colour at t in [0, 1] (clamped). The diverging scheme runs purple (low) to orange (high) with a light middle. */
export function schemeColour(scheme: Scheme, t: number): string {
  const c = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0));
  return scheme === 'diverging' ? interpolatePuOr(1 - c) : interpolateCividis(c);
}

/** One colour per band between consecutive thresholds, taken at the band middle. */
export function bandColours(scheme: Scheme, thresholds: number[], domain: [number, number]): string[] {
  const [d0, d1] = domain;
  const out: string[] = [];
  for (let k = 0; k + 1 < thresholds.length; k++) {
    const mid = (thresholds[k] + thresholds[k + 1]) / 2;
    out.push(schemeColour(scheme, (mid - d0) / (d1 - d0)));
  }
  return out;
}
