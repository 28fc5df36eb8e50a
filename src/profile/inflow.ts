/**
 * A profile as the inflow reference of a plane campaign: each height's horizontal wind, placed at its samples' mean
 * height (not the bin centre), projected on the window's downstream direction d = -(sin D, cos D) (D the wind
 * direction defining the rotor frame), u_inf(z) = (u, v) . d,
 * with the speed's standard uncertainty as that of u_inf (the projection changes it by less than the direction's
 * cosine); then the campaign's law fitted through the points weighted by 1 / s^2. Only heights flagged ok enter.
 */
import type { InflowProfile } from '../wake/types.ts';
import { evalLaw, fitLaw } from '../wake/profileLaw.ts';
import type { ProfilePoint } from './types.ts';

export function inflowFromProfile(points: ProfilePoint[], direction_deg: number, hubHeight_m: number, law: 'power' | 'log', instrumentId: string): InflowProfile {
  const D = (direction_deg * Math.PI) / 180, dE = -Math.sin(D), dN = -Math.cos(D);
  const use = points.filter((p) => p.flag === 'ok' && Number.isFinite(p.u_ms)).sort((a, b) => heightOf(a) - heightOf(b));
  const z = use.map(heightOf), u = use.map((p) => p.u_ms * dE + p.v_ms * dN), sd = use.map((p) => p.sspeed_ms);
  const w = sd.map((s) => 1 / Math.max(1e-4, s) ** 2);
  const fit = fitLaw(law, z, u, w, hubHeight_m);
  const hub = fit.ok ? evalLaw(fit, hubHeight_m) : NaN;
  const dirs = use.map((p) => p.direction_deg);
  const note = `profile of ${instrumentId}: ${use.length} of ${points.length} heights ok` + (fit.note ? `; ${fit.note}` : '');
  return {
    source: 'profile', law: fit.law, zRef_m: fit.zRef_m, uRef_ms: fit.uRef_ms, alpha: fit.alpha, uStar_ms: fit.uStar_ms, z0_m: fit.z0_m,
    hubSpeed_ms: hub, heights_m: z, speeds_ms: u, counts: use.map((p) => p.samples), speedsSd_ms: sd, rmse_ms: fit.rmse_ms, r2: fit.r2,
    direction_deg: dirs.length ? circular(dirs) : NaN, ok: fit.ok && Number.isFinite(hub), note,
  };
}

/** The height a point's wind belongs to: its samples' mean height (the bin centre only when that is unknown). */
function heightOf(p: ProfilePoint): number {
  return Number.isFinite(p.sampleHeight_m) ? p.sampleHeight_m : p.height_m;
}

function circular(d: number[]): number {
  let s = 0, c = 0;
  for (const x of d) { s += Math.sin((x * Math.PI) / 180); c += Math.cos((x * Math.PI) / 180); }
  const m = (Math.atan2(s, c) * 180) / Math.PI;
  return m < 0 ? m + 360 : m;
}
