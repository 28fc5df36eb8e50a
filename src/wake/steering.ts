/**
 * Wake steering summary: per cross plane, windows binned by yaw offset gamma (bin k covers
 * [(k - 1/2) w, (k + 1/2) w) degrees, w = campaign.wake.yawBin_deg); per bin the mean lateral centre yc (rotor-frame
 * y, + = left looking downstream), its sample standard deviation, count and 95 % confidence half-width
 * t_{0.975, n-1} sd / sqrt(n) (Student t), beside the deflections of Jimenez et al. (2010) and Bastankhah &
 * Porte-Agel (2016) at the bin's mean gamma and the bin's Ct, the mean of its windows' (deflection.ts); the curves
 * over gamma use the campaign-level Ct. Only rows whose flag is 'ok' and whose gamma is known
 * count. Each bin also gives its deflection relative to the plane's gamma = 0 bin (the no-yaw centre).
 */
import type { SteeringBin, SteeringResult, WakePlaneWindow } from './types.ts';
import { stat } from './stats.ts';
import { bastankhahDeflection, jimenezDeflection } from './deflection.ts';
import { pushTo } from '../math/group.ts';

export interface SteeringOptions {
  rotorDiameter_m: number;
  /** Bin width, degrees. */
  binWidth_deg: number;
  ct: number;
  turbulenceIntensity: number;
  /** Wake growth rates for the 2016 model (k_y = k_z). */
  kStar: number;
  jimenezBeta: number;
}

export function binSteering(rows: WakePlaneWindow[], o: SteeringOptions): SteeringResult {
  const D = o.rotorDiameter_m, w = o.binWidth_deg;
  const use = rows.filter((r) => r.orientation === 'cross' && r.flag === 'ok' && Number.isFinite(r.yawOffset_deg) && Number.isFinite(r.centre.y_m));
  const base = { ct: o.ct, turbulenceIntensity: o.turbulenceIntensity };
  if (use.length === 0) {
    const why = rows.some((r) => Number.isFinite(r.yawOffset_deg)) ? 'no ok cross-plane windows with a yaw offset' : 'no yaw offsets (no turbine series)';
    return { bins: [], curves: [], ...base, note: why };
  }
  const groups = new Map<string, WakePlaneWindow[]>();
  for (const r of use) {
    const k = Math.floor(r.yawOffset_deg / w + 0.5);
    const key = `${r.planeIndex}|${k}`;
    pushTo(groups, key, r);
  }
  const bins: SteeringBin[] = [];
  for (const [key, rs] of groups) {
    const k = Number(key.split('|')[1]);
    const r0 = rs[0];
    const gs = stat(rs.map((r) => r.yawOffset_deg));
    const ys = stat(rs.map((r) => r.centre.y_m));
    // The models at the bin's own Ct: with a thrust curve, bins whose windows ran at other speeds differ.
    const cs = stat(rs.map((r) => r.ct));
    const ct = Number.isFinite(cs.mean) ? cs.mean : o.ct;
    bins.push({
      planeId: r0.planeId, x_m: r0.x_m, x_D: r0.x_m / D,
      gammaCentre_deg: k * w, gammaLo_deg: (k - 0.5) * w, gammaHi_deg: (k + 0.5) * w, gammaMean_deg: gs.mean,
      n: ys.n, yc_m: ys.mean, sd_m: ys.sd, ci95_m: ys.ci95, yc_D: ys.mean / D, deflection_m: NaN, deflectionCi95_m: NaN,
      ct,
      jimenez_m: jimenezDeflection(r0.x_m, D, gs.mean, ct, o.jimenezBeta),
      bastankhah_m: bastankhahDeflection(r0.x_m, D, gs.mean, ct, o.turbulenceIntensity, o.kStar),
    });
  }
  for (const b of bins) {
    const zero = bins.find((z) => z.planeId === b.planeId && z.gammaCentre_deg === 0);
    if (!zero) continue;
    b.deflection_m = b.yc_m - zero.yc_m;
    b.deflectionCi95_m = b === zero ? 0 : Math.hypot(b.ci95_m, zero.ci95_m);
  }
  bins.sort((a, b) => a.x_m - b.x_m || a.planeId.localeCompare(b.planeId) || a.gammaCentre_deg - b.gammaCentre_deg);
  const gmax = Math.max(30, ...bins.map((b) => Math.abs(b.gammaHi_deg)), ...bins.map((b) => Math.abs(b.gammaLo_deg)));
  const gamma: number[] = [];
  for (let g = -Math.ceil(gmax); g <= Math.ceil(gmax); g += 1) gamma.push(g);
  const planes = [...new Map(use.map((r) => [r.planeId, r])).values()].sort((a, b) => a.x_m - b.x_m);
  const curves = planes.map((r) => ({
    planeId: r.planeId, x_D: r.x_m / D, gamma_deg: gamma,
    jimenez_m: gamma.map((g) => jimenezDeflection(r.x_m, D, g, o.ct, o.jimenezBeta)),
    bastankhah_m: gamma.map((g) => bastankhahDeflection(r.x_m, D, g, o.ct, o.turbulenceIntensity, o.kStar)),
  }));
  return { bins, curves, ...base, note: '' };
}
