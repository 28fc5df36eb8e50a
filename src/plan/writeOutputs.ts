/**
 * Writes the planner's results under <runDir>/plan/ (atomic writes):
 *
 * - cells_<plane>.csv, one row per cell: cell, iy, iz (grid index, iy fastest), x_m, y_m, z_m (rotor-frame centre),
 *   east_m, north_m, up_m (site-frame centre), in_rotor (0/1), usable_beams, dop_u, dop_v, dop_w (error
 *   amplification, empty when not computable), cond, min_crossing_deg, pass_u, pass_v, pass_w, trusted (0/1),
 *   category (trustCategoryName), reasons (';'-separated CellReason names); then per instrument <id>_elevation_deg,
 *   <id>_range_m, <id>_probe_m (probe FWHM along the beam), <id>_footprint_m (probe projected on the plane),
 *   <id>_footprint_cells, <id>_flags (';'-separated BeamFlag names, empty when none).
 * - pointing_<instrument>.csv, scan order per plane: plane, step, cell, iy, iz, target_east_m, target_north_m,
 *   target_up_m, azimuth_deg, elevation_deg, range_m (the values to command: instrument frame, calibration and range
 *   offset applied), slew_deg (from the previous point; step 0 from the last), start_s (dwell start within the pass).
 * - layouts.csv (with a layout search): rank (0 = the campaign's own layout), rotor_all, rotor_u, rotor_v, rotor_w,
 *   plane_all, plane_u, plane_v, plane_w (resolved fractions), gain_rotor_all, gain_plane_all (vs own), then per
 *   instrument <id>_east_m, <id>_north_m, <id>_up_m.
 * - summary.json: PlanSummary (NaN written as null).
 * - images (opts.images): trust_<plane> (trusted cells coloured by their largest amplification, the others hatched
 *   by category), dopw_<plane> (amplification of w), cond_<plane> (condition number), each as SVG and PNG.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import type { OutputRecord } from '../pipeline/manifest.ts';
import { BeamFlag } from './beamCells.ts';
import { cellReasonNames, trustCategoryName } from './cellTrust.ts';
import { writePlanImages } from './images.ts';
import type { PlanResult } from './planCampaign.ts';
import type { PlaneTrust } from './trustMap.ts';

const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');

function beamFlagNames(bits: number): string {
  return Object.entries(BeamFlag)
    .filter(([, b]) => bits & b)
    .map(([k]) => k)
    .join(';');
}

export function cellTableCsv(pt: PlaneTrust, instrumentIds: readonly string[]): string {
  const g = pt.geometry;
  const t = pt.trust;
  const head = [
    'cell', 'iy', 'iz', 'x_m', 'y_m', 'z_m', 'east_m', 'north_m', 'up_m', 'in_rotor', 'usable_beams',
    'dop_u', 'dop_v', 'dop_w', 'cond', 'min_crossing_deg', 'pass_u', 'pass_v', 'pass_w', 'trusted', 'category', 'reasons',
  ];
  for (const id of instrumentIds)
    head.push(`${id}_elevation_deg`, `${id}_range_m`, `${id}_probe_m`, `${id}_footprint_m`, `${id}_footprint_cells`, `${id}_flags`);
  const parts = [csvRow(head)];
  const n = g.grid.ny * g.grid.nz;
  for (let c = 0; c < n; c++) {
    const row: (string | number)[] = [
      c, c % g.grid.ny, Math.floor(c / g.grid.ny),
      g.rotor[3 * c], g.rotor[3 * c + 1], g.rotor[3 * c + 2], g.site[3 * c], g.site[3 * c + 1], g.site[3 * c + 2],
      g.inRotor[c], t.usable[c], t.dopU[c], t.dopV[c], t.dopW[c], t.cond[c], t.minCrossing_deg[c],
      t.passU[c], t.passV[c], t.passW[c], t.passU[c] & t.passV[c] & t.passW[c],
      trustCategoryName[t.category[c]], cellReasonNames(t.reasons[c]).join(';'),
    ];
    for (const b of pt.beams) row.push(b.elevation_deg[c], b.range_m[c], b.probe_m[c], b.footprint_m[c], b.footprintCells[c], beamFlagNames(b.flags[c]));
    parts.push(csvRow(row));
  }
  return parts.join('');
}

export function pointingCsv(result: PlanResult, instrumentId: string): string {
  const parts = [
    csvRow(['plane', 'step', 'cell', 'iy', 'iz', 'target_east_m', 'target_north_m', 'target_up_m', 'azimuth_deg', 'elevation_deg', 'range_m', 'slew_deg', 'start_s']),
  ];
  for (const t of result.pointing) {
    if (t.instrumentId !== instrumentId) continue;
    for (const r of t.rows)
      parts.push(csvRow([t.planeId, r.step, r.cell, r.iy, r.iz, ...r.target, r.azimuth_deg, r.elevation_deg, r.range_m, r.slew_deg, r.start_s]));
  }
  return parts.join('');
}

export function layoutCsv(result: PlanResult, instrumentIds: readonly string[]): string {
  const L = result.layout!;
  const head = ['rank', 'rotor_all', 'rotor_u', 'rotor_v', 'rotor_w', 'plane_all', 'plane_u', 'plane_v', 'plane_w', 'gain_rotor_all', 'gain_plane_all'];
  for (const id of instrumentIds) head.push(`${id}_east_m`, `${id}_north_m`, `${id}_up_m`);
  const parts = [csvRow(head)];
  [L.baseline, ...L.ranked].forEach((s, rank) => {
    parts.push(
      csvRow([
        rank, s.rotor.all, s.rotor.u, s.rotor.v, s.rotor.w, s.plane.all, s.plane.u, s.plane.v, s.plane.w,
        s.rotor.all - L.baseline.rotor.all, s.plane.all - L.baseline.plane.all, ...s.positions.flat(),
      ]),
    );
  });
  return parts.join('');
}

export async function writePlanOutputs(result: PlanResult, campaign: Campaign, runDir: string, opts: { images: boolean }): Promise<OutputRecord[]> {
  const dir = join(runDir, 'plan');
  const ids = result.instruments.map((i) => i.id);
  const out: OutputRecord[] = [];
  for (const pt of result.planes) {
    const name = `cells_${safe(pt.geometry.plane.id)}.csv`;
    writeFileAtomic(join(dir, name), cellTableCsv(pt, ids));
    out.push({ kind: 'plan-cells', path: join('plan', name), plane: pt.geometry.plane.id, description: 'per-cell amplification, beams, probe footprints and trust' });
  }
  if (result.pointing.length)
    for (const id of ids) {
      const name = `pointing_${safe(id)}.csv`;
      writeFileAtomic(join(dir, name), pointingCsv(result, id));
      out.push({ kind: 'plan-pointing', path: join('plan', name), description: `pointing table of ${id} in scan order` });
    }
  if (result.layout) {
    writeFileAtomic(join(dir, 'layouts.csv'), layoutCsv(result, ids));
    out.push({ kind: 'plan-layouts', path: join('plan', 'layouts.csv'), description: 'own layout (rank 0) and the best candidate layouts' });
  }
  if (result.geometries.length) {
    writeFileAtomic(join(dir, 'geometries.json'), JSON.stringify(result.geometries, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2) + '\n');
    out.push({ kind: 'plan-geometries', path: join('plan', 'geometries.json'), description: 'profilers, nacelle instruments and trackers: heights, gates, amplification and coverage' });
  }
  writeFileAtomic(join(dir, 'summary.json'), JSON.stringify(result.summary, null, 2) + '\n');
  out.push({ kind: 'plan-summary', path: join('plan', 'summary.json'), description: 'resolved fractions, scan times, layout gain' });
  if (opts.images) out.push(...(await writePlanImages(result, campaign, runDir)));
  return out;
}
