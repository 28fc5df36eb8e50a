/**
 * Validation of the planner settings in one place: the campaign's `plan` section with its defaults, overridden by
 * the call options, plus the wind direction that defines the rotor frame of the planes.
 */
import type { Campaign } from '../campaign/types.ts';
import { ConfigError, OptionError } from '../errors.ts';
import { DEG } from '../geometry/beam.ts';
import { planSchema, type PlanSettingsParsed } from './schema.ts';
import type { Terrain } from '../geometry/terrain.ts';
import type { BeamObstacles } from './beamCells.ts';

/** Options of planCampaign; each overrides the key of the same name in the campaign's `plan` section. */
export interface PlanOptions {
  /** Wind directions (from, degrees) to plan for; their vector mean defines the rotor frame. */
  directions_deg?: number[];
  /** Run the layout search when candidates are given. @default true */
  layout?: boolean;
  /** Cap on evaluated layouts. @default plan.maxCombinations (2000) */
  maxCombinations?: number;
  /** Seed of the random layout sample. @default plan.seed (1) */
  seed?: number;
  /** Number of best layouts reported. @default plan.top (5) */
  top?: number;
  /** Compute pointing tables. @default true */
  pointing?: boolean;
  /** Ground under the beams and planes (io/terrainFile.ts loadTerrain). @default flat at site.groundLevel_m */
  terrain?: Terrain;
}

export interface PlanSettings extends PlanSettingsParsed {
  /** Wind direction (from, degrees) of the rotor frame. */
  direction_deg: number;
  /** Where it came from. */
  directionSource: 'fixed' | 'planned';
  layout: boolean;
  pointing: boolean;
  /** Copied from the campaign: retrieval.maxAmplification. */
  maxAmplification: number;
  /** Copied from the campaign: retrieval.twoInstrumentAssumption. */
  twoInstrumentAssumption: 'w-zero' | 'none';
  /** Copied from the campaign: qc.groundClearance_m, metres. */
  groundClearance_m: number;
  /** Copied from the campaign: site.groundLevel_m, metres. */
  groundLevel_m: number;
  /** Terrain and rotor disks in the way of the beams (planCampaign fills it from the campaign and its terrain). */
  obstacles?: BeamObstacles;
}

/** Vector mean of directions (degrees, in [0, 360)); NaN when they cancel. */
export function meanDirection(directions_deg: readonly number[]): number {
  let s = 0, c = 0;
  for (const d of directions_deg) {
    s += Math.sin(d * DEG);
    c += Math.cos(d * DEG);
  }
  if (Math.hypot(s, c) < 1e-9 * directions_deg.length) return NaN;
  const m = Math.atan2(s, c) / DEG;
  return m < 0 ? m + 360 : m;
}

export function resolvePlanSettings(campaign: Campaign, opts: PlanOptions = {}): PlanSettings {
  const file = campaign.sourceFile;
  const raw = campaign.plan ?? {};
  const parsed = planSchema.safeParse(raw);
  if (!parsed.success) {
    const iss = parsed.error.issues[0]!;
    throw new ConfigError(file, `plan.${iss.path.map(String).join('.')}`, iss.message);
  }
  const p = parsed.data;
  for (const key of ['maxCombinations', 'top'] as const) {
    const v = opts[key];
    if (v !== undefined && !(Number.isInteger(v) && v >= 1)) throw new OptionError(key, `must be an integer >= 1 (got ${v})`);
  }
  if (opts.seed !== undefined && !Number.isInteger(opts.seed)) throw new OptionError('seed', `must be an integer (got ${opts.seed})`);
  const directions = opts.directions_deg ?? p.directions_deg;
  let direction_deg: number;
  let directionSource: 'fixed' | 'planned';
  if (opts.directions_deg !== undefined || campaign.windDirection.kind !== 'fixed') {
    if (!directions || directions.length === 0) {
      throw new ConfigError(file, 'plan.directions_deg', 'the wind direction is a series: list the directions to plan for');
    }
    direction_deg = meanDirection(directions);
    if (!Number.isFinite(direction_deg)) {
      throw new ConfigError(file, 'plan.directions_deg', 'the directions cancel out: their vector mean is undefined', directions);
    }
    directionSource = 'planned';
  } else {
    direction_deg = campaign.windDirection.deg;
    directionSource = 'fixed';
  }
  for (const id of Object.keys(p.candidates)) {
    if (!campaign.instruments.some((i) => i.id === id)) {
      throw new ConfigError(file, `plan.candidates.${id}`, `no instrument with this id (known: ${campaign.instruments.map((i) => i.id).join(', ')})`);
    }
  }
  return {
    ...p,
    maxCombinations: opts.maxCombinations ?? p.maxCombinations,
    seed: opts.seed ?? p.seed,
    top: opts.top ?? p.top,
    direction_deg,
    directionSource,
    layout: opts.layout ?? true,
    pointing: opts.pointing ?? true,
    maxAmplification: campaign.retrieval.maxAmplification,
    twoInstrumentAssumption: campaign.retrieval.twoInstrumentAssumption,
    groundClearance_m: campaign.qc.groundClearance_m,
    groundLevel_m: campaign.site.groundLevel_m,
  };
}
