/**
 * Marks of every turbine and wake on a plane figure (several turbines): each rotor seen from above on a horizontal
 * plane, placed in the plane's own frame for the window's wind direction, and every turbine's wake centre per
 * downstream row, moved from its turbine's rotor frame (wake/siteWakes.ts) back into the plane's coordinates
 * (geometry/site.ts). With one turbine these are the turbine at the origin and its own track, as before.
 */
import type { Campaign, PlaneSpec } from '../campaign/types.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { turbinesInFrame } from '../geometry/site.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import type { TurbineMark } from './mapLayers.ts';

/** Every turbine of the campaign in the plane's frame for wind from `direction_deg` (horizontal planes: x, y). */
export function siteTurbineMarks(c: Pick<Campaign, 'planes' | 'turbines'>, plane: Pick<PlaneSpec, 'turbineIndex' | 'origin' | 'heights'>, direction_deg: number): TurbineMark[] {
  return turbinesInFrame(c.turbines, direction_deg, planeOrigin(c, plane), plane.heights ?? 'base')
    .map((t) => ({ y: t.y, x: t.x, diameter_m: t.diameter, label: `turbine ${t.id}` }));
}

/** The wake centres per row of every turbine's wake row, in the plane's coordinates (x along the plane, y across). */
export function siteTracks(c: Pick<Campaign, 'planes' | 'turbines'>, plane: Pick<PlaneSpec, 'turbineIndex' | 'origin' | 'heights'>, direction_deg: number, rows: readonly WakePlaneWindow[]): { x: number[]; yc: number[] } {
  const at = turbinesInFrame(c.turbines, direction_deg, planeOrigin(c, plane), plane.heights ?? 'base');
  const out = { x: [] as number[], yc: [] as number[] };
  for (const r of rows) {
    const t = at.find((x) => x.id === r.turbineId);
    const tr = r.horizontalTrack;
    if (!t || !tr) continue;
    for (let k = 0; k < tr.x_m.length; k++) if (Number.isFinite(tr.yc_m[k])) { out.x.push(tr.x_m[k] + t.x); out.yc.push(tr.yc_m[k] + t.y); }
  }
  return out;
}
