/**
 * The undisturbed inflow profile u_inf(z) per plane and window, from one of three sources:
 * - 'series': a reference series (time, height_m, speed_ms, direction_deg), each row's speed projected on the
 *   window's direction (S cos(direction - window direction): the component the rotor-frame u is compared with),
 *   averaged per window and height, then a law fitted (power law: the series source has no law key);
 * - 'plane': the plane's own cells outside the wake: first pass |y| beyond inflowExclusion_D * D from the rotor
 *   axis (or, when that leaves too few rows, the per-row 80th percentile of all cells), second pass the cells outside
 *   inflowExclusionSigmas of the wake ellipse fitted with the first; per height row the median u of those cells,
 *   rows then fitted robustly (one pass rejecting rows beyond 3 scaled MADs of the residuals);
 * - 'fixed': speed_ms at height_m with alpha (power) or z0 (log) from the campaign.
 * Heights are rotor-frame z (above ground), speeds m/s. Laws and fits: see profileLaw.ts.
 */
import type { FieldResult } from '../retrieval/types.ts';
import type { Series } from '../io/series.ts';
import { rowsInWindow, circularMeanDeg } from '../io/series.ts';
import type { InflowProfile } from './types.ts';
import { evalLaw, fitLaw, type LawFit } from './profileLaw.ts';
import { KAPPA } from './options.ts';
import { median, quantile } from './stats.ts';

function toProfile(source: InflowProfile['source'], fit: LawFit, zHub: number, z: number[], u: number[], c: number[], note: string, dir = NaN): InflowProfile {
  return {
    source, law: fit.law, zRef_m: fit.zRef_m, uRef_ms: fit.uRef_ms, alpha: fit.alpha, uStar_ms: fit.uStar_ms, z0_m: fit.z0_m,
    hubSpeed_ms: fit.ok ? evalLaw(fit, zHub) : NaN,
    heights_m: z, speeds_ms: u, counts: c, rmse_ms: fit.rmse_ms, r2: fit.r2, direction_deg: dir,
    ok: fit.ok && Number.isFinite(evalLaw(fit, zHub)),
    note: [note, fit.note].filter(Boolean).join('; '),
  };
}

/** Fits the law, then once more without points whose residual exceeds 3 scaled MADs (needs >= 4 points). */
function robustFit(law: 'power' | 'log', z: number[], u: number[], c: number[], zHub: number): { fit: LawFit; dropped: number } {
  let fit = fitLaw(law, z, u, c, zHub);
  if (!fit.ok || z.length < 4) return { fit, dropped: 0 };
  const res = z.map((zi, i) => u[i] - evalLaw(fit, zi));
  const med = median(res);
  const mad = 1.4826 * median(res.map((r) => Math.abs(r - med)));
  if (!(mad > 0)) return { fit, dropped: 0 };
  const keep = res.map((r) => Math.abs(r - med) <= 3 * mad);
  const dropped = keep.filter((k) => !k).length;
  if (dropped === 0 || z.length - dropped < 3) return { fit, dropped: 0 };
  fit = fitLaw(law, z.filter((_, i) => keep[i]), u.filter((_, i) => keep[i]), c.filter((_, i) => keep[i]), zHub);
  return { fit, dropped };
}

/** A wake ellipse to exclude from the plane inflow (centre and widths, metres). */
export interface WakeEllipse { yc: number; zc: number; sy: number; sz: number }

export interface PlaneInflowOptions {
  law: 'power' | 'log';
  /** Hub height, metres (the power law's reference height). */
  hubHeight_m: number;
  rotorDiameter_m: number;
  /** |y| below this (metres) is excluded. */
  exclusionHalfWidth_m: number;
  /** Optional fitted wake to exclude as well, with this many sigmas. */
  ellipse?: WakeEllipse | null;
  sigmas?: number;
  minCellsPerRow: number;
  /**
   * Fallback first pass for planes too narrow for the band: per height row, this quantile (0..1) of all valid
   * cells, which the wake (low speeds) does not reach while it covers less than (1 - q) of the row. Unset: off.
   */
  upperQuantile?: number;
}

export function inflowFromPlane(f: FieldResult, o: PlaneInflowOptions): InflowProfile {
  const g = f.grid;
  const z: number[] = [], u: number[] = [], c: number[] = [];
  const k2 = (o.sigmas ?? 3) ** 2;
  const rows = f.orientation === 'cross' ? g.nz : 1;
  for (let iz = 0; iz < rows; iz++) {
    const vals: number[] = [], hts: number[] = [];
    const lim = f.orientation === 'cross' ? iz + 1 : g.nz;
    for (let jz = iz; jz < lim; jz++) {
      const zc = f.orientation === 'cross' ? g.z0 + jz * g.dz : f.z_m;
      for (let iy = 0; iy < g.ny; iy++) {
        const v = f.u[iy + jz * g.ny];
        if (!Number.isFinite(v)) continue;
        const y = g.y0 + iy * g.dy;
        if (o.upperQuantile === undefined && Math.abs(y) < o.exclusionHalfWidth_m) continue;
        const e = o.ellipse;
        if (e && f.orientation === 'cross' && ((y - e.yc) / e.sy) ** 2 + ((zc - e.zc) / e.sz) ** 2 < k2) continue;
        if (e && f.orientation === 'horizontal' && Math.abs(y - e.yc) < Math.sqrt(k2) * e.sy) continue;
        vals.push(v);
        const ze = f.orientation === 'cross' ? f.zEff?.[iy + jz * g.ny] : NaN;
        if (Number.isFinite(ze)) hts.push(ze!);
      }
    }
    if (vals.length >= o.minCellsPerRow) {
      // A cross plane's row at the median height of its cells' samples (FieldResult.zEff), the heights at which the
      // deficit compares u with the law (deficit.ts): near the ground under strong shear a row's samples can sit a
      // few metres below its centre (17 m in a 5-35 m row), and a law fitted at the centres then misses the lower
      // rows by several per cent. The cell centre when no sample height is known.
      z.push(f.orientation === 'cross' ? (hts.length > 0 ? median(hts) : g.z0 + iz * g.dz) : f.z_m);
      u.push(o.upperQuantile === undefined ? median(vals) : quantile(vals, o.upperQuantile));
      c.push(vals.length);
    }
  }
  const excl = o.upperQuantile !== undefined
    ? `per-row ${Math.round(o.upperQuantile * 100)}th percentile of all cells (plane too narrow to exclude the wake band)`
    : o.ellipse
      ? `cells within ${o.sigmas ?? 3} sigma of the fitted wake centre excluded`
      : `cells with |y| < ${o.exclusionHalfWidth_m.toFixed(1)} m excluded`;
  const { fit, dropped } = robustFit(o.law, z, u, c, o.hubHeight_m);
  return toProfile('plane', fit, o.hubHeight_m, z, u, c, excl + (dropped ? `; ${dropped} height rows rejected as outliers` : ''));
}

/** From a reference series with values height_m, speed_ms, direction_deg: rows in [start, end). */
export function inflowFromSeries(s: Series, start_s: number, end_s: number, hubHeight_m: number, law: 'power' | 'log' = 'power', windowDirection_deg = NaN): InflowProfile {
  const [lo, hi] = rowsInWindow(s, start_s, end_s);
  const h = s.values.height_m, v = s.values.speed_ms, d = s.values.direction_deg;
  // With the window's direction, each row's speed is projected on it: the deficit compares the rotor-frame u (the
  // wind's component along that direction) with u_inf, so under veer or a turned wind the reference is S cos(delta).
  const project = Number.isFinite(windowDirection_deg) && d !== undefined;
  const groups = new Map<number, { s: number; n: number }>();
  for (let i = lo; i < hi; i++) {
    if (!Number.isFinite(h[i]) || !Number.isFinite(v[i])) continue;
    const key = Math.round(h[i] * 100) / 100;
    const gr = groups.get(key) ?? { s: 0, n: 0 };
    gr.s += project && Number.isFinite(d![i]) ? v[i] * Math.cos(((d![i] - windowDirection_deg) * Math.PI) / 180) : v[i]; gr.n++;
    groups.set(key, gr);
  }
  const keys = [...groups.keys()].sort((a, b) => a - b);
  const z = keys, u = keys.map((k) => groups.get(k)!.s / groups.get(k)!.n), c = keys.map((k) => groups.get(k)!.n);
  const dir = s.values.direction_deg ? circularMeanDeg(s.values.direction_deg, lo, hi) : NaN;
  if (z.length === 0) {
    const fit = fitLaw(law, [], [], [], hubHeight_m);
    return toProfile('series', fit, hubHeight_m, [], [], [], `no series rows in the window`, dir);
  }
  const fit = fitLaw(law, z, u, c, hubHeight_m);
  return toProfile('series', fit, hubHeight_m, z, u, c, `${hi - lo} series rows, ${z.length} heights`, dir);
}

/** A fixed profile: speed at a height, alpha (power) or z0 (log). */
export function inflowFixed(spec: { speed_ms: number; height_m: number; law: 'power' | 'log'; alpha: number; z0_m: number }, hubHeight_m: number): InflowProfile {
  const fit: LawFit = spec.law === 'power'
    ? { law: 'power', zRef_m: hubHeight_m, uRef_ms: spec.speed_ms / Math.pow(spec.height_m / hubHeight_m, spec.alpha), alpha: spec.alpha, uStar_ms: NaN, z0_m: NaN, rmse_ms: NaN, r2: NaN, ok: true, note: '' }
    : { law: 'log', zRef_m: hubHeight_m, uRef_ms: NaN, alpha: NaN, uStar_ms: (KAPPA * spec.speed_ms) / Math.log(spec.height_m / spec.z0_m), z0_m: spec.z0_m, rmse_ms: NaN, r2: NaN, ok: spec.height_m > spec.z0_m, note: '' };
  return toProfile('fixed', fit, hubHeight_m, [], [], [], `fixed: ${spec.speed_ms} m/s at ${spec.height_m} m`);
}

/**
 * Standard uncertainty of u_inf at height z from the points' own uncertainties (speedsSd_ms), interpolated linearly
 * in height and held constant beyond the end points: conservative, as the law fitted through several points is
 * surer than one point. 0 when the source gives none.
 */
export function inflowSdAt(p: InflowProfile, z: number): number {
  const s = p.speedsSd_ms, h = p.heights_m;
  if (!s || s.length === 0 || s.length !== h.length) return 0;
  if (z <= h[0]) return s[0];
  for (let i = 1; i < h.length; i++) if (z <= h[i]) return s[i - 1] + ((z - h[i - 1]) / (h[i] - h[i - 1])) * (s[i] - s[i - 1]);
  return s[s.length - 1];
}

/** u_inf at height z for a profile (NaN when the profile is not ok). */
export function inflowAt(p: InflowProfile, z: number): number {
  return p.ok ? evalLaw(p, z) : NaN;
}
