/**
 * The uncertainty budget's settings of a campaign (retrieval/budget.ts): each instrument's pointing and position
 * uncertainties, its probe weighting's second moment, and the instruments' positions in each plane's frame for a
 * window's wind direction (the same transform as grid/planeTarget.ts), and the standard uncertainty of that direction
 * from the direction series (windows/direction.ts).
 */
import type { Campaign } from '../campaign/types.ts';
import type { Series } from '../io/series.ts';
import { directionUncertaintyForWindow } from '../windows/direction.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { cwHalfWidth, pulseWidthParameter } from '../geometry/probe.ts';
import { probeSecondMoment, type BudgetSettings } from '../retrieval/budget.ts';

export function budgetSettings(c: Campaign, directionSeries?: Series): BudgetSettings {
  const ins = c.instruments;
  const origins = c.planes.map((p) => ({ o: planeOrigin(c, p), base: p.heights === 'site' ? 0 : planeOrigin(c, p)[2] }));
  const cache = new Map<string, Float64Array>();
  return {
    enabled: c.uncertainty.budget,
    pointingAz_deg: Float64Array.from(ins, (i) => i.pointingUncertainty.azimuth_deg),
    pointingEl_deg: Float64Array.from(ins, (i) => i.pointingUncertainty.elevation_deg),
    position_m: Float64Array.from(ins, (i) => i.pointingUncertainty.position_m),
    maxCombined_ms: c.uncertainty.maxCombined_ms ?? Infinity,
    directionUncertainty_deg: (w) => directionUncertaintyForWindow(c, directionSeries, w),
    probeMoment2(k, range) {
      const i = ins[k];
      if (i.kind === 'cw') return probeSecondMoment('cw', 2 * cwHalfWidth(range, i.cw.wavelength_m, i.cw.apertureRadius_m));
      return probeSecondMoment('pulsed', NaN, { rp_m: pulseWidthParameter(i.pulsed.pulseFwhm_ns * 1e-9), gate_m: i.pulsed.gateLength_m });
    },
    instrumentsInPlane(planeIndex, direction_deg) {
      const key = `${planeIndex}|${direction_deg}`;
      let out = cache.get(key);
      if (out) return out;
      if (cache.size > 256) cache.clear();
      const { o, base } = origins[planeIndex];
      const D = (direction_deg * Math.PI) / 180, dE = -Math.sin(D), dN = -Math.cos(D);
      out = new Float64Array(ins.length * 3);
      ins.forEach((i, k) => {
        const e = i.position[0] - o[0], n = i.position[1] - o[1];
        out![k * 3] = e * dE + n * dN;
        out![k * 3 + 1] = -e * dN + n * dE;
        out![k * 3 + 2] = i.position[2] - base;
      });
      cache.set(key, out);
      return out;
    },
  };
}
