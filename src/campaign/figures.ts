/**
 * The `output.figures` block of the campaign file: which figures a run draws and on which scales.
 *
 * By default a run draws the summary plots and one multi-panel figure per plane (its windows as small multiples on
 * one colour scale), and one more per plane for its condition bins when the campaign declares any; images of single
 * windows or bins are drawn on request (`windowImages`, `binImages`). Colour limits are shared
 * across all planes and windows of a run (from the 1st to the 99th percentile of all values, widened to nice
 * numbers) unless fixed here; arrows share one reference speed and length per run.
 */
import { z } from 'zod';

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');
const range = z.tuple([finite(), finite()]).refine((r) => r[1] > r[0], 'needs [low, high] with high > low');

export const windowImagesSchema = z.union([
  z.enum(['none', 'all']),
  z.object({ every: z.number().int().min(1).describe('every n-th window: 0, n, 2n, ...') }).strict(),
  z.array(z.number().int().min(0)).min(1).describe('these window (or bin) numbers'),
]);

export const figuresSchema = z
  .object({
    windowImages: windowImagesSchema
      .default('none')
      .describe('images of single windows (u/u_inf with arrows, its uncertainty, the inflow profile, error amplification, samples): "none" (default), "all", {every: n} or a list of window numbers; the command-line option --window-images overrides it'),
    binImages: windowImagesSchema
      .default('none')
      .describe('the same images for single condition bins (ensembles), by bin number: "none" (default), "all", {every: n} or a list; on the command line --window-images bins:all (or bins:0,2, bins:every:2)'),
    limits: z
      .object({
        u_norm: range.optional().describe('colour range of u/u_inf, dimensionless'),
        u_ms: range.optional().describe('colour range of u where no inflow normalises it, m/s'),
        su_ms: range.optional().describe('colour range of the standard uncertainty of u, m/s'),
        samples: range.optional().describe('colour range of the accepted samples per cell'),
      })
      .strict()
      .default({})
      .describe('fixed colour ranges; quantities not given share the range of all planes and windows of the run'),
    arrowReference_ms: finite().positive().optional().describe('speed of the reference arrow, m/s; default: a round number near the 90th percentile of the in-plane speed over the run'),
    maxPanels: z.number().int().min(1).max(200).default(24).describe('most windows (or bins) in one multi-panel figure; with more, evenly spaced ones are shown and the figure says which; default 24'),
    density: z.number().int().min(72).max(1200).default(300).describe('PNG resolution, dots per inch of the figure size; default 300'),
    workers: z.number().int().min(1).max(64).optional().describe('figures rendered at the same time; default: the number of processor cores'),
  })
  .strict();

export type FiguresSettings = z.output<typeof figuresSchema>;
export type WindowImages = z.output<typeof windowImagesSchema>;

export const FIGURES_DEFAULT: FiguresSettings = { windowImages: 'none', binImages: 'none', limits: {}, maxPanels: 24, density: 300 };
