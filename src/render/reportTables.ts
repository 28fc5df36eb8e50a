/**
 * Report tables made from a wake analysis: one row per plane and window, the downstream summary, the yaw-offset
 * bins, the wake track of horizontal planes, and the condition bins (ensembles). Numbers are in SI units, lengths also in rotor diameters where the
 * column says so. A value with a known uncertainty is shown as "value ± uncertainty", both rounded to the
 * uncertainty (numbers.ts); the column heading says which uncertainty (standard error, or 95 % interval).
 */
import type { EnsembleRecord } from '../records/manifest.ts';
import type { Stat, WakeAnalysis, WakePlaneWindow } from '../wake/types.ts';
import { fixed, withUncertainty } from './numbers.ts';
import type { ReportCell, ReportTable } from './report.ts';

const pm = (value: number, uncertainty: number): ReportCell => ({ value, uncertainty });
/** The 95 % half-width of a mean over windows (NaN for one window). */
const ci = (s: Stat, scale = 1): ReportCell => pm(s.mean * scale, s.ci95 * scale);

/**
 * @param links paths (relative to the run folder) of the full CSV tables, if written: rows, downstream, steering, tracks
 */
export function wakeReportTables(a: WakeAnalysis, links: { rows?: string; downstream?: string; steering?: string; tracks?: string } = {}): ReportTable[] {
  const D = a.rotorDiameter_m;
  const tables: ReportTable[] = [];
  tables.push({
    title: 'Per plane and window',
    columns: ['plane', 'window', 'x/D', 'flag', 'γ, yaw offset (°)', 'hub inflow (m/s)', 'max deficit', 'centre deficit', 'y_{c} (m) ± s.e.', 'z_{c} (m) ± s.e.', 'σ_{y} (m) ± s.e.', 'σ_{z} (m) ± s.e.', 'disk y (m)', 'centres apart (D)', 'reason'],
    decimals: [undefined, 0, 2, undefined, 1, 2, 3, 3, undefined, undefined, undefined, undefined, 1, 3],
    rows: a.rows.map((r) => {
      const fit = r.centre.ok && r.gaussian ? r.gaussian : undefined;
      const p = fit?.params, e = fit?.stderr;
      return [
        r.planeId, r.window.index, r.x_D, r.flag, r.yawOffset_deg, r.inflow.hubSpeed_ms, r.maxDeficit, r.centreDeficit,
        p ? pm(p.yc_m, e!.yc_m) : NaN, p ? pm(p.zc_m, e!.zc_m) : NaN, p ? pm(p.sigmaY_m, e!.sigmaY_m) : NaN, p ? pm(p.sigmaZ_m, e!.sigmaZ_m) : NaN,
        r.diskCentre.ok ? r.diskCentre.y_m : NaN, r.disagreement_D, r.reason,
      ];
    }),
    ...(links.rows ? { link: links.rows } : {}),
  });
  if (a.downstream.points.length) {
    const g = a.downstream.gaussianFit, t = a.downstream.topHat;
    const gauss = `Gaussian width fit: k* = ${withUncertainty(g.kStar, g.kStarSE)}, \u03b5 = ${withUncertainty(g.eps, g.epsSE)} (standard errors), ${g.nPlanes} plane${g.nPlanes === 1 ? '' : 's'}${g.note ? `; ${g.note}` : ''}.`;
    const hat = `Top-hat k = ${t.kSource === 'fit' ? `${withUncertainty(t.kFit, t.kFitSE)} (standard error)` : t.k.toPrecision(3)}: ${t.kNote}.`;
    tables.push({
      title: 'Downstream summary (near-aligned windows)',
      columns: ['plane', 'x/D', 'windows', 'centre deficit ± 95 %', 'amplitude ± 95 %', 'σ/D ± 95 %', 'y_{c}/D ± 95 %', 'momentum ratio ± 95 %', 'C_{T}'],
      decimals: [undefined, 2, 0, undefined, undefined, undefined, undefined, undefined, 2],
      rows: a.downstream.points.map((p) => [p.planeId, p.x_D, p.amplitude.n, ci(p.centreDeficit), ci(p.amplitude), ci(p.sigma_D), ci(p.yc_m, 1 / D), ci(p.momentumRatio), p.ct]),
      note: `${gauss} ${hat}`,
      ...(links.downstream ? { link: links.downstream } : {}),
    });
  }
  if (a.steering.bins.length) {
    tables.push({
      title: 'Wake steering: yaw-offset bins',
      columns: ['plane', 'x/D', 'γ bin (°)', 'mean γ (°)', 'windows', 'y_{c} (m) ± 95 %', 'Δy_{c} (m) ± 95 %', 'Jiménez et al. 2010 (m)', 'Bastankhah & Porté-Agel 2016 (m)'],
      decimals: [undefined, 2, undefined, 1, 0, undefined, undefined, 1, 1],
      // The bin's edges kept on one line (no-break spaces) with typographic minus signs.
      rows: a.steering.bins.map((b) => [b.planeId, b.x_D, `${fixed(b.gammaLo_deg, 0)}\u00a0to\u00a0${fixed(b.gammaHi_deg, 0)}`, b.gammaMean_deg, b.n, pm(b.yc_m, b.ci95_m), pm(b.deflection_m, b.deflectionCi95_m), b.jimenez_m, b.bastankhah_m]),
      ...(a.steering.note ? { note: a.steering.note } : {}),
      ...(links.steering ? { link: links.steering } : {}),
    });
  }
  const tracks = a.rows.filter((r) => r.horizontalTrack && r.horizontalTrack.x_m.length);
  if (tracks.length) {
    tables.push({
      title: 'Horizontal planes: wake track per downstream row',
      columns: ['plane', 'window', 'x (m)', 'x/D', 'y_{c} (m) ± s.e.', 'σ_{y} (m)', 'amplitude'],
      decimals: [undefined, 0, 0, 2, undefined, 1, 3],
      rows: tracks.flatMap((r) => r.horizontalTrack!.x_m.map((x, k) => [r.planeId, r.window.index, x, x / D, pm(r.horizontalTrack!.yc_m[k], r.horizontalTrack!.syc_m[k]), r.horizontalTrack!.sigmaY_m[k], r.horizontalTrack!.amplitude[k]])),
      note: '1D Gaussian fit across y per row of cells; rows without a usable fit are empty.',
      ...(links.tracks ? { link: links.tracks } : {}),
    });
  }
  return tables;
}

/**
 * The condition bins (ensembles): for each bin in the manifest's order, its label and the number of windows pooled,
 * then one row per plane (wake centre and widths of the 2-D Gaussian fit with standard errors, deficits, the mean yaw
 * offset of the pooled windows, flag). The bin's number, label and windows are written on its first row only, so the
 * rows read as groups. A bin that received no window is listed with "empty". Undefined when no plane has an ensemble
 * row (no conditions, or no planes: profilers' bins have their own files).
 * @param bins manifest.ensembles (every bin, empty ones included); without it, the bins of the rows
 * @param link path of wake/ensembles.csv relative to the run folder, if written
 */
export function ensembleReportTable(rows: readonly WakePlaneWindow[], bins: readonly EnsembleRecord[] | undefined, link?: string): ReportTable | undefined {
  if (!rows.length) return undefined;
  const list: EnsembleRecord[] = bins?.length
    ? [...bins]
    : [...new Map(rows.map((r) => [r.window.index, { bin: r.window.index, label: r.window.label ?? '', windows: [], empty: false } as EnsembleRecord])).values()].sort((a, b) => a.bin - b.bin);
  const out: ReportCell[][] = [];
  for (const b of list) {
    const mine = rows.filter((r) => r.window.index === b.bin).sort((p, q) => p.planeIndex - q.planeIndex);
    const pooled = b.windows.length || (mine[0]?.window.members?.length ?? 0);
    if (b.empty || !mine.length) {
      out.push([b.bin, b.label, pooled, '', NaN, 'empty', NaN, NaN, NaN, NaN, NaN, NaN, NaN, b.empty ? 'no window fell in this bin' : 'no plane result']);
      continue;
    }
    mine.forEach((r, k) => {
      const fit = r.centre.ok && r.gaussian ? r.gaussian : undefined;
      const p = fit?.params, e = fit?.stderr;
      out.push([
        k === 0 ? b.bin : null, k === 0 ? b.label || (r.window.label ?? '') : '', k === 0 ? pooled : null, r.planeId, r.x_D, r.flag, r.yawOffset_deg,
        p ? pm(p.yc_m, e!.yc_m) : NaN, p ? pm(p.zc_m, e!.zc_m) : NaN, p ? pm(p.sigmaY_m, e!.sigmaY_m) : NaN, p ? pm(p.sigmaZ_m, e!.sigmaZ_m) : NaN,
        r.maxDeficit, r.centreDeficit, r.reason,
      ]);
    });
  }
  const empty = list.filter((b) => b.empty).length;
  return {
    title: 'Condition bins (ensembles)',
    columns: ['bin', 'condition', 'windows pooled', 'plane', 'x/D', 'flag', 'γ, yaw offset (°)', 'y_{c} (m) ± s.e.', 'z_{c} (m) ± s.e.', 'σ_{y} (m) ± s.e.', 'σ_{z} (m) ± s.e.', 'max deficit', 'centre deficit', 'reason'],
    decimals: [0, undefined, 0, undefined, 2, undefined, 1, undefined, undefined, undefined, undefined, 3, 3],
    rows: out,
    note: `The windows of a bin are pooled before the retrieval (their kept-sample statistics merged, never their fields averaged) and the ensemble field analysed like a window; the yaw offset is the mean over the pooled windows. ${empty ? `${empty} of ${list.length} bins received no window.` : `Every bin received at least one window.`}`,
    ...(link ? { link } : {}),
  };
}
