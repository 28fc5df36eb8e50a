/**
 * Writes the planner's results under <runDir>/plan/ (atomic writes). The tables' columns, units and precision are
 * declared in records/tables/plan.ts (the data dictionary); the values here follow that order.
 *
 * - cells_<plane>.csv, one row per cell, then per instrument its beam to the cell.
 * - pointing_<instrument>.csv, the scan order per plane (the values to command: instrument frame, calibration and
 *   range offset applied).
 * - layouts.csv (with a layout search): the campaign's own layout (rank 0) and the best candidates.
 * - summary.json: PlanSummary (NaN written as null).
 * - images (opts.images): trust_<plane> (trusted cells coloured by their largest amplification, the others hatched
 *   by category), dopw_<plane> (amplification of w), cond_<plane> (condition number), each as SVG and PNG.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { layoutsTable, planCellsTable, pointingTable } from '../records/tables/plan.ts';
import { headerLine, rowLine, tableLayout, type Cell } from '../records/tableText.ts';
import type { OutputRecord } from '../records/manifest.ts';
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
  const L = tableLayout(planCellsTable, { instruments: instrumentIds });
  const parts = [headerLine(L)];
  const n = g.grid.ny * g.grid.nz;
  for (let c = 0; c < n; c++) {
    const row: Cell[] = [
      c, c % g.grid.ny, Math.floor(c / g.grid.ny),
      g.rotor[3 * c], g.rotor[3 * c + 1], g.rotor[3 * c + 2], g.site[3 * c], g.site[3 * c + 1], g.site[3 * c + 2],
      g.inRotor[c], t.usable[c], t.dopU[c], t.dopV[c], t.dopW[c], t.cond[c], t.minCrossing_deg[c],
      t.passU[c], t.passV[c], t.passW[c], t.passTarget[c],
      trustCategoryName[t.category[c]], cellReasonNames(t.reasons[c]).join(';'),
    ];
    for (const b of pt.beams) row.push(b.elevation_deg[c], b.range_m[c], b.probe_m[c], b.footprint_m[c], b.footprintCells[c], beamFlagNames(b.flags[c]));
    parts.push(rowLine(L, row));
  }
  return parts.join('');
}

export function pointingCsv(result: PlanResult, instrumentId: string): string {
  const L = tableLayout(pointingTable);
  const parts = [headerLine(L)];
  for (const t of result.pointing) {
    if (t.instrumentId !== instrumentId) continue;
    for (const r of t.rows)
      parts.push(rowLine(L, [t.planeId, r.step, r.cell, r.iy, r.iz, ...r.target, r.azimuth_deg, r.elevation_deg, r.range_m, r.slew_deg, r.start_s]));
  }
  return parts.join('');
}

export function layoutCsv(result: PlanResult, instrumentIds: readonly string[]): string {
  const L = result.layout!;
  const TL = tableLayout(layoutsTable, { instruments: instrumentIds });
  const parts = [headerLine(TL)];
  [L.baseline, ...L.ranked].forEach((s, rank) => {
    parts.push(
      rowLine(TL, [
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
