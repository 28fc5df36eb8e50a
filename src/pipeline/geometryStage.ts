/**
 * The stage of the single-instrument geometries: after the last window, the profile, nacelle and tracking tables
 * (profiles/, nacelle/, tracks/ under the run folder), their figures (images/) and the report's section
 * (shared.geometryReport). Reads shared.geometry (GeometryFinisher.results); does nothing for plane-only campaigns.
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../io/atomic.ts';
import { nacelleGateTableCsv, nacelleTableCsv } from '../nacelle/table.ts';
import { profileTableCsv } from '../profile/table.ts';
import { trackProfilesCsv, trackTableCsv } from '../track/table.ts';
import type { ReportSection } from '../render/report.ts';
import type { GeometryResults } from './geometryFinish.ts';
import type { OutputRecord } from './manifest.ts';
import type { RunStage } from './run.ts';

const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');
const f = (x: number, d = 2) => (Number.isFinite(x) ? x.toFixed(d) : '');

export function geometryStage(): RunStage {
  return {
    name: 'geometries',
    async finish(ctx) {
      const g = ctx.shared.geometry as GeometryResults | undefined;
      if (!g) return [];
      // Beam-frame slips show up as rejections; say what they most likely mean, once per instrument.
      for (const [id, a] of Object.entries(ctx.manifest.samples.perInstrument)) {
        if (a.rejected.wrong_beam_frame > 0) ctx.manifest.warnings.push(`${id}: ${a.rejected.wrong_beam_frame} samples with beam azimuths more than 90 deg off the nacelle axis (rejected as wrong_beam_frame): were site azimuths given as nacelle-relative? (beamFrame: site if the file holds site azimuths)`);
        if (a.rejected.no_nacelle_direction > 0) ctx.manifest.warnings.push(`${id}: ${a.rejected.no_nacelle_direction} samples without a nacelle direction (gaps of the turbine series or of its inclinometer series; rejected as no_nacelle_direction); the windows concerned are flagged nacelle_series_gap`);
      }
      const out: OutputRecord[] = [];
      const write = (rel: string, text: string, kind: string, description: string) => {
        writeFileAtomic(join(ctx.runDir, rel), text);
        out.push({ kind, path: rel, description });
      };
      const ids = (xs: { instrumentId: string }[]) => [...new Set(xs.map((x) => x.instrumentId))];
      for (const id of ids(g.profiles)) {
        write(join('profiles', `${safe(id)}.csv`), profileTableCsv(g.profiles.filter((r) => r.instrumentId === id)), 'profile-table', `wind profile per window and height, ${id}`);
        const bins = g.profileBins.filter((r) => r.instrumentId === id);
        if (bins.length) write(join('profiles', `${safe(id)}_bins.csv`), profileTableCsv(bins), 'profile-table', `wind profile per condition bin (merged statistics), ${id}`);
      }
      for (const id of ids(g.nacelle)) {
        const mine = g.nacelle.filter((r) => r.instrumentId === id);
        write(join('nacelle', `${safe(id)}.csv`), nacelleTableCsv(mine), 'nacelle-table', `hub speed, shear, yaw misalignment and free stream per window, ${id}`);
        write(join('nacelle', `${safe(id)}_gates.csv`), nacelleGateTableCsv(mine), 'nacelle-table', `horizontal wind per gate and beam pair, ${id}`);
      }
      for (const id of ids(g.tracks)) {
        const mine = g.tracks.filter((r) => r.instrumentId === id);
        write(join('tracks', `${safe(id)}.csv`), trackTableCsv(mine), 'track-table', `wake centre and width per window, scan and downstream distance, ${id}`);
        write(join('tracks', `${safe(id)}_profiles.csv`), trackProfilesCsv(mine), 'track-table', `line-of-sight deficit across the wake per window and distance, ${id}`);
      }
      if (ctx.images) {
        const { profileFigures, nacelleFigures, trackFigures } = await import('../render/geometryFigures.ts');
        const { writeFigure } = await import('../render/figure.ts');
        const figs = [...profileFigures(g.profiles), ...nacelleFigures(g.nacelle), ...trackFigures(g.tracks, ctx.campaign.turbine.rotorDiameter_m)];
        for (const fig of figs) out.push(...(await writeFigure(fig.svg, ctx.runDir, fig.name, { description: fig.description })));
      }
      ctx.shared.geometryReport = reportSections(g);
      return out;
    },
  };
}

/** The report's tables: per instrument, a compact summary with links to the full tables. */
export function reportSections(g: GeometryResults): ReportSection[] {
  const sections: ReportSection[] = [];
  if (g.profiles.length) {
    const flags = new Map<string, number>();
    for (const r of g.profiles) for (const p of r.points) flags.set(p.flag, (flags.get(p.flag) ?? 0) + 1);
    sections.push({
      title: 'Wind profiles (VAD / DBS)',
      items: [['Heights by flag', [...flags].map(([k, v]) => `${k} ${v}`).join(', ')]],
      tables: [...new Set(g.profiles.map((r) => r.instrumentId))].map((id) => ({
        title: `Profile ${id}`,
        columns: ['window', 'height (m)', 'speed (m/s)', '± (m/s)', 'from (°)', '± (°)', 'w (m/s)', 'R²', 'flag'],
        rows: g.profiles.filter((r) => r.instrumentId === id).flatMap((r) => r.points.map((p) => [r.window.index, f(p.height_m, 0), f(p.speed_ms), f(p.sspeed_ms), f(p.direction_deg, 1), f(p.sdirection_deg, 1), f(p.w_ms), f(p.r2, 3), p.flag])),
        link: join('profiles', `${safe(id)}.csv`),
      })),
      notes: ['Site frame: direction = where the wind comes from, clockwise from north. Uniform wind over the ring assumed (Browning & Wexler 1968); R² is the homogeneity check.'],
    });
  }
  if (g.nacelle.length) {
    sections.push({
      title: 'Nacelle instruments',
      items: [],
      tables: [...new Set(g.nacelle.map((r) => r.instrumentId))].map((id) => ({
        title: `Nacelle instrument ${id}`,
        columns: ['window', 'hub speed (m/s)', '±', 'shear-corrected', 'alpha', 'free stream (m/s)', 'yaw misalignment (°)', '±', 'flag'],
        rows: g.nacelle.filter((r) => r.instrumentId === id).map((r) => [r.window.index, f(r.hubSpeed_ms), f(r.shubSpeed_ms), f(r.hubSpeedShear_ms), f(r.alpha, 3), f(r.freeStream_ms), f(r.yawMisalignment_deg, 1), f(r.syawMisalignment_deg, 1), r.flag]),
        link: join('nacelle', `${safe(id)}.csv`),
      })),
      notes: [
        'Yaw misalignment = nacelle direction minus wind direction, positive when the nacelle is turned clockwise (seen from above) from the wind.',
        'Induction zone: the measured speed upstream is slowed by the rotor; the free-stream column divides by the on-axis vortex-sheet ratio 1 - a(1 - xi/sqrt(1 + xi^2)) (Medici et al. 2011, Wind Energy 14), a from the thrust curve.',
        'Not a power-performance test on its own: such tests follow the applicable standard (IEC 61400-12 and -50 series) and its uncertainty budget.',
      ],
    });
  }
  if (g.tracks.length) {
    const win = g.tracks.filter((r) => r.scan === -1);
    sections.push({
      title: 'Single-instrument wake tracking',
      items: [['Window-level rows ok', `${win.filter((r) => r.flag === 'ok').length} of ${win.length}`]],
      tables: [...new Set(win.map((r) => r.instrumentId))].map((id) => ({
        title: `Tracker ${id} (all scans of each window)`,
        columns: ['window', 'x/D', 'axis', 'centre (m)', '±', 'width (m)', 'direction bias of centre (m)', 'amplitude', 'flag'],
        rows: win.filter((r) => r.instrumentId === id).map((r) => [r.window.index, f(r.x_D, 1), r.axis, f(r.centre_m, 1), f(r.scentre_m, 1), f(r.width_m, 1), f(r.directionBiasCentre_m, 1), f(r.amplitude, 3), r.flag]),
        link: join('tracks', `${safe(id)}.csv`),
      })),
      notes: ['Line-of-sight deficit under the assumption that the wind blows along the window wind direction; the bias column is the largest change of the centre when that direction is moved by its stated uncertainty.'],
    });
  }
  const prefix: Record<string, string> = { 'Wind profiles (VAD / DBS)': 'inflow reference', 'Nacelle instruments': 'nacelle', 'Single-instrument wake tracking': 'wake tracking' };
  for (const s of sections) s.notes = [...(s.notes ?? []), ...g.notes.filter((n) => n.startsWith(prefix[s.title] ?? '\u0000'))];
  return sections;
}
