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
import { withValues } from '../grid/grid.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import type { OutputRecord } from '../pipeline/manifest.ts';
import { scalarMapSvg, type ScalarMapOptions } from '../render/scalarMap.ts';
import { writeSvgAndPng } from '../render/write.ts';
import { BeamFlag } from './beamCells.ts';
import { cellReasonNames, TrustCategory, trustCategoryName } from './cellTrust.ts';
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

/** Scalar-map options shared by the planner's images. */
function mapBase(pt: PlaneTrust, campaign: Campaign): Pick<ScalarMapOptions, 'axes' | 'rotor'> {
  const p = pt.geometry.plane;
  const D = campaign.turbine.rotorDiameter_m;
  const cross = p.orientation === 'cross';
  return {
    axes: {
      yLabel: 'y (m), positive to the left looking downstream',
      zLabel: cross ? 'z (m) above ground' : 'x (m) downstream',
      diameter_m: D,
      ...(cross ? {} : { zLabelD: 'x / D' }),
    },
    rotor: cross ? { y: 0, z: campaign.turbine.hubHeight_m, radius: D / 2 } : undefined,
  };
}

/** Trust image: trusted cells carry their largest amplification; the others carry mask codes 1..k by category. */
export function trustMapGrid(pt: PlaneTrust): { values: Float64Array; codes: Uint8Array; names: Record<number, string> } {
  const t = pt.trust;
  const n = t.category.length;
  const values = new Float64Array(n).fill(NaN);
  const codes = new Uint8Array(n);
  const counts = new Map<number, number>();
  for (let c = 0; c < n; c++) if (t.category[c] !== TrustCategory.trusted) counts.set(t.category[c], (counts.get(t.category[c]) ?? 0) + 1);
  // The most frequent categories get the first (most distinct) hatch codes.
  const order = [...counts.keys()].sort((a, b) => counts.get(b)! - counts.get(a)! || a - b);
  const codeOf = new Map(order.map((cat, k) => [cat, Math.min(k + 1, 254)]));
  const names: Record<number, string> = {};
  for (const [cat, code] of codeOf) names[code] = trustCategoryName[cat];
  for (let c = 0; c < n; c++) {
    if (t.category[c] === TrustCategory.trusted) values[c] = Math.max(t.dopU[c], t.dopV[c], t.dopW[c]);
    else codes[c] = codeOf.get(t.category[c])!;
  }
  return { values, codes, names };
}

async function writeImages(result: PlanResult, campaign: Campaign, dir: string): Promise<OutputRecord[]> {
  const out: OutputRecord[] = [];
  const maxA = result.settings.maxAmplification;
  for (const pt of result.planes) {
    const g = pt.geometry.grid;
    const id = pt.geometry.plane.id;
    const base = mapBase(pt, campaign);
    const sub = `wind from ${result.settings.direction_deg.toFixed(0)} deg; max amplification ${maxA}`;
    const tm = trustMapGrid(pt);
    const maps: [string, string, ScalarMapOptions][] = [
      [
        `trust_${safe(id)}`,
        'trust map: cells where u, v and w are resolved, the others by reason',
        {
          title: `Plane ${id}: where the planned geometry resolves u, v and w`,
          subtitle: `${sub}; ${(100 * pt.plane.all).toFixed(0)} % of the plane, ${(100 * pt.rotor.all).toFixed(0)} % of the rotor disk trusted`,
          colorbarLabel: 'largest amplification of u, v, w (–)',
          domain: [1, Math.max(1.5, maxA)],
          contours: false,
          mask: { codes: tm.codes, names: tm.names },
          ...base,
        },
      ],
      [
        `dopw_${safe(id)}`,
        'error amplification of w',
        {
          title: `Plane ${id}: error amplification of w`,
          subtitle: `sqrt of the w diagonal of (AᵀA)⁻¹; ${sub}`,
          colorbarLabel: 'amplification of w (–)',
          domain: [1, Math.max(2, 2 * maxA)],
          contours: false,
          ...base,
        },
      ],
      [
        `cond_${safe(id)}`,
        'condition number of the beam matrix',
        {
          title: `Plane ${id}: condition number of the beam matrix`,
          subtitle: sub,
          colorbarLabel: 'condition number (–)',
          domain: [1, 10],
          contours: false,
          ...base,
        },
      ],
    ];
    const values = [tm.values, pt.trust.dopW, pt.trust.cond];
    for (let k = 0; k < maps.length; k++) {
      const [name, description, opts] = maps[k];
      const svg = scalarMapSvg(withValues(g, values[k]), opts);
      const paths = await writeSvgAndPng(svg, join(dir, name));
      for (const p of paths) out.push({ kind: 'image', path: join('plan', p.slice(dir.length + 1)), plane: id, description });
    }
  }
  return out;
}

export async function writePlanOutputs(result: PlanResult, campaign: Campaign, runDir: string, opts: { images: boolean }): Promise<OutputRecord[]> {
  const dir = join(runDir, 'plan');
  const ids = campaign.instruments.map((i) => i.id);
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
  writeFileAtomic(join(dir, 'summary.json'), JSON.stringify(result.summary, null, 2) + '\n');
  out.push({ kind: 'plan-summary', path: join('plan', 'summary.json'), description: 'resolved fractions, scan times, layout gain' });
  if (opts.images) out.push(...(await writeImages(result, campaign, dir)));
  return out;
}
