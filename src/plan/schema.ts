/**
 * The optional `plan` section of the campaign file: thresholds of the trust maps, the wind directions to plan for,
 * and the candidate positions of the layout search. Every key carries its unit and default in its description.
 */
import { z } from 'zod';

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');

const extent = z
  .object({ min: finite(), max: finite() })
  .strict()
  .refine((e) => e.max >= e.min, 'max must not be less than min');

/** Candidate positions of one instrument: a list of points, or a rectangle sampled on a grid. */
const candidateSetSchema = z.union([
  z
    .array(z.union([z.tuple([finite(), finite()]), z.tuple([finite(), finite(), finite()])]))
    .min(1)
    .describe(
      'list of positions [east, north] or [east, north, up], site frame, metres; without up the instrument sits at ground level + its own height above ground in the campaign',
    ),
  z
    .object({
      east: extent.describe('east extent, metres'),
      north: extent.describe('north extent, metres'),
      step_m: finite().positive().describe('grid step, metres (points at min, min + step, ... up to max)'),
    })
    .strict()
    .describe('a rectangle sampled on a grid, at ground level + the instrument height above ground in the campaign'),
]);

export const planSchema = z
  .object({
    directions_deg: z
      .array(finite().min(0).max(360))
      .min(1)
      .optional()
      .describe(
        'wind directions (from, degrees) to plan for; the planes use their vector mean. Required when windDirection is a series; ignored for a fixed wind direction',
      ),
    minElevation_deg: finite()
      .min(-90)
      .max(90)
      .default(0)
      .describe('a beam below this elevation (site frame, degrees) cannot serve a cell; default 0 (the horizon)'),
    maxRange_m: z
      .object({
        pulsed: finite().positive().default(3000).describe('pulsed instruments, metres; default 3000 (common practice, set to the instrument specification)'),
        cw: finite().positive().default(300).describe('continuous-wave instruments, metres; default 300 (common practice, set to the instrument specification)'),
      })
      .strict()
      .default({ pulsed: 3000, cw: 300 })
      .describe('a beam longer than this cannot serve a cell'),
    cwValidityFraction: finite()
      .positive()
      .max(1)
      .default(0.1)
      .describe(
        'the continuous-wave probe formula holds for R << pi a^2 / lambda; a focus beyond this fraction of pi a^2 / lambda is flagged; default 0.1',
      ),
    maxFootprintCells: finite()
      .positive()
      .default(2)
      .describe('flag a cell where a probe volume projected on the plane spans more than this many cells along a plane axis; default 2'),
    minCrossing_deg: finite()
      .min(0)
      .max(90)
      .default(30)
      .describe('flag a cell whose beams cross at less than this, degrees: two beams by their crossing on the u, v plane, three or more by the best three of them (a redundant beam beside another costs no trust); default 30 (common practice for dual-Doppler lobes)'),
    candidates: z
      .record(z.string(), candidateSetSchema)
      .default({})
      .describe('candidate positions per instrument id for the layout search; instruments not named stay where they are'),
    maxCombinations: z
      .number()
      .int()
      .min(1)
      .default(2000)
      .describe('evaluate at most this many layouts; beyond it a seeded random sample of this size is drawn; default 2000'),
    seed: z.number().int().default(1).describe('seed of the random layout sample; default 1'),
    top: z.number().int().min(1).default(5).describe('report this many best layouts; default 5'),
  })
  .strict();

export type PlanInput = z.input<typeof planSchema>;
export type PlanSettingsParsed = z.output<typeof planSchema>;
export type CandidateSet = z.output<typeof candidateSetSchema>;
