/**
 * Wake analysis of one plane and window: inflow, deficit, Gaussian fit and its flags, the shape-independent centres,
 * rotor-equivalent speeds, hub and centreline deficits, momentum deficit and the cuts through the centre.
 *
 * The Gaussian fit is unweighted unless options.weightedFit (then weights 1/(su/u_inf)).
 *
 * Flags, in the order tested (the first that applies wins; a flagged row keeps whatever was computed):
 * too_few_cells (valid u cells < minCells) -> no_inflow (no usable inflow profile) -> too_few_cells (cells with a
 * deficit < minCells) -> no_wake (98th-percentile deficit
 * < minDeficit, or fitted amplitude < minDeficit) -> off_edge (fitted centre outside the plane or within one cell of
 * its edge) -> not_converged -> absurd_width (sigma < minWidthCells cells or > maxWidth_D D).
 */
import type { FieldResult } from '../retrieval/types.ts';
import { seriesWithin, type Series } from '../io/series.ts';
import type { CentreEstimate, Gaussian2DFit, InflowProfile, WakeFlag, WakePlaneWindow } from './types.ts';
import type { WakeOptions } from './options.ts';
import { inflowFixed, inflowFromPlane, inflowFromSeries, type WakeEllipse } from './inflow.ts';
import { deficitField } from './deficit.ts';
import { fitGaussian2D, gaussian2d } from './gaussian2d.ts';
import { minPowerDiskCentre } from './diskCentre.ts';
import { deficitCentroid } from './centroid.ts';
import { rewsOnGrid } from './rews.ts';
import { momentumDeficit, thrustMomentum } from './momentum.ts';
import { horizontalCut, sampleBilinear, verticalCut } from './profiles.ts';
import { horizontalTrack } from './horizontalTrack.ts';
import { thrustCoefficientAt } from '../campaign/thrust.ts';
import { windowYaw } from './yawOffset.ts';
import { median, quantile } from './stats.ts';
import { addedTurbulence } from './addedTurbulence.ts';

export type InflowSpec =
  | { kind: 'plane'; law: 'power' | 'log' }
  | { kind: 'fixed'; speed_ms: number; height_m: number; law: 'power' | 'log'; alpha: number; z0_m: number }
  | { kind: 'series' }
  | { kind: 'profile'; instrument: string; law: 'power' | 'log' };

export interface PlaneWindowContext {
  rotorDiameter_m: number;
  hubHeight_m: number;
  thrustCoefficient: number | [number, number][];
  inflow: InflowSpec;
  inflowSeries?: Series;
  turbineSeries?: Series;
  /** Inflow kind profile: the profiling instrument's inflow of a field's window (undefined when it has none). */
  profileInflow?: (f: FieldResult) => InflowProfile | undefined;
  options: WakeOptions;
  /**
   * The inflow measured upstream of the turbine (several turbines, wake/siteWakes.ts): one speed per cell of the
   * field, m/s, and where it came from. When given it replaces the inflow law: deficit = 1 - u / uIn per cell.
   */
  upstream?: { uIn: Float64Array; hubSpeed_ms: number; from: string };
}

const NO_CENTRE = (method: CentreEstimate['method']): CentreEstimate => ({ method, y_m: NaN, z_m: NaN, sy_m: NaN, sz_m: NaN, ok: false });

function inflowFor(f: FieldResult, c: PlaneWindowContext, ellipse: WakeEllipse | null): InflowProfile {
  const H = c.hubHeight_m, D = c.rotorDiameter_m;
  if (c.upstream) {
    const ok = Number.isFinite(c.upstream.hubSpeed_ms) && c.upstream.hubSpeed_ms > 0;
    return {
      source: 'upstream', law: 'power', zRef_m: H, uRef_ms: NaN, alpha: NaN, uStar_ms: NaN, z0_m: NaN, hubSpeed_ms: c.upstream.hubSpeed_ms,
      heights_m: [], speeds_ms: [], counts: [], rmse_ms: NaN, r2: NaN, direction_deg: NaN, ok,
      note: ok ? `measured upstream of the turbine: ${c.upstream.from}` : `no valid cells upstream of the turbine (${c.upstream.from})`,
    };
  }
  if (c.inflow.kind === 'fixed') return inflowFixed(c.inflow, H);
  if (c.inflow.kind === 'profile') {
    const p = c.profileInflow?.(f);
    if (p) return p;
    const none = inflowFromSeries({ file: '', time: new Float64Array(0), values: {} }, 0, 0, H);
    return { ...none, source: 'profile', note: `no profile of ${c.inflow.instrument} for this window` };
  }
  if (c.inflow.kind === 'series') {
    if (c.inflowSeries) {
      const [series, a, b] = pooled(c.inflowSeries, f);
      return inflowFromSeries(series, a, b, H, 'power', f.direction_deg);
    }
    const p = inflowFromSeries({ file: '', time: new Float64Array(0), values: {} }, 0, 0, H);
    return { ...p, note: 'inflow series not loaded' };
  }
  const base = {
    law: c.inflow.law, hubHeight_m: H, rotorDiameter_m: D, minCellsPerRow: c.options.inflowMinCellsPerRow,
    exclusionHalfWidth_m: ellipse ? 0 : c.options.inflowExclusion_D * D, ellipse, sigmas: c.options.inflowExclusionSigmas,
  };
  const p = inflowFromPlane(f, base);
  if (p.ok || ellipse || p.heights_m.length >= 2) return p;
  // Too narrow a plane (or edges masked): fall back to the per-row upper quantile for the first pass.
  const q = inflowFromPlane(f, { ...base, minCellsPerRow: Math.max(3, base.minCellsPerRow), upperQuantile: 0.8 });
  return q.ok ? q : p;
}

function countFinite(a: Float64Array): number {
  let n = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i])) n++;
  return n;
}

/**
 * A series and the interval to average it over: the window's, or for an ensemble the rows of its pooled windows
 * only (not the time between them).
 */
function pooled(s: Series, f: FieldResult): [Series, number, number] {
  const m = f.window.members;
  if (!m || m.length === 0) return [s, f.window.start_s, f.window.end_s];
  return [seriesWithin(s, [...m].sort((p, q) => p[0] - q[0])), -Infinity, Infinity];
}

export function analysePlaneWindow(f: FieldResult, c: PlaneWindowContext): WakePlaneWindow {
  const D = c.rotorDiameter_m, H = c.hubHeight_m, R = D / 2, o = c.options, g = f.grid;
  const yaw = c.turbineSeries ? windowYaw(...pooled(c.turbineSeries, f), f.direction_deg) : windowYaw(undefined, f.window.start_s, f.window.end_s, f.direction_deg);
  let inflow = inflowFor(f, c, null);
  let def = deficitField(f, inflow, c.upstream?.uIn);
  const validU = countFinite(f.u);
  const yMin = g.y0 - g.dy / 2, yMax = g.y0 + (g.ny - 0.5) * g.dy, zMin = g.z0 - g.dz / 2, zMax = g.z0 + (g.nz - 0.5) * g.dz;
  let flag: WakeFlag = 'ok', reason = '';
  let fit: Gaussian2DFit | null = null;
  let maxDeficit = quantile(def.deficit, 0.98);

  const points = (d: Float64Array, sd: Float64Array) => {
    const y: number[] = [], z: number[] = [], v: number[] = [], s: number[] = [];
    for (let k = 0; k < d.length; k++) if (Number.isFinite(d[k])) {
      // The retrieved value describes the wind where the cell's samples were (FieldResult.yEff/zEff), which can
      // be up to half a cell from its centre when the scan points do not turn with the wind; cell centre otherwise.
      const iy = k % g.ny, iz = (k - iy) / g.ny;
      const ym = f.yEff?.[k], zm = f.zEff?.[k];
      y.push(Number.isFinite(ym) ? ym : g.y0 + iy * g.dy); z.push(Number.isFinite(zm) ? zm : g.z0 + iz * g.dz);
      v.push(d[k]); s.push(sd[k]);
    }
    const med = median(s.filter((x) => x > 0));
    const sigma = o.weightedFit && med > 0 ? s.map((x) => (x > 0 && Number.isFinite(x) ? x : med)) : undefined;
    return { pts: { y, z, d: v }, sigma };
  };
  const fitDeficit = (p0?: number[]) => {
    const { pts, sigma } = points(def.deficit, def.sdeficit);
    return fitGaussian2D(pts, { fitOffset: o.fitOffset, sigma, p0 });
  };

  if (f.orientation === 'horizontal') {
    flag = 'horizontal_plane'; reason = 'horizontal plane: lateral track per downstream row instead of a cross-section fit';
  } else if (validU < o.minCells) {
    flag = 'too_few_cells'; reason = `${validU} valid cells < ${o.minCells}`;
  } else if (!inflow.ok) {
    flag = 'no_inflow'; reason = `no usable inflow (${inflow.note || 'fit failed'})`;
  } else if (countFinite(def.deficit) < o.minCells) {
    flag = 'too_few_cells'; reason = `${countFinite(def.deficit)} valid cells < ${o.minCells}`;
  } else if (!(maxDeficit >= o.minDeficit)) {
    flag = 'no_wake'; reason = `98th-percentile deficit ${maxDeficit.toFixed(3)} < ${o.minDeficit}`;
  } else {
    fit = fitDeficit();
    const p = fit.params;
    const sane = fit.converged && p.sigmaY_m > 0 && p.sigmaZ_m > 0 && p.yc_m > yMin && p.yc_m < yMax && p.zc_m > zMin && p.zc_m < zMax;
    if (c.inflow.kind === 'plane' && sane && !c.upstream) {
      // Second pass: exclude the fitted wake ellipse instead of a fixed band around the axis, so a deflected or
      // wide wake does not leak into the inflow; refit from the first solution.
      const second = inflowFor(f, c, { yc: p.yc_m, zc: p.zc_m, sy: p.sigmaY_m, sz: p.sigmaZ_m });
      if (second.ok) {
        inflow = second;
        def = deficitField(f, inflow);
        maxDeficit = quantile(def.deficit, 0.98);
        const start = [p.amplitude, p.yc_m, p.zc_m, p.sigmaY_m, p.sigmaZ_m, ...(o.fitOffset ? [p.offset] : [])];
        fit = fitDeficit(start);
      }
    }
    const q = fit.params;
    const edgeY = g.dy, edgeZ = g.dz;
    const minW = o.minWidthCells;
    if (![q.amplitude, q.yc_m, q.zc_m, q.sigmaY_m, q.sigmaZ_m].every(Number.isFinite)) {
      flag = 'not_converged'; reason = 'Gaussian fit diverged (non-finite parameters)';
    } else if (!(maxDeficit >= o.minDeficit) || !(q.amplitude >= o.minDeficit)) {
      flag = 'no_wake'; reason = `deficit amplitude ${q.amplitude.toFixed(3)} (98th percentile ${maxDeficit.toFixed(3)}) < ${o.minDeficit}`;
    } else if (!(q.yc_m > yMin + edgeY && q.yc_m < yMax - edgeY && q.zc_m > zMin + edgeZ && q.zc_m < zMax - edgeZ)) {
      // Tested before convergence: a wake leaving the plane often drives the fit outwards until it stalls.
      flag = 'off_edge'; reason = `fitted centre (${q.yc_m.toFixed(1)}, ${q.zc_m.toFixed(1)}) m outside or within one cell of the plane edge`;
    } else if (!fit.converged) {
      flag = 'not_converged'; reason = `Gaussian fit did not converge in ${fit.iterations} iterations`;
    } else if (!(q.sigmaY_m >= minW * g.dy && q.sigmaZ_m >= minW * g.dz && q.sigmaY_m <= o.maxWidth_D * D && q.sigmaZ_m <= o.maxWidth_D * D)) {
      flag = 'absurd_width'; reason = `widths (${q.sigmaY_m.toFixed(1)}, ${q.sigmaZ_m.toFixed(1)}) m outside [${minW} cell, ${o.maxWidth_D} D]`;
    }
  }

  const cross = f.orientation === 'cross';
  // The shape-independent centres are computed for every cross plane but only called ok where a wake was seen.
  const hasWake = flag !== 'no_wake' && flag !== 'too_few_cells' && flag !== 'no_inflow';
  const disk = cross && validU > 0 && inflow.ok ? minPowerDiskCentre(g, def.deficit.map((d) => 1 - d), R, o.diskMinCoverage) : { ...NO_CENTRE('min-power-disk'), atEdge: false, meanCube: NaN };
  const centroid = cross && maxDeficit > 0 ? deficitCentroid(g, def.deficit, maxDeficit, o.centroidFraction) : NO_CENTRE('deficit-centroid');
  const centre: CentreEstimate = fit && flag === 'ok'
    ? { method: 'gaussian', y_m: fit.params.yc_m, z_m: fit.params.zc_m, sy_m: fit.stderr.yc_m, sz_m: fit.stderr.zc_m, ok: true }
    : NO_CENTRE('gaussian');
  const dis = centre.ok && disk.ok ? Math.hypot(centre.y_m - disk.y_m, centre.z_m - disk.z_m) : NaN;

  const segments = o.rewsSegments > 0 ? o.rewsSegments : Math.min(10, Math.max(1, Math.floor(D / g.dz)));
  const axisRews = cross ? rewsOnGrid(g, f.u, 0, H, R, segments) : { rews_ms: NaN, coverage: NaN, segments };
  const cen = centre.ok ? centre : disk.ok && hasWake ? disk : null;
  const cenRews = cross && cen ? rewsOnGrid(g, f.u, cen.y_m, cen.z_m, R, segments) : { rews_ms: NaN, coverage: NaN, segments };

  const { ct } = thrustCoefficientAt(c.thrustCoefficient, inflow.hubSpeed_ms);
  // Masked cells of a well-fitted wake are filled with the fitted deficit (momentum.ts); the row says how many.
  const mp = fit && flag === 'ok' ? fit.params : null;
  const model = mp ? {
    deficitAt: (k: number) => {
      const iy = k % g.ny, iz = (k - iy) / g.ny;
      return gaussian2d([mp.amplitude, mp.yc_m, mp.zc_m, mp.sigmaY_m, mp.sigmaZ_m, ...(o.fitOffset ? [mp.offset] : [])], g.y0 + iy * g.dy, g.z0 + iz * g.dz);
    },
  } : undefined;
  const momentum = cross && inflow.ok ? momentumDeficit(f.u, def.uInf, g.dy, g.dz, model) : null;
  const mom = momentum ? momentum.m4s2 : NaN;
  const cutY = cen ? cen.y_m : 0, cutZ = cen ? cen.z_m : H;
  const cut = { u: f.u, su: f.su, deficit: def.deficit };
  const row: WakePlaneWindow = {
    planeId: f.planeId, planeIndex: f.planeIndex, orientation: f.orientation, x_m: f.x_m, x_D: f.x_m / D,
    window: f.window, direction_deg: f.direction_deg,
    windDirection_deg: yaw.windDirection_deg, nacelle_deg: yaw.nacelle_deg, yawOffset_deg: yaw.yawOffset_deg, power_kW: yaw.power_kW,
    inflow, grid: g, deficit: def.deficit, maxDeficit, validCells: validU, gaussian: fit,
    centre, diskCentre: { method: disk.method, y_m: disk.y_m, z_m: disk.z_m, sy_m: NaN, sz_m: NaN, ok: disk.ok && hasWake },
    centroid: { ...centroid, ok: centroid.ok && hasWake },
    disagreement_m: dis, disagreement_D: dis / D,
    rews: { axis_ms: axisRews.rews_ms, centre_ms: cenRews.rews_ms, axisCoverage: axisRews.coverage, centreCoverage: cenRews.coverage, segments },
    hubDeficit: cross ? sampleBilinear(g, def.deficit, 0, H) : NaN,
    centreDeficit: cross && centre.ok ? sampleBilinear(g, def.deficit, centre.y_m, centre.z_m) : NaN,
    momentumDeficit_m4s2: mom,
    momentumRatio: mom / thrustMomentum(ct, D, inflow.hubSpeed_ms),
    ct,
    horizontal: cross ? horizontalCut(g, cut, cutZ, fit) : horizontalCut(g, cut, g.z0 + Math.floor(g.nz / 2) * g.dz, null),
    vertical: cross ? verticalCut(g, cut, cutY, fit) : verticalCut(g, cut, 0, null),
    flag, reason,
    addedTurbulence: addedTurbulence(f.budget?.turbulence.tiU, def.deficit, hasWake ? maxDeficit : NaN, o.minDeficit),
  };
  if (!cross) row.horizontalTrack = horizontalTrack(g, def.deficit, o.minDeficit);
  const notes: string[] = [];
  if (cross && disk.atEdge && flag === 'ok') notes.push('note: the disk estimator found its minimum at the edge of its search range');
  if (cross && flag === 'ok' && fit) {
    const q = fit.params;
    // A good fit can still have part of the wake outside the plane (it is fitted from its inner side); the plane's
    // integrals (momentum deficit, centroid) then miss that part: said, not hidden (2 sigma: common practice).
    const out: string[] = [];
    if (q.yc_m - 2 * q.sigmaY_m < yMin) out.push('y min');
    if (q.yc_m + 2 * q.sigmaY_m > yMax) out.push('y max');
    if (q.zc_m - 2 * q.sigmaZ_m < zMin) out.push('z min');
    if (q.zc_m + 2 * q.sigmaZ_m > zMax) out.push('z max');
    if (out.length) notes.push(`note: the fitted wake (2 sigma) reaches past the plane edge (${out.join(', ')}): the momentum deficit and centroid cover only the part inside`);
  }
  if (momentum && momentum.filled > 0) {
    notes.push(`note: ${momentum.filled} masked cells filled with the fitted Gaussian for the momentum deficit (${(100 * momentum.filledShare).toFixed(1)} % of it)`);
  }
  if (notes.length) row.reason = notes.join('; ');
  return row;
}
