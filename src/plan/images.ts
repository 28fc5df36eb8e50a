/**
 * The planner's images, drawn with the shared map renderer (render/scalarMap.ts): per plane a trust map (trusted cells
 * coloured by their largest amplification, the others hatched by category), the amplification of w and the condition
 * number of the beam matrix, each written as SVG and PNG under <runDir>/plan/.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { withValues } from '../grid/grid.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { scalarMapSvg, type ScalarMapOptions } from '../render/scalarMap.ts';
import { writeSvgAndPng } from '../render/write.ts';
import { TrustCategory, trustCategoryName } from './cellTrust.ts';
import type { PlanResult } from './planCampaign.ts';
import type { PlaneTrust } from './trustMap.ts';

const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');

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

/** Writes the three maps of every plane into `dir` (<runDir>/plan); paths in the records are relative to runDir. */
export async function writePlanImages(result: PlanResult, campaign: Campaign, dir: string): Promise<OutputRecord[]> {
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

