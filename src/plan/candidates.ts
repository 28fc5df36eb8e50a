/**
 * Candidate positions of the instruments for the layout search (campaign key plan.candidates), in the site frame.
 * A listed [east, north] point, or a grid point of an area, sits at ground level + the instrument's own height above
 * ground in the campaign (position up - site.groundLevel_m); a listed [east, north, up] point is taken as given.
 * An area is sampled at min, min + step, ... while <= max (plus a 1e-9 m allowance for rounding).
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import { ConfigError } from '../errors.ts';
import type { CandidateSet } from './schema.ts';

/** Above this many candidates for one instrument the area's step is too fine. */
export const MAX_CANDIDATES_PER_INSTRUMENT = 100_000;

export function candidatePositions(ins: Pick<Instrument, 'id' | 'position'>, set: CandidateSet, file = '<memory>'): Vec3[] {
  // Flat terrain: ground level + the instrument height above ground is the campaign position's own up value.
  const up = ins.position[2];
  if (Array.isArray(set)) return set.map((p) => (p.length === 3 ? [p[0], p[1], p[2]] : [p[0], p[1], up]));
  const ne = Math.floor((set.east.max - set.east.min) / set.step_m + 1e-9) + 1;
  const nn = Math.floor((set.north.max - set.north.min) / set.step_m + 1e-9) + 1;
  if (ne * nn > MAX_CANDIDATES_PER_INSTRUMENT) {
    throw new ConfigError(file, `plan.candidates.${ins.id}.step_m`, `more than ${MAX_CANDIDATES_PER_INSTRUMENT} candidate positions; use a larger step`, set.step_m);
  }
  const out: Vec3[] = [];
  for (let j = 0; j < nn; j++) for (let i = 0; i < ne; i++) out.push([set.east.min + i * set.step_m, set.north.min + j * set.step_m, up]);
  return out;
}
