/**
 * Campaign keys of the single-instrument geometries: what an instrument is (`role`), in which frame its beam angles
 * are given (`beamFrame`), and the settings of profilers (VAD/DBS), nacelle-mounted forward-looking instruments and
 * single-instrument wake trackers. Plane scanners (the default role) need none of these.
 *
 * Conventions: azimuths clockwise (site frame: from north; nacelle frame: from the nacelle axis, which points where
 * the rotor faces, i.e. upwind when the turbine is aligned); elevations above the horizontal (of the site, or of the
 * nacelle's own horizontal plane); heights above the site ground; distances in metres.
 */
import { z } from 'zod';

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');

const span = z
  .object({
    min: finite(),
    max: finite(),
    step: finite().positive(),
  })
  .strict()
  .refine((e) => e.max >= e.min, 'max must not be less than min');

export const roleSchema = z
  .enum(['plane', 'profiler', 'nacelle', 'tracker'])
  .default('plane')
  .describe('what the instrument does: plane (scanner crossing beams in the planes; default), profiler (VAD cone or DBS beams: wind profile), nacelle (forward-looking beams from the nacelle: inflow, yaw misalignment, shear), tracker (one scanner sweeping sectors through the wake)');

export const beamFrameSchema = z
  .enum(['site', 'nacelle'])
  .optional()
  .describe('frame of the reported beam angles: site (azimuth from north) or nacelle (azimuth from the nacelle axis, clockwise; needs turbine.series with yaw_deg); default nacelle for role nacelle, else site');

export const mountSchema = vecSchema()
  .optional()
  .describe('beam origin of an instrument on the nacelle, metres, in the nacelle frame [forward, left, up] from the tower base (forward = where the rotor faces); default [0, 0, hub height]; used instead of position_m when beamFrame is nacelle');

function vecSchema() {
  return z.tuple([finite(), finite(), finite()]);
}

export const orientationSeriesSchema = z
  .object({
    file: z.string().min(1).describe('CSV file relative to the campaign file'),
    columns: z.record(z.string(), z.string()).default({}).describe('map of our column name (time, tilt_deg, roll_deg) to the file header'),
  })
  .strict()
  .optional()
  .describe('inclinometer series of a nacelle-mounted instrument: time, tilt_deg (positive raises the beam along the nacelle axis), roll_deg (positive raises the beams on the right, looking along the axis); added to calibration pitch and roll, interpolated to each sample');

export const profileSchema = z
  .object({
    mode: z.enum(['vad', 'dbs']).describe('vad: conical scan at one elevation, any number of azimuths (Browning & Wexler 1968 fit); dbs: 4 slanted beams 90 degrees apart, optionally a vertical one'),
    heights_m: span.describe('height bins above ground: centres min, min + step, ... max; a sample belongs to the nearest centre within step/2, metres'),
    sectors: z.number().int().min(4).max(360).default(36).describe('azimuth sectors the samples are pooled in before the fit (each sector enters the fit once with its mean beam and mean radial velocity); default 36 (10 degrees)'),
    verticalAbove_deg: finite().min(45).max(90).default(80).describe('beams above this elevation count as the vertical beam, degrees; default 80'),
    minSectors: z.number().int().min(3).default(4).describe('fewer sectors with data at a height: the fit is not made (flag too_few_azimuths); default 4 (three unknowns and one degree of freedom for the residual)'),
    minSamplesPerSector: z.number().int().min(1).default(3).describe('a sector enters the fit with at least this many samples; default 3'),
    maxAzimuthGap_deg: finite().positive().max(360).default(120).describe('VAD: a largest gap between sectors with data wider than this flags the height (poorly conditioned fit), degrees; default 120'),
    minR2: finite().min(0).max(1).default(0.9).describe('homogeneity check: the uniform-wind fit must explain at least this share of the sector-mean variance (R^2), else the height is flagged inhomogeneous; default 0.9 (common practice)'),
    pattern: z
      .object({
        elevation_deg: finite().min(0).max(90).describe('cone elevation (VAD) or slanted-beam elevation (DBS), degrees'),
        azimuths_deg: z.array(finite()).min(1).describe('azimuths of the beams (VAD: the cone positions; DBS: the four slanted beams), degrees in the instrument frame'),
        vertical: z.boolean().default(false).describe('DBS: a fifth, vertical beam; default false'),
        ranges_m: z.array(finite().positive()).min(1).describe('range gates along each beam, metres'),
        ray_s: finite().positive().default(1).describe('time per beam position, s; default 1'),
      })
      .strict()
      .optional()
      .describe('the scan the instrument runs (used by the simulator and the planner; the processing uses the samples as they come)'),
  })
  .strict();

export const nacelleSchema = z
  .object({
    beams: z
      .array(z.object({ azimuth_deg: finite().min(-89).max(89), elevation_deg: finite().min(-60).max(60) }).strict())
      .min(2)
      .max(4)
      .describe('beam directions relative to the nacelle axis, degrees (azimuth clockwise seen from above, elevation above the nacelle horizontal); 2 beams: one pair; 4 beams: an upper and a lower pair (by elevation)'),
    ranges_m: z.array(finite().positive()).min(1).describe('range gates along the beams, metres'),
    beamTolerance_deg: finite().positive().default(1).describe('a sample belongs to the beam within this angle of its nominal direction, degrees; default 1'),
    rangeTolerance_m: finite().positive().optional().describe('a sample belongs to the gate within this range, metres; default half the smallest gate spacing (or 10 m with one gate)'),
    distance_D: finite().positive().default(2.5).describe('upstream distance of the reported hub-height speed, rotor diameters; default 2.5 (common practice for power-curve work)'),
    maxGap_s: finite().positive().default(120).describe('a sample further than this from the nearest turbine-series row has no nacelle direction (rejected no_nacelle_direction), s; default 120'),
    ray_s: finite().positive().default(1).describe('time per beam, s (simulator and planner); default 1'),
  })
  .strict();

export const trackSchema = z
  .object({
    sector: z.enum(['horizontal', 'vertical']).describe('horizontal: sweeps in azimuth, the wake tracked across y; vertical: sweeps in elevation, the wake tracked in height z'),
    x_m: span.describe('downstream distances (rotor frame x) of the tracked cross-sections: bin centres, metres'),
    across_m: span.describe('bins across the wake: y (horizontal sector) or height z (vertical sector), metres'),
    scan_s: finite().positive().describe('duration of one sector sweep, s: scans are counted from the window start in steps of this'),
    maxBeamAngle_deg: finite().min(1).max(89).default(60).describe('bins whose beam makes a larger angle with the assumed flow direction are masked (the free-stream projection becomes small), degrees; default 60'),
    directionUncertainty_deg: finite().min(0).default(3).describe('standard uncertainty of the assumed flow direction, degrees, used to estimate the bias it causes; default 3 (common practice for a nacelle or met-mast vane)'),
    pattern: z
      .object({
        azimuth_deg: span.describe('horizontal sector: azimuth sweep; vertical sector: min = max = the fixed azimuth'),
        elevation_deg: span.describe('vertical sector: elevation sweep; horizontal sector: min = max = the fixed elevation'),
        ranges_m: z.array(finite().positive()).min(1).describe('range gates, metres'),
        ray_s: finite().positive().default(0.5).describe('time per ray, s; default 0.5'),
      })
      .strict()
      .optional()
      .describe('the sweep the instrument runs (simulator and planner), angles in the instrument frame'),
  })
  .strict();

export const profileInflowSchema = z
  .object({
    kind: z.literal('profile'),
    instrument: z.string().min(1).describe('id of a profiler instrument of this campaign'),
    law: z.enum(['power', 'log']).default('power'),
  })
  .strict()
  .describe('inflow from a profiling instrument of the campaign: its profile of the same window, projected on the window wind direction, with its uncertainty carried into the deficit');

export type ProfileSettings = z.output<typeof profileSchema>;
export type NacelleSettings = z.output<typeof nacelleSchema>;
export type TrackSettings = z.output<typeof trackSchema>;
