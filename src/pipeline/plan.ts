/**
 * The planner as the CLI calls it: plan a campaign and write its outputs under <runDir>/plan/, then return a short
 * text summary (resolved fractions of the rotor disk and the planes, scan times, the best layout's gain).
 */
import { mkdirSync } from 'node:fs';
import { relative } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { planCampaign, writePlanOutputs, type PlanSummary } from '../plan/index.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { loadTerrain } from '../io/terrainFile.ts';

const pc = (x: number) => `${(100 * x).toFixed(1)}%`;

export function formatPlanSummary(s: PlanSummary, where: string): string {
  const lines = [
    `plan for ${s.campaign} (wind from ${s.direction_deg.toFixed(1)} deg) -> ${where}/plan/`,
    ...(s.planes.length ? ['  resolved (every target component within the thresholds):'] : []),
    ...s.planes.map((p) => `    ${p.planeId.padEnd(8)} ${p.components === 'uvw' ? 'u, v, w' : 'u, v   '} ${p.region} ${pc(p.rotor.all).padStart(6)}  plane ${pc(p.plane.all).padStart(6)}  (u ${pc(p.rotor.u)}, v ${pc(p.rotor.v)}, w ${pc(p.rotor.w)} of the ${p.region})`),
    ...(s.planes.length ? [`    all planes: region ${pc(s.rotor.all)}, whole planes ${pc(s.plane.all)}`] : []),
  ];
  for (const g of s.geometries ?? []) lines.push(`  ${g.role} ${g.instrumentId}: ${g.rows.length} ${g.role === 'profiler' ? 'heights' : g.role === 'nacelle' ? 'gates' : 'downstream bins'}${g.notes.length ? `; ${g.notes[0]}` : ''}`);
  const byIns = new Map<string, { t: number; raster: number }>();
  for (const p of s.pointing) {
    const e = byIns.get(p.instrumentId) ?? { t: 0, raster: 0 };
    e.t += p.passTime_s; e.raster += p.rasterPassTime_s;
    byIns.set(p.instrumentId, e);
  }
  if (byIns.size) lines.push(`  time for one pass over every plane: ${[...byIns].map(([id, e]) => `${id} ${e.t.toFixed(0)} s (raster ${e.raster.toFixed(0)} s)`).join(', ')}`);
  if (s.layout?.best) {
    lines.push(
      `  layout search: ${s.layout.evaluated} layouts; best resolves ${pc(s.layout.best.rotorAll)} of the planes' regions (own layout ${pc(s.layout.own.rotorAll)}, gain ${(100 * s.layout.gain.rotorAll).toFixed(1)} points)`,
      `    best positions: ${Object.entries(s.layout.best.positions).map(([id, p]) => `${id} (${p.map((v) => v.toFixed(0)).join(', ')})`).join('; ')}`,
    );
  }
  for (const n of s.notes) lines.push(`  note: ${n}`);
  return lines.join('\n');
}

export async function planAndWrite(c: Campaign, runDir: string, opts: { images: boolean }): Promise<{ summary: string; outputs: OutputRecord[] }> {
  const result = planCampaign(c, { terrain: await loadTerrain(c) });
  mkdirSync(runDir, { recursive: true });
  const outputs = await writePlanOutputs(result, c, runDir, opts);
  return { summary: formatPlanSummary(result.summary, relative(process.cwd(), runDir) || runDir), outputs };
}
