/**
 * Figures of the single-instrument geometries, drawn with the shared line-plot builder (linePlot.ts): profiles
 * (horizontal speed and direction against height, one line per window, error bars = standard uncertainty), nacelle
 * instruments (hub speed as measured, shear-corrected and induction-corrected, and the yaw misalignment, per
 * window) and trackers (wake centre against downstream distance per window with its standard error, and the deficit
 * profiles across the wake of one window). Pure: SVG text out.
 */
import type { NacelleWindow } from '../nacelle/types.ts';
import type { ProfileWindow } from '../profile/types.ts';
import type { TrackPoint } from '../track/types.ts';
import { axisLabels, QUANTITY } from './labels.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import { theme } from './theme.ts';

export interface GeometryFigure { name: string; description: string; svg: string }

const colour = (k: number) => theme.series[k % theme.series.length];
const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');
const MAX_LINES = 8;

/** Evenly picks at most n items (first and last kept). */
function pick<T>(xs: T[], n: number): T[] {
  if (xs.length <= n) return xs;
  return Array.from({ length: n }, (_, k) => xs[Math.round((k * (xs.length - 1)) / (n - 1))]);
}

export function profileFigures(rows: ProfileWindow[]): GeometryFigure[] {
  const out: GeometryFigure[] = [];
  for (const id of [...new Set(rows.map((r) => r.instrumentId))]) {
    const mine = pick(rows.filter((r) => r.instrumentId === id), MAX_LINES);
    const ok = (r: ProfileWindow) => r.points.filter((p) => p.flag === 'ok' || p.flag === 'inhomogeneous' || p.flag === 'azimuth_gap');
    const speed: PlotSeries[] = mine.map((r, k) => ({ label: `window ${r.window.index}`, x: ok(r).map((p) => p.speed_ms), y: ok(r).map((p) => (Number.isFinite(p.sampleHeight_m) ? p.sampleHeight_m : p.height_m)), xErr: ok(r).map((p) => p.sspeed_ms), kind: 'both', colour: colour(k) }));
    const dir: PlotSeries[] = mine.map((r, k) => ({ label: `window ${r.window.index}`, x: ok(r).map((p) => p.direction_deg), y: ok(r).map((p) => (Number.isFinite(p.sampleHeight_m) ? p.sampleHeight_m : p.height_m)), xErr: ok(r).map((p) => p.sdirection_deg), kind: 'both', colour: colour(k) }));
    const note = 'Heights flagged too_few_azimuths, missing_beam or no_data are left out; error bars: standard uncertainty.';
    out.push({ name: `profile_speed_${safe(id)}`, description: `horizontal wind speed against height, ${id}`, svg: linePlotSvg({ title: `Profile ${id}: horizontal wind speed`, subtitle: `${mine.length} of ${rows.filter((r) => r.instrumentId === id).length} windows shown`, xLabel: QUANTITY.speed, yLabel: QUANTITY.height, series: speed, notes: [note] }) });
    out.push({ name: `profile_direction_${safe(id)}`, description: `wind direction against height, ${id}`, svg: linePlotSvg({ title: `Profile ${id}: wind direction (from)`, xLabel: 'wind direction (from), clockwise from north (°)', yLabel: QUANTITY.height, series: dir, notes: [note] }) });
  }
  return out;
}

export function nacelleFigures(rows: NacelleWindow[]): GeometryFigure[] {
  const out: GeometryFigure[] = [];
  for (const id of [...new Set(rows.map((r) => r.instrumentId))]) {
    const mine = rows.filter((r) => r.instrumentId === id);
    const x = mine.map((r) => r.window.index);
    const speed: PlotSeries[] = [
      { label: 'hub speed as measured', x, y: mine.map((r) => r.hubSpeed_ms), yErr: mine.map((r) => r.shubSpeed_ms), kind: 'points', marker: 'circle', colour: colour(0), xOffset: -0.1 },
      { label: 'shear-corrected (4 beams)', x, y: mine.map((r) => r.hubSpeedShear_ms), yErr: mine.map((r) => r.shubSpeedShear_ms), kind: 'points', marker: 'square', colour: colour(1) },
      { label: 'free stream (vortex-sheet induction)', x, y: mine.map((r) => r.freeStream_ms), yErr: mine.map((r) => r.sfreeStream_ms), kind: 'points', marker: 'triangle', colour: colour(2), xOffset: 0.1 },
    ];
    const d = mine[0]?.distance_D ?? NaN;
    out.push({ name: `nacelle_speed_${safe(id)}`, description: `hub-height speed ${d} D upstream per window, ${id}`, svg: linePlotSvg({ title: `Nacelle instrument ${id}: hub-height speed ${d} D upstream`, xLabel: 'window', yLabel: 'speed (m/s)', series: speed, notes: ['Error bars: standard uncertainty. Induction: on-axis vortex-sheet model with a from the thrust curve (Medici et al. 2011).'] }) });
    out.push({ name: `nacelle_yaw_${safe(id)}`, description: `yaw misalignment per window, ${id}`, svg: linePlotSvg({ title: `Nacelle instrument ${id}: yaw misalignment`, subtitle: 'nacelle minus wind direction; positive = nacelle turned clockwise (seen from above) from the wind', xLabel: 'window', yLabel: 'yaw misalignment (°)', series: [{ label: 'measured', x, y: mine.map((r) => r.yawMisalignment_deg), yErr: mine.map((r) => r.syawMisalignment_deg), kind: 'points', marker: 'circle', colour: colour(0) }], yReference: 0 }) });
  }
  return out;
}

export function trackFigures(rows: TrackPoint[], diameter_m: number): GeometryFigure[] {
  const out: GeometryFigure[] = [];
  for (const id of [...new Set(rows.map((r) => r.instrumentId))]) {
    const win = rows.filter((r) => r.instrumentId === id && r.scan === -1);
    const axis = win[0]?.axis ?? 'y';
    const windows = pick([...new Set(win.map((r) => r.window.index))], MAX_LINES);
    const series: PlotSeries[] = windows.map((w, k) => {
      const pts = win.filter((r) => r.window.index === w && r.flag === 'ok');
      return { label: `window ${w}`, x: pts.map((p) => p.x_D), y: pts.map((p) => p.centre_m), yErr: pts.map((p) => p.scentre_m), kind: 'both', colour: colour(k), xOffset: (k - windows.length / 2) * 0.02 };
    });
    const bias = win.map((r) => r.directionBiasCentre_m).filter(Number.isFinite);
    const biasNote = bias.length ? `Direction assumption: centre moves by up to ${Math.max(...bias).toFixed(1)} m for the assumed direction +/- its uncertainty.` : 'Direction bias not estimated (no ok fits).';
    out.push({ name: `track_centre_${safe(id)}`, description: `wake centre against downstream distance, ${id}`, svg: linePlotSvg({ title: `Tracker ${id}: wake centre`, subtitle: axis === 'y' ? 'lateral centre y, positive to the left looking downstream; all scans of each window pooled' : 'centre height above ground; all scans of each window pooled', xLabel: QUANTITY.downstream, yLabel: `${axis} centre (m)`, series, notes: ['Error bars: standard error of the fitted centre.', biasNote], yReference: axis === 'y' ? 0 : undefined }) });
    const first = win.find((r) => r.profile.c_m.length > 0);
    if (first) {
      const same = win.filter((r) => r.window.index === first.window.index && r.profile.c_m.length > 0);
      const prof: PlotSeries[] = same.map((r, k) => ({ label: `x = ${(r.x_m / diameter_m).toFixed(1)} D`, x: r.profile.c_m, y: r.profile.deficit, yErr: r.profile.sdeficit, kind: 'both', colour: colour(k) }));
      out.push({ name: `track_deficit_${safe(id)}`, description: `line-of-sight deficit across the wake, window ${first.window.index}, ${id}`, svg: linePlotSvg({ title: `Tracker ${id}: line-of-sight deficit, window ${first.window.index}`, subtitle: `free stream: ${first.freeStreamSource}`, xLabel: axis === 'y' ? axisLabels('cross').yLabel : QUANTITY.height, yLabel: 'deficit 1 \u2212 S_{app}/S_{\u221e} (–)', series: prof, yReference: 0 }) });
    }
  }
  return out;
}
