/**
 * Writes the wake analysis under <runDir>/wake/ (atomic writes). Numbers in SI units; empty cell = NaN/not
 * computed. Files and columns:
 *
 * wake/wake_table.csv — one row per plane and window:
 *   plane, orientation, window, start, end (ISO 8601 UTC), start_s, end_s (Unix s), window_kind (fixed|list|segment|
 *   record), window_label (list label or state level), state_level_deg (segment windows' yaw-offset level), x_m, x_D,
 *   direction_deg (rotor-frame wind direction, from), wind_direction_deg (used for the yaw offset), nacelle_deg,
 *   yaw_offset_deg (nacelle - wind, [-180, 180), + = nacelle clockwise from above), power_kw,
 *   inflow_source (series|plane|fixed), inflow_law (power|log), inflow_zref_m, inflow_uref_ms, inflow_alpha,
 *   inflow_ustar_ms, inflow_z0_m, inflow_hub_speed_ms, inflow_rmse_ms, inflow_r2, inflow_points, inflow_note,
 *   valid_cells, max_deficit (98th percentile), amplitude, amplitude_se, yc_m, yc_se_m, zc_m, zc_se_m,
 *   sigma_y_m, sigma_y_se_m, sigma_z_m, sigma_z_se_m, offset, offset_se, fit_r2, fit_rmse, fit_n, fit_iterations,
 *   fit_converged (Gaussian fit; given for flagged rows too when a fit was made),
 *   disk_y_m, disk_z_m (minimum-available-power disk centre), centroid_y_m, centroid_z_m (deficit centroid),
 *   disagreement_m, disagreement_D (Gaussian vs disk centre), rews_axis_ms, rews_centre_ms, rews_axis_coverage,
 *   rews_centre_coverage, rews_segments, hub_deficit, centre_deficit, momentum_deficit_m4s2, momentum_ratio, ct,
 *   flag (ok|no_wake|off_edge|too_few_cells|not_converged|absurd_width|no_inflow|horizontal_plane), reason.
 *
 * wake/ensembles.csv — one row per plane and condition bin (when the campaign declares conditions): bin,
 *   condition (the bin's intervals), windows_pooled, then the wake-table columns.
 *
 * wake/steering.csv — one row per cross plane and yaw-offset bin:
 *   plane, x_m, x_D, gamma_centre_deg, gamma_lo_deg, gamma_hi_deg, gamma_mean_deg, n, yc_m, sd_m, ci95_m, yc_D,
 *   jimenez_m, bastankhah_m, deflection_m (yc minus the plane's gamma = 0 bin mean), deflection_ci95_m.
 *
 * wake/downstream.csv — one row per cross plane (ok, near-aligned windows):
 *   plane, x_m, x_D, n, amplitude, amplitude_sd, amplitude_ci95, sigma_y_m, sigma_y_sd, sigma_z_m, sigma_z_sd,
 *   sigma_D, sigma_D_sd, sigma_D_ci95, yc_m, yc_sd, zc_m, zc_sd, centre_deficit, hub_deficit, momentum_ratio,
 *   hub_speed_ms, ct, model_sigma_D (fitted Gaussian model), model_amplitude, tophat_deficit, tophat_radius_D.
 *
 * wake/profiles.csv — cuts through the wake centre, long format:
 *   plane, window, cut (horizontal: along y | vertical: along z), coord_m, u_ms, su_ms, deficit, model.
 *
 * wake/tracks.csv — horizontal planes only, one row per plane, window and downstream row of cells (a 1D Gaussian
 *   across y): plane, window, x_m, x_D, yc_m, yc_se_m (standard error), sigma_y_m, amplitude (peak deficit).
 *
 * wake/model_fits.json — { gaussian: GaussianModelFit, topHat, gaussianCurve, topHatCurve, steering: {ct,
 *   turbulenceIntensity, note, curves}, notes }.
 */
import { join } from 'node:path';
import type { OutputRecord } from '../pipeline/manifest.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import type { WakeAnalysis, WakePlaneWindow } from './types.ts';
import { gaussianAmplitude, gaussianSigma_D, topHatDeficit, topHatRadius_D } from './wakeModels.ts';

const TABLE_HEADER = [
  'plane', 'orientation', 'window', 'start', 'end', 'start_s', 'end_s', 'window_kind', 'window_label', 'state_level_deg', 'x_m', 'x_D', 'direction_deg', 'wind_direction_deg',
  'nacelle_deg', 'yaw_offset_deg', 'power_kw', 'inflow_source', 'inflow_law', 'inflow_zref_m', 'inflow_uref_ms', 'inflow_alpha',
  'inflow_ustar_ms', 'inflow_z0_m', 'inflow_hub_speed_ms', 'inflow_rmse_ms', 'inflow_r2', 'inflow_points', 'inflow_note',
  'valid_cells', 'max_deficit', 'amplitude', 'amplitude_se', 'yc_m', 'yc_se_m', 'zc_m', 'zc_se_m', 'sigma_y_m', 'sigma_y_se_m',
  'sigma_z_m', 'sigma_z_se_m', 'offset', 'offset_se', 'fit_r2', 'fit_rmse', 'fit_n', 'fit_iterations', 'fit_converged',
  'disk_y_m', 'disk_z_m', 'centroid_y_m', 'centroid_z_m', 'disagreement_m', 'disagreement_D', 'rews_axis_ms', 'rews_centre_ms',
  'rews_axis_coverage', 'rews_centre_coverage', 'rews_segments', 'hub_deficit', 'centre_deficit', 'momentum_deficit_m4s2',
  'momentum_ratio', 'ct', 'flag', 'reason',
];

export function wakeTableCsv(a: WakeAnalysis): string {
  return wakeRowsCsv(a.rows, false);
}

/**
 * Ensemble rows (one per plane and condition bin): the columns of the wake table after bin (the bin's index),
 * condition (its intervals) and windows_pooled; their start and end are those of the first and last pooled window.
 */
export function ensembleTableCsv(rows: WakePlaneWindow[]): string {
  return wakeRowsCsv(rows, true);
}

function wakeRowsCsv(rows: WakePlaneWindow[], ensemble: boolean): string {
  let s = csvRow(ensemble ? ['bin', 'condition', 'windows_pooled', ...TABLE_HEADER] : TABLE_HEADER);
  for (const r of rows) {
    const f = r.gaussian, p = f?.params, e = f?.stderr, i = r.inflow;
    const w = r.window;
    s += csvRow([
      ...(ensemble ? [w.index, w.label ?? '', w.members?.length ?? 0] : []),
      r.planeId, r.orientation, w.index, isoTime(w.start_s), isoTime(w.end_s), w.start_s, w.end_s, w.kind ?? '', w.label ?? '', w.level,
      r.x_m, r.x_D, r.direction_deg, r.windDirection_deg, r.nacelle_deg, r.yawOffset_deg, r.power_kW,
      i.source, i.law, i.zRef_m, i.uRef_ms, i.alpha, i.uStar_ms, i.z0_m, i.hubSpeed_ms, i.rmse_ms, i.r2, i.heights_m.length, i.note,
      r.validCells, r.maxDeficit, p?.amplitude, e?.amplitude, p?.yc_m, e?.yc_m, p?.zc_m, e?.zc_m, p?.sigmaY_m, e?.sigmaY_m,
      p?.sigmaZ_m, e?.sigmaZ_m, p?.offset, e?.offset, f?.r2, f?.rmse, f?.n, f?.iterations, f ? f.converged : undefined,
      r.diskCentre.y_m, r.diskCentre.z_m, r.centroid.y_m, r.centroid.z_m, r.disagreement_m, r.disagreement_D,
      r.rews.axis_ms, r.rews.centre_ms, r.rews.axisCoverage, r.rews.centreCoverage, r.rews.segments,
      r.hubDeficit, r.centreDeficit, r.momentumDeficit_m4s2, r.momentumRatio, r.ct, r.flag, r.reason,
    ]);
  }
  return s;
}

export function steeringCsv(a: WakeAnalysis): string {
  let s = csvRow(['plane', 'x_m', 'x_D', 'gamma_centre_deg', 'gamma_lo_deg', 'gamma_hi_deg', 'gamma_mean_deg', 'n', 'yc_m', 'sd_m', 'ci95_m', 'yc_D', 'jimenez_m', 'bastankhah_m', 'deflection_m', 'deflection_ci95_m']);
  for (const b of a.steering.bins) {
    s += csvRow([b.planeId, b.x_m, b.x_D, b.gammaCentre_deg, b.gammaLo_deg, b.gammaHi_deg, b.gammaMean_deg, b.n, b.yc_m, b.sd_m, b.ci95_m, b.yc_D, b.jimenez_m, b.bastankhah_m, b.deflection_m, b.deflectionCi95_m]);
  }
  return s;
}

export function downstreamCsv(a: WakeAnalysis): string {
  const d = a.downstream, g = d.gaussianFit;
  let s = csvRow(['plane', 'x_m', 'x_D', 'n', 'amplitude', 'amplitude_sd', 'amplitude_ci95', 'sigma_y_m', 'sigma_y_sd', 'sigma_z_m', 'sigma_z_sd',
    'sigma_D', 'sigma_D_sd', 'sigma_D_ci95', 'yc_m', 'yc_sd', 'zc_m', 'zc_sd', 'centre_deficit', 'hub_deficit', 'momentum_ratio', 'hub_speed_ms', 'ct',
    'model_sigma_D', 'model_amplitude', 'tophat_deficit', 'tophat_radius_D']);
  for (const p of d.points) {
    const ms = gaussianSigma_D(p.x_D, g.kStar, g.eps);
    s += csvRow([p.planeId, p.x_m, p.x_D, p.amplitude.n, p.amplitude.mean, p.amplitude.sd, p.amplitude.ci95, p.sigmaY_m.mean, p.sigmaY_m.sd,
      p.sigmaZ_m.mean, p.sigmaZ_m.sd, p.sigma_D.mean, p.sigma_D.sd, p.sigma_D.ci95, p.yc_m.mean, p.yc_m.sd, p.zc_m.mean, p.zc_m.sd,
      p.centreDeficit.mean, p.hubDeficit.mean, p.momentumRatio.mean, p.hubSpeed_ms, p.ct,
      ms, gaussianAmplitude(ms, d.topHat.ct), topHatDeficit(p.x_D, d.topHat.ct, d.topHat.k), topHatRadius_D(p.x_D, d.topHat.k)]);
  }
  return s;
}

export function profilesCsv(a: WakeAnalysis): string {
  let s = csvRow(['plane', 'window', 'cut', 'coord_m', 'u_ms', 'su_ms', 'deficit', 'model']);
  for (const r of a.rows) {
    for (const [name, p] of [['horizontal', r.horizontal], ['vertical', r.vertical]] as const) {
      for (let i = 0; i < p.coord_m.length; i++) s += csvRow([r.planeId, r.window.index, name, p.coord_m[i], p.u_ms[i], p.su_ms[i], p.deficit[i], p.model[i]]);
    }
  }
  return s;
}

export function tracksCsv(a: WakeAnalysis): string {
  let s = csvRow(['plane', 'window', 'x_m', 'x_D', 'yc_m', 'yc_se_m', 'sigma_y_m', 'amplitude']);
  for (const r of a.rows) {
    const t = r.horizontalTrack;
    if (t) for (let i = 0; i < t.x_m.length; i++) s += csvRow([r.planeId, r.window.index, t.x_m[i], t.x_m[i] / a.rotorDiameter_m, t.yc_m[i], t.syc_m[i], t.sigmaY_m[i], t.amplitude[i]]);
  }
  return s;
}

/** JSON with NaN/Infinity as null. */
function json(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2) + '\n';
}

export function modelFitsJson(a: WakeAnalysis): string {
  const d = a.downstream;
  return json({
    rotorDiameter_m: a.rotorDiameter_m, hubHeight_m: a.hubHeight_m,
    gaussian: d.gaussianFit, topHat: d.topHat, gaussianCurve: d.gaussianCurve, topHatCurve: d.topHatCurve,
    steering: { ct: a.steering.ct, turbulenceIntensity: a.steering.turbulenceIntensity, note: a.steering.note, curves: a.steering.curves },
    notes: a.notes,
  });
}

export function writeWakeOutputs(a: WakeAnalysis, runDir: string, ensembleRows: WakePlaneWindow[] = []): OutputRecord[] {
  const files: [string, string, string, string][] = [
    ...(ensembleRows.length ? [['ensemble-table', 'wake/ensembles.csv', ensembleTableCsv(ensembleRows), 'wake centre, widths, inflow and flags per plane and condition bin (ensembles of windows)'] as [string, string, string, string]] : []),
    ['wake-table', 'wake/wake_table.csv', wakeTableCsv(a), 'wake centre, widths, inflow, REWS and flags per plane and window'],
    ['steering', 'wake/steering.csv', steeringCsv(a), 'lateral wake centre binned by yaw offset, with deflection models'],
    ['downstream', 'wake/downstream.csv', downstreamCsv(a), 'deficit amplitude, widths and centre against x/D, with model values'],
    ['profiles', 'wake/profiles.csv', profilesCsv(a), 'horizontal and vertical cuts through the wake centre'],
    ['model-fit', 'wake/model_fits.json', modelFitsJson(a), 'Gaussian wake-model fit (k*, eps) with intervals, top-hat model (k fitted or from the inflow), model curves'],
  ];
  if (a.rows.some((r) => r.horizontalTrack)) files.push(['tracks', 'wake/tracks.csv', tracksCsv(a), 'horizontal planes: lateral wake centre per downstream row']);
  return files.map(([kind, path, text, description]) => {
    writeFileAtomic(join(runDir, path), text);
    return { kind, path, description };
  });
}
