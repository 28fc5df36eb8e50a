/**
 * Yaw offset of the rotor per window: gamma = nacelle direction - wind direction, wrapped to [-180, 180) degrees.
 * Both directions are "from" directions, degrees clockwise from north seen from above, so gamma > 0 means the
 * nacelle (the rotor axis pointing upwind) is turned clockwise relative to the wind.
 *
 * Sign of the deflection in the rotor frame (x downstream, y left looking downstream, z up). Take the wind from
 * north: it blows towards south (+x = south) and, looking south, the left hand points east (+y = east). With
 * gamma > 0 the rotor axis points upwind towards gamma (north-east of north), so the rotor's downstream normal n
 * points towards 180 + gamma (slightly west of south): n has a lateral component towards -y. The flow pushes the
 * rotor along +n; the rotor's thrust on the flow is the reaction, along -n, whose lateral component points to +y
 * (east, left looking downstream). The flow, and so the wake, is deflected towards +y. Hence: gamma > 0 -> wake
 * centre y > 0 in our frame, and the deflection models (deflection.ts) are odd in gamma with this sign.
 *
 * The wind direction is the series' wind_direction_deg when present (circular mean over the window), else the
 * field's direction (the one that defined the rotor frame).
 */
import type { Series } from '../io/series.ts';
import { rowsInWindow, circularMeanDeg } from '../io/series.ts';
import { wrapDeg180 } from '../geometry/angles.ts';

export { wrapDeg180 };

export interface WindowYaw {
  nacelle_deg: number;
  windDirection_deg: number;
  /** 'series' when the turbine series gave wind_direction_deg, else 'field'. */
  windSource: 'series' | 'field';
  yawOffset_deg: number;
  power_kW: number;
}

export function windowYaw(s: Series | undefined, start_s: number, end_s: number, fieldDirection_deg: number): WindowYaw {
  if (!s) return { nacelle_deg: NaN, windDirection_deg: fieldDirection_deg, windSource: 'field', yawOffset_deg: NaN, power_kW: NaN };
  const [lo, hi] = rowsInWindow(s, start_s, end_s);
  const nacelle = s.values.yaw_deg ? circularMeanDeg(s.values.yaw_deg, lo, hi) : NaN;
  const wdSeries = s.values.wind_direction_deg ? circularMeanDeg(s.values.wind_direction_deg, lo, hi) : NaN;
  const wd = Number.isFinite(wdSeries) ? wdSeries : fieldDirection_deg;
  let p = 0, n = 0;
  const pw = s.values.power_kw;
  if (pw) for (let i = lo; i < hi; i++) if (Number.isFinite(pw[i])) { p += pw[i]; n++; }
  return {
    nacelle_deg: nacelle, windDirection_deg: wd, windSource: Number.isFinite(wdSeries) ? 'series' : 'field',
    yawOffset_deg: Number.isFinite(nacelle) && Number.isFinite(wd) ? wrapDeg180(nacelle - wd) : NaN,
    power_kW: n > 0 ? p / n : NaN,
  };
}
