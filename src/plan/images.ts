/**
 * The planner's images, drawn with the shared map renderer (render/scalarMap.ts): per plane a trust map (trusted cells
 * coloured by their largest amplification, the others hatched by category), the amplification of w and the condition
 * number of the beam matrix, each written as SVG and PNG under <runDir>/plan/.
 */
import type { Campaign } from '../campaign/types.ts';
import { withValues } from '../grid/grid.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { axisLabels, windFrom } from '../render/labels.ts';
import { RenderQueue } from '../render/renderQueue.ts';
import { scalarMapSvg, type ScalarMapOptions } from '../render/scalarMap.ts';
import { TrustCategory, trustCategoryName } from './cellTrust.ts';
import { planeComponents, planeRegion } from './components.ts';
import type { PlanResult } from './planCampaign.ts';
import type { PlaneTrust } from './trustMap.ts';

const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');

/** Scalar-map options shared by the planner's images. */
function mapBase(pt: PlaneTrust, campaign: Campaign): Pick<ScalarMapOptions, 'axes' | 'rotor'> {
  const p = pt.geometry.plane;
  const D = campaign.turbine.rotorDiameter_m;
  const cross = p.orientation === 'cross';
  const labels = axisLabels(p.orientation);
  return {
    axes: { yLabel: labels.yLabel, zLabel: labels.zLabel, diameter_m: D, note: labels.note, ...(labels.zLabelD ? { zLabelD: labels.zLabelD } : {}) },
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
    if (t.category[c] === TrustCategory.trusted) values[c] = t.passW[c] ? Math.max(t.dopU[c], t.dopV[c], t.dopW[c]) : Math.max(t.dopU[c], t.dopV[c]);
    else codes[c] = codeOf.get(t.category[c])!;
  }
  return { values, codes, names };
}

/**
 * Writes the three maps of every plane into <runDir>/plan (rendered in parallel, see render/renderQueue.ts); paths in
 * the records are relative to runDir.
 */
export async function writePlanImages(result: PlanResult, campaign: Campaign, runDir: string): Promise<OutputRecord[]> {
  const figures = campaign.output.figures;
  const queue = new RenderQueue(runDir, figures?.density ?? 300, figures?.workers);
  const maxA = result.settings.maxAmplification;
  for (const pt of result.planes) {
    const g = pt.geometry.grid;
    const id = pt.geometry.plane.id;
    const base = mapBase(pt, campaign);
    const sub = `${windFrom(result.settings.direction_deg)} \u00b7 maximum error amplification ${maxA}`;
    const tm = trustMapGrid(pt);
    const comps = planeComponents(pt.geometry.plane, result.instruments.length) === 'uvw' ? 'u, v and w' : 'u and v';
    const region = planeRegion(pt.geometry.plane);
    const maps: [string, string, ScalarMapOptions][] = [
      [
        `trust_${safe(id)}`,
        `trust map: cells where ${comps} are resolved, the others by reason`,
        {
          title: `Plane ${id}: where the planned geometry resolves ${comps}`,
          subtitle: `${sub} \u00b7 ${(100 * pt.plane.all).toFixed(0)}\u00a0% of the plane, ${(100 * pt.rotor.all).toFixed(0)}\u00a0% of the ${region} trusted`,
          colorbarLabel: 'largest error amplification of the resolved components (–)',
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
          subtitle: `square root of the w diagonal of (A^{T}A)^{\u22121} \u00b7 ${sub}`,
          colorbarLabel: 'error amplification of w (–)',
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
      await queue.add(scalarMapSvg(withValues(g, values[k]), opts), `plan/${name}`, { plane: id, description });
    }
  }
  return queue.done();
}

