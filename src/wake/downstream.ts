/**
 * Downstream curves for modellers: per cross plane the mean over its ok, near-aligned windows (|gamma| <= w/2, or
 * all ok windows when no yaw offset is known) of the Gaussian amplitude, widths, centre, centreline and hub deficits;
 * then a least-squares line sigma/d0 = k* x/d0 + eps through the plane means (Bastankhah & Porte-Agel 2014,
 * Renewable Energy 70, 116-123 [from memory]), with sigma = sqrt(sigma_y sigma_z), standard errors from
 * (X^T X)^-1 SSR/(n - 2) and 95 % intervals t_{0.975, n-2} SE. With two planes the line is exact (no interval); with
 * one plane eps is held at the paper's 0.2 sqrt(beta) and k* = (sigma/d0 - eps)/(x/d0). The top-hat model (Jensen
 * 1983; Katic et al. 1986) is given beside it, its decay constant k fitted to the planes' mean centreline deficits
 * where they allow (wakeModels.fitTopHatK), else derived from the ambient turbulence intensity, k = 0.4 I
 * (Pena, Rethore & van der Laan 2016 [from memory]), unless given explicitly.
 * A plane's model values (its residual's model amplitude, the top-hat fit) use that plane's Ct, the mean over the
 * windows pooled there; the curves over x/D use the campaign-level Ct (analyse.ts).
 */
import type { DownstreamPoint, DownstreamResult, GaussianModelFit, ModelCurve, WakePlaneWindow } from './types.ts';
import { stat, studentTQuantile } from './stats.ts';
import { bpEpsilon, fitTopHatK, gaussianAmplitude, gaussianSigma_D, topHatDeficit, topHatKFromTurbulence, topHatRadius_D } from './wakeModels.ts';
import type { TopHatModel } from './types.ts';
import { groupBy } from '../math/group.ts';

export function downstreamPoints(rows: WakePlaneWindow[], D: number, binWidth_deg: number): DownstreamPoint[] {
  const ok = rows.filter((r) => r.orientation === 'cross' && r.flag === 'ok' && r.gaussian);
  const anyYaw = ok.some((r) => Number.isFinite(r.yawOffset_deg));
  const aligned = ok.filter((r) => !anyYaw || (Number.isFinite(r.yawOffset_deg) && Math.abs(r.yawOffset_deg) <= binWidth_deg / 2));
  const byPlane = groupBy(aligned, (r) => r.planeIndex);
  const pts: DownstreamPoint[] = [];
  for (const rs of byPlane.values()) {
    const g = (f: (r: WakePlaneWindow) => number) => stat(rs.map(f));
    const hub = stat(rs.map((r) => r.inflow.hubSpeed_ms));
    const ct = stat(rs.map((r) => r.ct));
    pts.push({
      planeId: rs[0].planeId, x_m: rs[0].x_m, x_D: rs[0].x_m / D,
      amplitude: g((r) => r.gaussian!.params.amplitude),
      sigmaY_m: g((r) => r.gaussian!.params.sigmaY_m),
      sigmaZ_m: g((r) => r.gaussian!.params.sigmaZ_m),
      sigma_D: g((r) => Math.sqrt(r.gaussian!.params.sigmaY_m * r.gaussian!.params.sigmaZ_m) / D),
      yc_m: g((r) => r.centre.y_m), zc_m: g((r) => r.centre.z_m),
      centreDeficit: g((r) => r.centreDeficit ?? NaN),
      hubDeficit: g((r) => r.hubDeficit), momentumRatio: g((r) => r.momentumRatio),
      hubSpeed_ms: hub.mean, ct: ct.mean,
    });
  }
  return pts.sort((a, b) => a.x_m - b.x_m);
}

export function fitGaussianModel(pts: DownstreamPoint[], ct: number, ctSource: 'value' | 'curve', hubSpeed_ms: number): GaussianModelFit {
  const use = pts.filter((p) => Number.isFinite(p.sigma_D.mean) && p.x_D > 0);
  const n = use.length;
  const epsTheory = bpEpsilon(ct);
  const base = { epsTheory, ct, ctSource, hubSpeed_ms, nPlanes: n };
  const nanCI: [number, number] = [NaN, NaN];
  let kStar = NaN, eps = NaN, kSE = NaN, eSE = NaN, dof = 0, note = '';
  if (n === 0) {
    return { ...base, kStar, eps, kStarSE: kSE, epsSE: eSE, kStarCI95: nanCI, epsCI95: nanCI, dof: 0, rmse: NaN, residuals: [], ok: false, note: 'no cross plane with an ok Gaussian fit' };
  }
  if (n === 1) {
    eps = epsTheory;
    kStar = (use[0].sigma_D.mean - eps) / use[0].x_D;
    note = '1 plane: eps held at 0.2 sqrt(beta), k* from that plane alone, no interval';
  } else {
    const xs = use.map((p) => p.x_D), ys = use.map((p) => p.sigma_D.mean);
    const mx = xs.reduce((a, b) => a + b, 0) / n, my = ys.reduce((a, b) => a + b, 0) / n;
    let sxx = 0, sxy = 0;
    for (let i = 0; i < n; i++) { sxx += (xs[i] - mx) ** 2; sxy += (xs[i] - mx) * (ys[i] - my); }
    if (!(sxx > 0)) {
      return { ...base, kStar, eps, kStarSE: kSE, epsSE: eSE, kStarCI95: nanCI, epsCI95: nanCI, dof: 0, rmse: NaN, residuals: [], ok: false, note: 'all planes at the same distance: no slope' };
    }
    kStar = sxy / sxx;
    eps = my - kStar * mx;
    dof = n - 2;
    if (dof >= 1) {
      let ssr = 0;
      for (let i = 0; i < n; i++) ssr += (ys[i] - (kStar * xs[i] + eps)) ** 2;
      const s2 = ssr / dof;
      kSE = Math.sqrt(s2 / sxx);
      eSE = Math.sqrt(s2 * (1 / n + (mx * mx) / sxx));
      note = dof < 3 ? `only ${n} planes (${dof} degree${dof > 1 ? 's' : ''} of freedom): intervals are wide` : '';
    } else note = '2 planes: the line passes through both exactly, no interval';
  }
  const t = studentTQuantile(0.975, dof);
  const residuals = use.map((p) => {
    const fitted = gaussianSigma_D(p.x_D, kStar, eps);
    return { planeId: p.planeId, x_D: p.x_D, sigma_D: p.sigma_D.mean, fitted_D: fitted, residual_D: p.sigma_D.mean - fitted, amplitude: p.amplitude.mean, modelAmplitude: gaussianAmplitude(fitted, Number.isFinite(p.ct) ? p.ct : ct) };
  });
  const rmse = Math.sqrt(residuals.reduce((a, r) => a + r.residual_D ** 2, 0) / n);
  return {
    ...base, kStar, eps, kStarSE: kSE, epsSE: eSE,
    kStarCI95: dof >= 1 ? [kStar - t * kSE, kStar + t * kSE] : nanCI,
    epsCI95: dof >= 1 ? [eps - t * eSE, eps + t * eSE] : nanCI,
    dof, rmse, residuals, ok: Number.isFinite(kStar) && Number.isFinite(eps), note,
  };
}

function axis(pts: DownstreamPoint[]): number[] {
  const lo = Math.max(0.5, Math.min(2, ...pts.map((p) => p.x_D - 1)));
  const hi = Math.max(12, ...pts.map((p) => p.x_D + 1));
  const out: number[] = [];
  for (let x = lo; x <= hi + 1e-9; x += 0.1) out.push(Math.round(x * 1000) / 1000);
  return out;
}

/** The top-hat model of the run: k fitted to the planes, else from the turbulence intensity, unless given. */
export function topHatModel(points: DownstreamPoint[], ct: number, turbulenceIntensity: number, given?: number): TopHatModel {
  const kDefault = topHatKFromTurbulence(turbulenceIntensity);
  // Each plane's deficit against the model at that plane's Ct (the mean over the windows pooled there).
  const fit = fitTopHatK(points.map((p) => p.x_D), points.map((p) => p.centreDeficit.mean), points.map((p) => (Number.isFinite(p.ct) ? p.ct : ct)), studentTQuantile);
  const kSource: TopHatModel['kSource'] = given !== undefined ? 'option' : fit.ok ? 'fit' : 'inflow';
  const k = kSource === 'option' ? given! : kSource === 'fit' ? fit.k : kDefault;
  const kNote = kSource === 'option'
    ? 'given in the wake options'
    : kSource === 'fit'
      ? `fitted to the centreline deficits of ${fit.n} plane${fit.n === 1 ? '' : 's'}${fit.note ? ` (${fit.note})` : ''}`
      : `from the ambient turbulence intensity, k = 0.4 I with I = ${turbulenceIntensity} (Pe\u00f1a et al. 2016)${fit.note ? `; not fitted: ${fit.note}` : ''}`;
  return {
    k, ct, kNote, kDefault, turbulenceIntensity, kFit: fit.k, kFitSE: fit.se, kFitCI95: fit.ci95, fitPlanes: fit.n, fitRmse: fit.rmse,
    fitOk: fit.ok, fitNote: fit.note, kSource,
  };
}

export function downstreamCurves(rows: WakePlaneWindow[], D: number, binWidth_deg: number, ct: number, ctSource: 'value' | 'curve', hubSpeed_ms: number, turbulenceIntensity: number, topHatK?: number): DownstreamResult {
  const points = downstreamPoints(rows, D, binWidth_deg);
  const gaussianFit = fitGaussianModel(points, ct, ctSource, hubSpeed_ms);
  const xs = axis(points);
  const gaussianCurve: ModelCurve = { x_D: xs, width_D: xs.map((x) => gaussianSigma_D(x, gaussianFit.kStar, gaussianFit.eps)), deficit: [] };
  gaussianCurve.deficit = gaussianCurve.width_D.map((s) => gaussianAmplitude(s, ct));
  const topHat = topHatModel(points, ct, turbulenceIntensity, topHatK);
  const topHatCurve: ModelCurve = { x_D: xs, deficit: xs.map((x) => topHatDeficit(x, ct, topHat.k)), width_D: xs.map((x) => topHatRadius_D(x, topHat.k)) };
  return { points, gaussianFit, topHat, gaussianCurve, topHatCurve };
}
