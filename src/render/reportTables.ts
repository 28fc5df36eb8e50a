/**
 * Report tables made from a wake analysis: one row per plane and window, the downstream summary, and the yaw-offset
 * bins. Numbers are in SI units, lengths also in rotor diameters where the column says so.
 */
import type { WakeAnalysis } from '../wake/types.ts';
import type { ReportTable } from './report.ts';

/**
 * @param links paths (relative to the run folder) of the full CSV tables, if written: rows, downstream, steering
 */
export function wakeReportTables(a: WakeAnalysis, links: { rows?: string; downstream?: string; steering?: string } = {}): ReportTable[] {
  const D = a.rotorDiameter_m;
  const tables: ReportTable[] = [];
  tables.push({
    title: 'Per plane and window',
    columns: ['plane', 'window', 'x/D', 'flag', 'yaw offset (deg)', 'hub inflow (m/s)', 'max deficit', 'centre deficit', 'y_c (m)', 'z_c (m)', '\u03c3y (m)', '\u03c3z (m)', 'disk y (m)', 'centres apart (D)', 'reason'],
    rows: a.rows.map((r) => {
      const fit = r.centre.ok && r.gaussian ? r.gaussian.params : undefined;
      return [
        r.planeId, r.window.index, r.x_D, r.flag, r.yawOffset_deg, r.inflow.hubSpeed_ms, r.maxDeficit, r.centreDeficit,
        r.centre.ok ? r.centre.y_m : NaN, r.centre.ok ? r.centre.z_m : NaN, fit?.sigmaY_m ?? NaN, fit?.sigmaZ_m ?? NaN,
        r.diskCentre.ok ? r.diskCentre.y_m : NaN, r.disagreement_D, r.reason,
      ];
    }),
    ...(links.rows ? { link: links.rows } : {}),
  });
  if (a.downstream.points.length) {
    const g = a.downstream.gaussianFit;
    tables.push({
      title: 'Downstream summary (near-aligned windows)',
      columns: ['plane', 'x/D', 'windows', 'centre deficit', '\u00b1 95 %', 'amplitude', '\u03c3/D', '\u00b1 95 %', 'y_c/D', 'momentum ratio', 'Ct'],
      rows: a.downstream.points.map((p) => [p.planeId, p.x_D, p.amplitude.n, p.centreDeficit.mean, p.centreDeficit.ci95, p.amplitude.mean, p.sigma_D.mean, p.sigma_D.ci95, p.yc_m.mean / D, p.momentumRatio.mean, p.ct]),
      note: `Gaussian width fit: k* = ${g.kStar.toPrecision(4)} \u00b1 ${g.kStarSE.toPrecision(2)}, \u03b5 = ${g.eps.toPrecision(4)} \u00b1 ${g.epsSE.toPrecision(2)} (standard errors), ${g.nPlanes} planes${g.note ? `; ${g.note}` : ''}.`,
      ...(links.downstream ? { link: links.downstream } : {}),
    });
  }
  if (a.steering.bins.length) {
    tables.push({
      title: 'Wake steering: yaw-offset bins',
      columns: ['plane', 'x/D', '\u03b3 bin (deg)', 'mean \u03b3 (deg)', 'windows', 'y_c (m)', '\u00b1 95 % (m)', 'Jim\u00e9nez 2010 (m)', 'Bastankhah 2016 (m)'],
      rows: a.steering.bins.map((b) => [b.planeId, b.x_D, `${b.gammaLo_deg} to ${b.gammaHi_deg}`, b.gammaMean_deg, b.n, b.yc_m, b.ci95_m, b.jimenez_m, b.bastankhah_m]),
      ...(a.steering.note ? { note: a.steering.note } : {}),
      ...(links.steering ? { link: links.steering } : {}),
    });
  }
  return tables;
}
