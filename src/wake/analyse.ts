/**
 * Entry point of the wake analysis: every FieldResult (one per plane and window) through analysePlaneWindow, then
 * the downstream curves with the Gaussian-model fit and the top-hat model, and the yaw-offset bins for wake
 * steering. Pure: the lead loads the series files (readSeries) and passes them in.
 *
 * Thrust coefficient for the campaign-level models: the campaign's value, or its curve at the median hub-height
 * inflow speed over the ok rows. Wake growth k_y = k_z for the Bastankhah & Porte-Agel (2016) deflection: the fitted
 * k* when the downstream fit succeeded with k* > 0, else 0.38 I + 0.004 (Niayifar & Porte-Agel 2016 [from memory]).
 */
import type { FieldResult } from '../retrieval/types.ts';
import type { Campaign } from '../campaign/types.ts';
import type { Series } from '../io/series.ts';
import type { InflowProfile, WakeAnalysis, WakePlaneWindow } from './types.ts';
import { resolveWakeOptions, type WakeOptions } from './options.ts';
import { analysePlaneWindow, type InflowSpec } from './planeWindow.ts';
import { downstreamCurves } from './downstream.ts';
import { binSteering } from './steering.ts';
import { thrustCoefficientAt } from '../campaign/thrust.ts';
import { kStarFromTurbulence } from './wakeModels.ts';
import { median } from './stats.ts';

export interface WakeInputs {
  /** Inflow reference series (values height_m, speed_ms, direction_deg), when campaign.inflow.kind is 'series'. */
  inflowSeries?: Series;
  /** Turbine series (values yaw_deg, optional wind_direction_deg, power_kw). */
  turbineSeries?: Series;
  /** Inflow kind profile: the profile inflow of a field's window (from the profile target of the same run). */
  profileInflow?: (f: FieldResult) => InflowProfile | undefined;
}

/** The per-plane-window context analysePlaneWindow needs, from the campaign and the loaded series. */
export function planeWindowContext(campaign: Campaign, inputs: WakeInputs, options: Partial<WakeOptions> = {}) {
  const o: WakeOptions = resolveWakeOptions(options);
  const t = campaign.turbine;
  return {
    rotorDiameter_m: t.rotorDiameter_m, hubHeight_m: t.hubHeight_m, thrustCoefficient: t.thrustCoefficient as number | [number, number][],
    inflow: campaign.inflow as InflowSpec, inflowSeries: inputs.inflowSeries, turbineSeries: inputs.turbineSeries, profileInflow: inputs.profileInflow, options: o,
  };
}

export function analyseWake(fields: FieldResult[], campaign: Campaign, inputs: WakeInputs, options: Partial<WakeOptions> = {}): WakeAnalysis {
  const ctx = planeWindowContext(campaign, inputs, options);
  const rows = [...fields]
    .sort((a, b) => a.planeIndex - b.planeIndex || a.window.start_s - b.window.start_s)
    .map((f) => analysePlaneWindow(f, ctx));
  return summariseWake(rows, campaign, inputs, options);
}

/**
 * The campaign-level part of the analysis from the per-plane-window rows (analysePlaneWindow): downstream curves,
 * model fits and steering bins. A run analyses each field as its window finishes and calls this at the end, so no
 * field is kept longer than its window.
 */
export function summariseWake(rowsIn: WakePlaneWindow[], campaign: Campaign, inputs: WakeInputs, options: Partial<WakeOptions> = {}): WakeAnalysis {
  const o: WakeOptions = resolveWakeOptions(options);
  const t = campaign.turbine;
  const D = t.rotorDiameter_m, H = t.hubHeight_m;
  const inflow = campaign.inflow as InflowSpec;
  const notes: string[] = [];
  const rows = [...rowsIn].sort((a, b) => a.planeIndex - b.planeIndex || a.window.start_s - b.window.start_s);
  const okRows = rows.filter((r) => r.flag === 'ok');
  const hub = median(okRows.map((r) => r.inflow.hubSpeed_ms));
  const { ct, source } = thrustCoefficientAt(t.thrustCoefficient as number | [number, number][], Number.isFinite(hub) ? hub : median(rows.map((r) => r.inflow.hubSpeed_ms)));
  const ti = campaign.wake.turbulenceIntensity;
  const downstream = downstreamCurves(rows, D, campaign.wake.yawBin_deg, ct, source, hub, ti, o.topHatK);
  const fitted = downstream.gaussianFit.ok && downstream.gaussianFit.kStar > 0;
  const kStar = fitted ? downstream.gaussianFit.kStar : kStarFromTurbulence(ti);
  notes.push(fitted
    ? `yawed-wake model uses the fitted k* = ${kStar.toFixed(4)}`
    : `yawed-wake model uses k* = 0.38 I + 0.004 = ${kStar.toFixed(4)} (I = ${ti})`);
  const steering = binSteering(rows, { rotorDiameter_m: D, binWidth_deg: campaign.wake.yawBin_deg, ct, turbulenceIntensity: ti, kStar, jimenezBeta: o.jimenezBeta });
  if (campaign.inflow.kind === 'series' && !inputs.inflowSeries) notes.push('inflow series requested but not loaded: rows flagged no_inflow');
  if (inflow.kind === 'series') notes.push('series inflow: each row\'s speed projected on the window direction, then fitted with a power law');
  notes.push(`thresholds: no wake below ${o.minDeficit} deficit, fit needs ${o.minCells} valid cells (common practice)`);
  const flags = new Map<string, number>();
  for (const r of rows) flags.set(r.flag, (flags.get(r.flag) ?? 0) + 1);
  notes.push('rows by flag: ' + [...flags].map(([k, v]) => `${k} ${v}`).join(', '));
  return { rotorDiameter_m: D, hubHeight_m: H, rows, downstream, steering, notes };
}
