/**
 * Marks of every turbine and wake on a plane image (several turbines): on a horizontal plane each rotor seen from
 * above (a flat ellipse one diameter across, perpendicular to the wind) and each turbine's wake centre per downstream
 * row; on a cross plane each turbine's fitted wake centre and width. Positions come from the wake rows (each in its
 * turbine's rotor frame, wake/siteWakes.ts) moved back into the plane's coordinates (geometry/site.ts).
 */
import type { Campaign } from '../campaign/types.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { turbinesInFrame } from '../geometry/site.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import type { ScalarMapOptions } from './scalarMap.ts';

export interface TurbineMarks {
  markers: NonNullable<ScalarMapOptions['markers']>;
  ellipses: NonNullable<ScalarMapOptions['ellipses']>;
}

export function turbineMarks(field: FieldResult, c: Pick<Campaign, 'planes' | 'turbines'>, rows: readonly WakePlaneWindow[]): TurbineMarks {
  const out: TurbineMarks = { markers: [], ellipses: [] };
  const plane = c.planes[field.planeIndex] ?? c.planes.find((p) => p.id === field.planeId);
  if (!plane) return out;
  const at = turbinesInFrame(c.turbines, field.direction_deg, planeOrigin(c, plane), plane.heights ?? 'base');
  const g = field.grid;
  const yLo = g.y0 - g.dy / 2, yHi = g.y0 + (g.ny - 0.5) * g.dy, sLo = g.z0 - g.dz / 2, sHi = g.z0 + (g.nz - 0.5) * g.dz;
  if (field.orientation === 'horizontal') {
    for (const t of at) {
      if (t.x < sLo || t.x > sHi || t.y < yLo - t.diameter / 2 || t.y > yHi + t.diameter / 2) continue;
      out.ellipses.push({ y: t.y, z: t.x, ry: t.diameter / 2, rz: Math.max(g.dz / 6, t.diameter / 30), label: `rotor of ${t.id}, seen from above` });
    }
  }
  for (const r of rows) {
    const t = at.find((x) => x.id === r.turbineId);
    if (!t) continue;
    if (r.horizontalTrack) {
      const tr = r.horizontalTrack;
      for (let k = 0; k < tr.x_m.length; k++) {
        if (Number.isFinite(tr.yc_m[k])) out.markers.push({ y: tr.yc_m[k] + t.y, z: tr.x_m[k] + t.x, label: `wake centre of ${t.id} per row`, shape: 'circle' });
      }
    } else if (r.centre.ok && r.gaussian) {
      const p = r.gaussian.params;
      out.markers.push({ y: r.centre.y_m + t.y, z: r.centre.z_m + t.zBase, label: `wake centre of ${t.id}`, shape: 'cross' });
      out.ellipses.push({ y: p.yc_m + t.y, z: p.zc_m + t.zBase, ry: p.sigmaY_m, rz: p.sigmaZ_m, label: `wake width of ${t.id} (\u03c3y, \u03c3z)` });
    }
  }
  return out;
}
