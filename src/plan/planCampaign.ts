/**
 * The campaign planner: trust maps of every plane for the campaign's own layout, pointing tables per instrument and
 * plane, and (when plan.candidates is given) a layout search. Pure: no I/O.
 */
import type { Campaign } from '../campaign/types.ts';
import { rotorFrame, type RotorFrame } from '../geometry/frames.ts';
import { planeOrigin, turbineOfPlane } from '../campaign/turbines.ts';
import type { Vec3 } from '../campaign/types.ts';
import { poolFractions, trustCategoryName, type Fractions } from './cellTrust.ts';
import { searchLayouts, type LayoutSearchResult } from './layoutSearch.ts';
import { planeGeometry } from './planeGeometry.ts';
import { pointingTable, type PointingTable } from './pointing.ts';
import { resolvePlanSettings, type PlanOptions, type PlanSettings } from './settings.ts';
import { planeTrust, type PlaneTrust } from './trustMap.ts';
import { planeComponents, planeRegion } from './components.ts';
import { planSingleInstruments, type SingleInstrumentPlan } from './singleInstruments.ts';

export interface PlanePlanSummary {
  planeId: string;
  orientation: 'cross' | 'horizontal';
  /** The components the layout is asked to resolve here (components.ts) and the region its coverage counts. */
  components: 'uvw' | 'uv';
  region: string;
  cells: number;
  rotorCells: number;
  rotor: Fractions;
  plane: Fractions;
  /** Cells per trust category (trustCategoryName). */
  categories: Record<string, number>;
}

export interface PlanSummary {
  campaign: string;
  direction_deg: number;
  directionSource: 'fixed' | 'planned';
  planes: PlanePlanSummary[];
  /** Pooled over all planes. */
  rotor: Fractions;
  plane: Fractions;
  /** Per instrument and plane: the pointing table's figures without its rows. */
  pointing: (Omit<PointingTable, 'rows'> & { points: number })[];
  layout?: {
    total: number;
    evaluated: number;
    sampled: boolean;
    seed: number;
    skippedCoincident: number;
    own: { rotorAll: number; planeAll: number };
    best?: { rotorAll: number; planeAll: number; positions: Record<string, [number, number, number]> };
    gain: { rotorAll: number; planeAll: number };
  };
  notes: string[];
  geometries?: SingleInstrumentPlan[];
}

export interface PlanResult {
  settings: PlanSettings;
  /** The plane scanners (role plane), in campaign order: the instruments of the trust maps, pointing and layouts. */
  instruments: Campaign['instruments'];
  /** Profilers, nacelle instruments and trackers: their own geometry figures (singleInstruments.ts). */
  geometries: SingleInstrumentPlan[];
  frame: RotorFrame;
  planes: PlaneTrust[];
  pointing: PointingTable[];
  layout?: LayoutSearchResult;
  summary: PlanSummary;
}

export function planCampaign(campaign: Campaign, opts: PlanOptions = {}): PlanResult {
  const s = resolvePlanSettings(campaign, opts);
  const frame = rotorFrame(s.direction_deg, campaign.turbine.position);
  // Every turbine's rotor disk is an obstacle of the beams; the terrain too.
  s.obstacles = {
    terrain: opts.terrain,
    rotors: campaign.turbines.map((t) => ({ id: t.id, hub: [t.position[0], t.position[1], t.position[2] + t.hubHeight_m] as Vec3, radius_m: t.rotorDiameter_m / 2 })),
  };
  // Each plane in its own frame (its turbine's or the site's), heights from its own reference.
  const geoms = campaign.planes.map((p) => {
    const t = turbineOfPlane(campaign, p);
    const origin = planeOrigin(campaign, p);
    const hubZ = p.heights === 'terrain' ? t.hubHeight_m : p.heights === 'site' ? t.position[2] + t.hubHeight_m : t.position[2] - origin[2] + t.hubHeight_m;
    const g = planeGeometry(p, rotorFrame(s.direction_deg, origin), hubZ, t.rotorDiameter_m);
    if (p.heights === 'terrain' || p.heights === 'site') {
      for (let i = 0; i < g.site.length / 3; i++) {
        const z = g.rotor[3 * i + 2];
        g.site[3 * i + 2] = p.heights === 'site' ? z : (opts.terrain ? opts.terrain.heightAt(g.site[3 * i], g.site[3 * i + 1]) : campaign.site.groundLevel_m) + z;
      }
    }
    return g;
  });
  // Only plane scanners serve the planes; the other roles have their own figures below.
  const scanners = campaign.instruments.filter((i) => i.role === 'plane');
  const positions = scanners.map((i) => i.position);
  const planes = geoms.map((g) => planeTrust(scanners, positions, g, frame, s));
  const pointing: PointingTable[] = [];
  if (s.pointing)
    for (const [k, ins] of scanners.entries())
      for (const pt of planes) pointing.push(pointingTable(ins, ins.position, pt.geometry, pt.beams[k]));
  const layout = s.layout && Object.keys(s.candidates).length > 0 && scanners.length > 0 ? searchLayouts(scanners, geoms, frame, s, campaign.sourceFile) : undefined;
  const geometries = planSingleInstruments(campaign, s.direction_deg);

  const notes = [
    opts.terrain && !opts.terrain.flat ? 'straight beams over the terrain model (no Earth curvature); beams below the ground flagged terrain' : 'straight beams in the flat site frame (no Earth curvature, no terrain)',
    `beams through the rotor disk of any of the ${campaign.turbines.length} turbine(s) (facing the planned wind) flagged rotor`,
    `rotor frame from wind direction ${s.direction_deg.toFixed(2)}\u00b0 (${s.directionSource === 'fixed' ? 'campaign windDirection' : 'vector mean of plan.directions_deg'})`,
  ];
  if (campaign.site.earthCurvature) notes.push('site.earthCurvature is true but the planner does not apply it: check long beams');
  if (scanners.length < 3 && scanners.length > 0) notes.push(`${scanners.length} plane scanner${scanners.length === 1 ? '' : 's'}: w cannot be resolved; the planes are planned for u and v${s.twoInstrumentAssumption === 'w-zero' ? ' (w = 0 assumed)' : ', which needs twoInstrumentAssumption w-zero'}`);
  if (s.twoInstrumentAssumption === 'w-zero' && planes.length > 0 && scanners.length > 1) notes.push('cells with two usable beams: u, v from the two-component system assuming w = 0; w not resolved');
  if (planes.some((p) => p.geometry.plane.orientation === 'horizontal')) notes.push('horizontal planes: planned for u and v over the rotor shadow band (|y| within the rotor outline at the plane height), not a rotor disk; near-horizontal beams leave w poorly resolved');
  const skipped = Object.keys(s.candidates).filter((id) => !scanners.some((i) => i.id === id));
  if (skipped.length) notes.push(`candidates of ${skipped.join(', ')} ignored: only plane scanners take part in the layout search`);
  if (layout?.sampled) notes.push(`layout search: ${layout.total} combinations exceed plan.maxCombinations; a random sample of ${layout.evaluated + layout.skippedCoincident} drawn with seed ${layout.seed}`);

  const summary: PlanSummary = {
    campaign: campaign.name,
    direction_deg: s.direction_deg,
    directionSource: s.directionSource,
    planes: planes.map((p) => {
      const categories: Record<string, number> = {};
      for (const name of trustCategoryName) categories[name] = 0;
      for (const c of p.trust.category) categories[trustCategoryName[c]]++;
      return {
        planeId: p.geometry.plane.id,
        orientation: p.geometry.plane.orientation,
        components: planeComponents(p.geometry.plane, scanners.length),
        region: planeRegion(p.geometry.plane),
        cells: p.plane.cells,
        rotorCells: p.rotor.cells,
        rotor: p.rotor,
        plane: p.plane,
        categories,
      };
    }),
    rotor: poolFractions(planes.map((p) => p.rotor)),
    plane: poolFractions(planes.map((p) => p.plane)),
    pointing: pointing.map((t) => ({
      instrumentId: t.instrumentId,
      planeId: t.planeId,
      points: t.rows.length,
      skipped: t.skipped,
      slew_deg: t.slew_deg,
      rasterSlew_deg: t.rasterSlew_deg,
      serpentineSlew_deg: t.serpentineSlew_deg,
      passTime_s: t.passTime_s,
      rasterPassTime_s: t.rasterPassTime_s,
    })),
    notes,
    ...(geometries.length ? { geometries } : {}),
  };
  if (layout) {
    const best = layout.ranked[0];
    summary.layout = {
      total: layout.total,
      evaluated: layout.evaluated,
      sampled: layout.sampled,
      seed: layout.seed,
      skippedCoincident: layout.skippedCoincident,
      own: { rotorAll: layout.baseline.rotor.all, planeAll: layout.baseline.plane.all },
      best: best && {
        rotorAll: best.rotor.all,
        planeAll: best.plane.all,
        positions: Object.fromEntries(scanners.map((ins, i) => [ins.id, best.positions[i]])),
      },
      gain: layout.gain,
    };
  }
  return { settings: s, instruments: scanners, geometries, frame, planes, pointing, layout, summary };
}
