/**
 * Writes the wake analysis under <runDir>/wake/ (atomic writes). The columns of every table, their units, frames,
 * meanings and precision are declared in records/tables/wake.ts (the data dictionary); the values here follow that
 * order. Empty cell = NaN / not computed.
 *
 * wake/wake_table.csv — one row per plane and window; wake/ensembles.csv — one row per plane and condition bin
 * (when the campaign declares conditions: bin, condition, windows_pooled, then the wake-table columns, start and end
 * those of the first and last pooled window); wake/steering.csv — one row per cross plane and yaw-offset bin; wake/downstream.csv — one row per cross plane; wake/profiles.csv — cuts through the wake centre (long
 * format); wake/track.csv — lateral centre along x on horizontal planes; wake/model_fits.json — { gaussian:
 * GaussianModelFit, topHat, gaussianCurve, topHatCurve, steering: {ct, turbulenceIntensity, note, curves (per
 * plane: gamma_deg, model_tophat_deflection_m, model_gaussian_deflection_m)}, notes }.
 */
import { join } from 'node:path';
import type { OutputRecord } from '../records/manifest.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import { downstreamTable, ensembleTable, profilesTable, steeringTable, trackTable, wakeTable } from '../records/tables/wake.ts';
import { headerLine, rowLine, tableLayout, type Cell, type TableLayout } from '../records/tableText.ts';
import type { WakeAnalysis, WakePlaneWindow } from './types.ts';
import { gaussianAmplitude, gaussianSigma_D, topHatDeficit, topHatRadius_D } from './wakeModels.ts';

export const L = {
  table: tableLayout(wakeTable), ensembles: tableLayout(ensembleTable), steering: tableLayout(steeringTable), downstream: tableLayout(downstreamTable),
  profiles: tableLayout(profilesTable), track: tableLayout(trackTable),
};

export function wakeTableRows(a: WakeAnalysis): Cell[][] {
  return wakeRows(a.rows, false);
}

/**
 * Ensemble rows (one per plane and condition bin): the columns of the wake table after bin (the bin's index),
 * condition (its intervals) and windows_pooled; their start and end are those of the first and last pooled window.
 */
export function ensembleTableRows(rows: WakePlaneWindow[]): Cell[][] {
  return wakeRows(rows, true);
}

export function ensembleTableCsv(rows: WakePlaneWindow[]): string {
  return csv(L.ensembles, ensembleTableRows(rows));
}

function wakeRows(rows: WakePlaneWindow[], ensemble: boolean): Cell[][] {
  return rows.map((r) => {
    const f = r.gaussian, p = f?.params, e = f?.stderr, i = r.inflow;
    const w = r.window;
    return [
      ...(ensemble ? [w.index, w.label ?? '', w.members?.length ?? 0] : []),
      r.planeId, r.orientation, w.index, isoTime(w.start_s), isoTime(w.end_s), w.start_s, w.end_s, w.kind ?? '', w.label ?? '', w.level,
      r.x_m, r.x_D, r.direction_deg, r.windDirection_deg, r.nacelle_deg, r.yawOffset_deg, r.power_kW,
      i.source, i.law, i.zRef_m, i.uRef_ms, i.alpha, i.uStar_ms, i.z0_m, i.hubSpeed_ms, i.rmse_ms, i.r2, i.heights_m.length, i.note,
      r.validCells, r.maxDeficit, p?.amplitude, e?.amplitude, p?.yc_m, e?.yc_m, p?.zc_m, e?.zc_m, p?.sigmaY_m, e?.sigmaY_m,
      p?.sigmaZ_m, e?.sigmaZ_m, p?.offset, e?.offset, f?.r2, f?.rmse, f?.n, f?.iterations, f ? f.converged : undefined,
      r.diskCentre.y_m, r.diskCentre.z_m, r.centroid.y_m, r.centroid.z_m, r.disagreement_m, r.disagreement_D,
      r.rews.axis_ms, r.rews.centre_ms, r.rews.axisCoverage, r.rews.centreCoverage, r.rews.segments,
      r.hubDeficit, r.centreDeficit, r.momentumDeficit_m4s2, r.momentumRatio, r.ct, r.flag, r.reason,
      r.addedTurbulence?.wake, r.addedTurbulence?.ambient, r.addedTurbulence?.added,
    ];
  });
}

const csv = (layout: TableLayout, rows: Cell[][]) => headerLine(layout) + rows.map((r) => rowLine(layout, r)).join('');

export function wakeTableCsv(a: WakeAnalysis): string {
  return csv(L.table, wakeTableRows(a));
}

export function steeringRows(a: WakeAnalysis): Cell[][] {
  return a.steering.bins.map((b) => [b.planeId, b.x_m, b.x_D, b.gammaCentre_deg, b.gammaLo_deg, b.gammaHi_deg, b.gammaMean_deg, b.n, b.yc_m, b.sd_m, b.ci95_m, b.yc_D, b.ct, b.jimenez_m, b.bastankhah_m, b.deflection_m, b.deflectionCi95_m]);
}

export function steeringCsv(a: WakeAnalysis): string {
  return csv(L.steering, steeringRows(a));
}

export function downstreamCsv(a: WakeAnalysis): string {
  const d = a.downstream, g = d.gaussianFit;
  let s = headerLine(L.downstream);
  for (const p of d.points) {
    const ms = gaussianSigma_D(p.x_D, g.kStar, g.eps);
    // The models at this plane's Ct (the windows pooled here), as the ct column beside them.
    const pct = Number.isFinite(p.ct) ? p.ct : d.topHat.ct;
    s += rowLine(L.downstream, [p.planeId, p.x_m, p.x_D, p.amplitude.n, p.amplitude.mean, p.amplitude.sd, p.amplitude.ci95, p.sigmaY_m.mean, p.sigmaY_m.sd,
      p.sigmaZ_m.mean, p.sigmaZ_m.sd, p.sigma_D.mean, p.sigma_D.sd, p.sigma_D.ci95, p.yc_m.mean, p.yc_m.sd, p.zc_m.mean, p.zc_m.sd,
      p.centreDeficit.mean, p.hubDeficit.mean, p.momentumRatio.mean, p.hubSpeed_ms, p.ct,
      ms, gaussianAmplitude(ms, pct), topHatDeficit(p.x_D, pct, d.topHat.k), topHatRadius_D(p.x_D, d.topHat.k)]);
  }
  return s;
}

export function profilesRows(a: WakeAnalysis): Cell[][] {
  const out: Cell[][] = [];
  for (const r of a.rows) {
    for (const [name, p] of [['horizontal', r.horizontal], ['vertical', r.vertical]] as const) {
      for (let i = 0; i < p.coord_m.length; i++) out.push([r.planeId, r.window.index, name, p.coord_m[i], p.u_ms[i], p.su_ms[i], p.deficit[i], p.model[i]]);
    }
  }
  return out;
}

export function profilesCsv(a: WakeAnalysis): string {
  return csv(L.profiles, profilesRows(a));
}

/** Horizontal planes: the lateral wake centre of each downstream row. */
export function trackCsv(a: WakeAnalysis): string {
  let s = headerLine(L.track);
  for (const r of a.rows) {
    const t = r.horizontalTrack;
    if (t) for (let i = 0; i < t.x_m.length; i++) s += rowLine(L.track, [r.planeId, r.window.index, t.x_m[i], t.yc_m[i], t.syc_m[i], t.amplitude[i], t.sigmaY_m[i]]);
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
    steering: {
      ct: a.steering.ct, turbulenceIntensity: a.steering.turbulenceIntensity, note: a.steering.note,
      // named for what they are (the models' authors are cited in the data dictionary)
      curves: a.steering.curves.map((c) => ({ planeId: c.planeId, x_D: c.x_D, gamma_deg: c.gamma_deg, model_tophat_deflection_m: c.jimenez_m, model_gaussian_deflection_m: c.bastankhah_m })),
    },
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
  if (a.rows.some((r) => r.horizontalTrack)) files.push(['track', 'wake/track.csv', trackCsv(a), 'horizontal planes: lateral wake centre per downstream row']);
  return files.map(([kind, path, text, description]) => {
    writeFileAtomic(join(runDir, path), text);
    return { kind, path, description };
  });
}
