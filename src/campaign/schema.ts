/**
 * The campaign file: one YAML or JSON document describing the site, the turbine, the instruments and their data, the
 * measurement planes, quality control, averaging windows, the wind-direction source, the analysis and the outputs.
 *
 * Conventions (stated once, used everywhere):
 * - Site frame: east, north, up in metres from the site origin.
 * - Azimuth: degrees clockwise from north. Elevation: degrees above horizontal.
 * - Radial velocity: positive away from the instrument.
 * - Rotor frame: origin at the tower base on the ground, x downstream along the wind, y to the left looking
 *   downstream, z up (so z is height above the turbine's ground level).
 * - Wind direction: the direction the wind comes from, degrees clockwise from north.
 *
 * Every key carries its unit and default in its description; `wakeplane schema` prints the JSON Schema.
 */
import { z } from 'zod';
import { planSchema } from '../plan/schema.ts';
import { beamFrameSchema, mountSchema, nacelleSchema, orientationSeriesSchema, profileInflowSchema, profileSchema, roleSchema, trackSchema } from './geometrySchema.ts';
import { FIGURES_DEFAULT, figuresSchema } from './figures.ts';


/** Ids of instruments, planes and turbines: they name output files, so letters, digits, "_", "." and "-" only. */
export const ID_PATTERN = /^[A-Za-z0-9_.-]+$/;
export const ID_RULE = 'letters, digits, "_", "." and "-" only';

/** The longest id (as the campaign name): file names hold one id and up to 45 characters more, within 255 bytes. */
export const ID_MAX = 100;
const idString = () => z.string().max(ID_MAX, `at most ${ID_MAX} characters (ids name output files)`).regex(ID_PATTERN, ID_RULE);

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');
const vec3 = z.tuple([finite(), finite(), finite()]);

/**
 * A column in a CSV file (its header name, and a scale/offset turning the stored value into the SI unit), or a
 * variable in a NetCDF file (its name; units come from its `units` attribute, or from `units` here).
 */
const columnRef = z.union([
  z.string().min(1),
  z
    .object({
      name: z.string().min(1).describe('header name of the column in the file'),
      scale: finite().default(1).describe('multiply the stored value by this to get the SI unit; default 1'),
      offset: finite().default(0).describe('then add this (SI unit); default 0'),
      units: z
        .string()
        .min(1)
        .optional()
        .describe('NetCDF files: units of the stored values where the variable has no (or a wrong) units attribute, e.g. "km", "rad", "seconds since 2024-01-01"'),
    })
    .strict(),
]);

export const columnMapSchema = z
  .object({
    time: columnRef.optional().describe('time column: ISO 8601 UTC or Unix seconds; default header "time"'),
    instrument: columnRef.optional().describe('instrument id column; default "instrument"; optional if the file belongs to one instrument'),
    azimuth_deg: columnRef.optional().describe('azimuth, degrees clockwise from north; default "azimuth_deg"'),
    elevation_deg: columnRef.optional().describe('elevation above horizontal, degrees; default "elevation_deg"'),
    range_m: columnRef.optional().describe('range along the beam (focus distance for continuous-wave), metres; default "range_m"'),
    radial_velocity_ms: columnRef.optional().describe('radial velocity, m/s; default "radial_velocity_ms"'),
    cnr_db: columnRef.optional().describe('carrier-to-noise ratio, dB; default "cnr_db"; optional column'),
  })
  .strict();

const calibrationSchema = z
  .object({
    heading_deg: finite().default(0).describe('instrument heading offset, degrees clockwise: a true azimuth = reported azimuth + heading; default 0'),
    pitch_deg: finite().default(0).describe('instrument pitch, degrees, positive raises the beam pointing along the instrument north axis; default 0'),
    roll_deg: finite().default(0).describe('instrument roll, degrees, positive raises the beam pointing along the instrument east axis; default 0'),
    rangeOffset_m: finite().default(0).describe('added to every reported range, metres; default 0'),
  })
  .strict()
  .default({ heading_deg: 0, pitch_deg: 0, roll_deg: 0, rangeOffset_m: 0 });

const pulsedSchema = z
  .object({
    pulseFwhm_ns: finite().positive().default(200).describe('pulse intensity full width at half maximum, ns; default 200'),
    gateLength_m: finite().positive().default(30).describe('range-gate length, m; default 30'),
  })
  .strict();

const cwSchema = z
  .object({
    wavelength_m: finite().positive().default(1.565e-6).describe('laser wavelength, m; default 1.565e-6'),
    apertureRadius_m: finite().positive().default(0.028).describe('1/e^2 beam radius at the lens, m; default 0.028'),
  })
  .strict();

const instrumentSchema = z
  .object({
    id: idString(),
    position_m: vec3.optional().describe('site-frame position east, north, up, metres (the beam origin)'),
    position_wgs84: z
      .object({
        lat_deg: finite().min(-90).max(90),
        lon_deg: finite().min(-180).max(180),
        alt_m: finite().describe('height above the WGS84 ellipsoid of the beam origin, metres'),
      })
      .strict()
      .optional()
      .describe('position as WGS84 latitude/longitude/ellipsoidal height; needs site.origin_wgs84'),
    kind: z.enum(['pulsed', 'cw']).default('pulsed').describe('pulsed or continuous-wave (cw); default pulsed'),
    pulsed: pulsedSchema.default({ pulseFwhm_ns: 200, gateLength_m: 30 }),
    cw: cwSchema.default({ wavelength_m: 1.565e-6, apertureRadius_m: 0.028 }),
    calibration: calibrationSchema,
    pointingUncertainty: z
      .object({
        azimuth_deg: finite().min(0).default(0).describe('standard uncertainty of the beam azimuth, degrees; default 0 (a levelled, north-aligned scanner is often quoted at 0.05-0.1 degrees: common practice)'),
        elevation_deg: finite().min(0).default(0).describe('standard uncertainty of the beam elevation, degrees; default 0'),
        position_m: finite().min(0).default(0).describe('standard uncertainty of the instrument position along each axis, metres; default 0'),
      })
      .strict()
      .default({ azimuth_deg: 0, elevation_deg: 0, position_m: 0 })
      .describe('pointing and position errors for the uncertainty budget (propagated linearly through the beam geometry)'),
    files: z.array(z.string().min(1)).default([]).describe('data files (CSV, CSV.gz or NetCDF-4), relative to the campaign file'),
    columns: columnMapSchema.default({}).describe('column mapping for files whose headers or units differ; for NetCDF files the variable names'),
    radialVelocitySign: z
      .enum(['away', 'toward'])
      .default('away')
      .describe('sign convention of the files: "away" (positive away from the instrument, the CF convention) or "toward"; default away'),
    scan: z
      .object({
        dwell_s: finite().positive().default(1).describe('time per point, s; default 1'),
        slewRate_degs: finite().positive().default(30).describe('slew rate, degrees per second; default 30'),
      })
      .strict()
      .default({ dwell_s: 1, slewRate_degs: 30 })
      .describe('scanner timing for the planner'),
    cnrMin_db: z
      .union([finite(), z.literal('auto')])
      .optional()
      .describe('this instrument\'s lower CNR limit, dB, or "auto" (estimated from its data); default: qc.cnr_db.min'),
    // Single-instrument geometries (geometrySchema.ts).
    role: roleSchema,
    beamFrame: beamFrameSchema,
    mount_m: mountSchema,
    orientationSeries: orientationSeriesSchema,
    profile: profileSchema.optional().describe('profiler settings (role profiler)'),
    nacelle: nacelleSchema.optional().describe('nacelle-mounted instrument settings (role nacelle)'),
    track: trackSchema.optional().describe('wake-tracking settings (role tracker)'),
  })
  .strict();

const extent = z
  .object({
    min: finite(),
    max: finite(),
  })
  .strict()
  .refine((e) => e.max > e.min, 'max must be greater than min');

const planeSchema = z
  .object({
    id: idString(),
    orientation: z
      .enum(['cross', 'horizontal'])
      .default('cross')
      .describe('cross: vertical plane across the rotor axis at distance x; horizontal: plane at height z; default cross'),
    x_m: finite().optional().describe('downstream distance of a cross plane from the rotor, metres'),
    x_D: finite().optional().describe('downstream distance of a cross plane in rotor diameters (instead of x_m)'),
    z_m: finite().optional().describe('height of a horizontal plane above ground, metres (default: hub height)'),
    y: extent.describe('lateral extent (rotor frame y, positive to the left looking downstream), metres'),
    z: extent.optional().describe('vertical extent of a cross plane (height above ground), metres'),
    xRange: extent.optional().describe('downstream extent of a horizontal plane, metres'),
    cell_m: z.tuple([finite().positive(), finite().positive()]).describe('cell size [along y, along z or x], metres'),
    thickness_m: finite().positive().default(20).describe('samples within +/- thickness/2 of the plane count, metres; default 20'),
    frame: z
      .string()
      .min(1)
      .optional()
      .describe('whose frame the plane belongs to: a turbine id (origin at its tower base) or "site" (origin at the site origin); axes follow the wind either way; default: the first turbine'),
    heights: z
      .enum(['base', 'terrain', 'site'])
      .default('base')
      .describe('what z (and a horizontal plane\'s z_m) is measured from: "base" the frame origin (tower base; above ground on flat sites), "terrain" the ground under each point (terrain-following), "site" the site-frame up axis (altitude relative to the site origin); default base'),
  })
  .strict();

/** Defaults of qc.cnr_db.auto (src/qc/cnrLimit.ts and cnrEvidence.ts explain each). */
export const CNR_AUTO_DEFAULT = { rowsPerInstrument: 15000, timeBlock_s: 600, junkCost: 10, minSamples: 2000, fallback_db: -35, withoutEvidence_db: -27 };

const cnrAutoSchema = z
  .object({
    rowsPerInstrument: z
      .number()
      .int()
      .min(1000)
      .max(10000000)
      .default(CNR_AUTO_DEFAULT.rowsPerInstrument)
      .describe('rows read per instrument for the estimate, the budget shared equally among its files: from a plain CSV file in 8 evenly spaced slices, from a compressed or NetCDF file its first rows; default 15000'),
    timeBlock_s: finite().positive().default(CNR_AUTO_DEFAULT.timeBlock_s).describe('time block of the local reference (samples of one place and direction within a block are neighbours), s; default 600'),
    junkCost: finite().min(1).default(CNR_AUTO_DEFAULT.junkCost).describe('cost of accepting one junk sample, in good samples rejected; default 10'),
    minSamples: z.number().int().min(100).default(CNR_AUTO_DEFAULT.minSamples).describe('fewest samples with a local reference for an estimate; fewer: withoutEvidence_db is used and the run says so; default 2000'),
    fallback_db: finite().default(CNR_AUTO_DEFAULT.fallback_db).describe('limit when the data show no break (all samples consistent), dB; the lowest CNR seen is used when lower; default -35 (permissive)'),
    withoutEvidence_db: finite().default(CNR_AUTO_DEFAULT.withoutEvidence_db).describe('limit of an instrument with too few samples for an estimate, dB; default -27 (common practice for pulsed lidars)'),
  })
  .strict();

const isoOrUnix = z.union([z.string().min(1), finite()]);

const windowSchema = z.union([
  z
    .object({
      kind: z.literal('fixed'),
      length_s: finite().positive().describe('window length, s'),
      step_s: finite()
        .positive()
        .optional()
        .describe('start-to-start spacing, s; default: the length (contiguous windows); smaller overlaps, larger leaves gaps'),
      anchor: z
        .string()
        .min(1)
        .default('first-sample')
        .describe('where one window starts: "first-sample" (the earliest sample of the run; default), "epoch" (multiples of the length since 1970-01-01 UTC) or an ISO 8601 UTC time'),
    })
    .strict()
    .describe('windows of fixed length'),
  z
    .object({
      kind: z.literal('list'),
      file: z.string().min(1).optional().describe('CSV file with columns start, end and optional label (ISO 8601 UTC or Unix seconds), relative to the campaign file'),
      columns: z.record(z.string(), z.string()).default({}).describe('map of start/end/label to the file headers'),
      items: z
        .array(z.object({ start: isoOrUnix, end: isoOrUnix, label: z.string().optional() }).strict())
        .optional()
        .describe('windows given inline: [{start, end, label}]'),
      allowOverlap: z.boolean().default(false).describe('allow listed windows to overlap; default false (an overlap is an error)'),
    })
    .strict()
    .describe('explicit windows, e.g. from the experiment log'),
  z
    .object({
      kind: z.literal('segments'),
      levels_deg: z.array(finite()).min(1).describe('yaw-offset levels of the experiment (nacelle minus wind direction), degrees'),
      tolerance_deg: finite().positive().default(2).describe('a series row belongs to a level within this, degrees; default 2'),
      minDuration_s: finite().min(0).default(300).describe('shortest steady span kept, s; default 300'),
      maxGap_s: finite()
        .positive()
        .optional()
        .describe('series rows further apart leave a gap, s; default: 2.5 times the median interval between the series rows, at least 60 s (one missing row or a jittering clock is no gap, two missing rows are)'),
      settle_s: finite().min(0).default(0).describe('excluded at the start of each span while the wake adjusts, s; default 0 (set it to the travel time to the farthest plane)'),
      windSector_deg: z
        .object({ from: finite(), to: finite() })
        .strict()
        .optional()
        .describe('keep rows whose wind direction lies clockwise from "from" to "to", degrees'),
      power_kw: z.object({ min: finite().optional(), max: finite().optional() }).strict().optional().describe('keep rows whose power lies in [min, max], kW'),
      subWindow_s: finite().positive().optional().describe('cut each span into windows of this length, s'),
      turbine: z.string().min(1).optional().describe('id of the turbine whose series gives the state; default: the first turbine with a series other than power.reference'),
    })
    .strict()
    .describe('spans of steady turbine state from the turbine series'),
  z.object({ kind: z.literal('record') }).strict().describe('one window over the whole record'),
]);

const conditionsSchema = z
  .object({
    bins: z
      .array(
        z
          .object({
            variable: z
              .string()
              .min(1)
              .describe('hub_speed_ms, wind_direction_deg, turbulence_intensity, yaw_offset_deg, or <series>.<column> with series turbine, inflow or direction'),
            edges: z.array(finite()).min(2).describe('bin edges, ascending; a window belongs to [edge_i, edge_i+1); angles (_deg) count modulo 360, so a wind-direction sector may cross north ([-10, 0, 10]), within one turn'),
          })
          .strict(),
      )
      .min(1)
      .describe('one entry per variable; a condition bin is one interval of each'),
    minWindows: z.number().int().min(1).default(1).describe('retrieve an ensemble only for bins with at least this many windows; default 1'),
  })
  .strict();

const seriesFile = z
  .object({
    file: z.string().min(1).describe('CSV file relative to the campaign file'),
    columns: z.record(z.string(), z.string()).default({}).describe('map of our column name to the file header'),
  })
  .strict();

const directionUncertainty = () =>
  finite().min(0).max(45).default(0).describe('standard uncertainty of the direction source itself (e.g. a vane\'s alignment), degrees, for the uncertainty budget\'s direction term; added in quadrature to the scatter of a series within the window; default 0');
const windDirectionSchema = z.union([
  z.object({ kind: z.literal('fixed'), deg: finite().min(0).max(360).describe('wind direction (from), degrees'), uncertainty_deg: directionUncertainty() }).strict(),
  seriesFile.extend({ kind: z.literal('series'), uncertainty_deg: directionUncertainty() }).describe('time series with columns time, direction_deg (vector-averaged per window)'),
]);

const thrustSchema = z.union([
  finite().min(0).max(1.2),
  z.array(z.tuple([finite().min(0), finite().min(0).max(1.2)])).min(2).describe('curve of [wind speed m/s, Ct]'),
]);

const terrainSchema = z
  .object({
    file: z.string().min(1).describe('terrain raster relative to the campaign file: a GeoTIFF (.tif, .tiff) or an XYZ grid (CSV with columns x, y, z on a regular grid)'),
    format: z.enum(['geotiff', 'xyz']).optional().describe('file format; default: from the file name (.tif/.tiff GeoTIFF, otherwise XYZ)'),
    crs: z
      .string()
      .min(1)
      .optional()
      .describe('coordinate system of the raster: "site" (east, north, up of the site frame), "EPSG:4326" (longitude, latitude) or "EPSG:326zz"/"EPSG:327zz" (UTM zone zz north/south); the latter need site.origin_wgs84. Default: the GeoTIFF\'s own keys; for XYZ "site"'),
    columns: z.record(z.string(), z.string()).default({}).describe('XYZ grid: map of x, y, z to the file headers'),
    heightOffset_m: finite().default(0).describe('added to every raster height (vertical datum shift), metres; default 0'),
  })
  .strict();

export const powerSchema = z
  .object({
    reference: z.string().min(1).optional().describe('id of the reference turbine (unwaked, or the upstream one); default: the most upstream turbine for the mean wind direction'),
    turbines: z.array(z.string().min(1)).optional().describe('ids of the downstream turbines to analyse; default: every turbine but the reference'),
    directionEdges_deg: z.array(finite()).min(2).optional().describe('wind-direction bin edges, degrees, ascending; default: 10-degree bins spanning the windows'),
    speedEdges_ms: z.array(finite()).min(2).optional().describe('wind-speed bin edges, m/s, ascending; default: 2 m/s bins spanning the windows'),
    baselineTolerance_deg: finite().min(0).default(2).describe('a window counts as without yaw offset when its level (or mean yaw offset of the steered turbine) is within this of zero, degrees; default 2'),
    minAvailability: finite().min(0).max(1).default(0.9).describe('a window counts for a turbine only when this share of its rows reports status available with power, 0..1; default 0.9'),
    availableStatus: z.array(finite()).default([1]).describe('status values that mean available (status column of the turbine series); default [1]'),
    maxGap_s: finite().positive().default(120).describe('power rows further apart than this inside a window flag the window (gap), s; default 120'),
    minWindowsPerState: z.number().int().min(1).default(2).describe('windows needed in a bin with and without yaw offset for its gain to count; default 2'),
    replicates: z.number().int().min(100).max(100000).default(2000).describe('bootstrap replicates; default 2000'),
    confidence: finite().gt(0).lt(1).default(0.95).describe('confidence level of the bootstrap intervals; default 0.95'),
    seed: z.number().int().default(1).describe('seed of the bootstrap resampling; default 1'),
  })
  .strict();

const turbineSchema = z
  .object({
    id: idString().default('turbine'),
    position_m: vec3.describe('tower base east, north, up in the site frame, metres'),
    hubHeight_m: finite().positive().describe('hub height above the tower base, metres'),
    rotorDiameter_m: finite().positive().describe('rotor diameter, metres'),
    thrustCoefficient: thrustSchema.default(0.8).describe('thrust coefficient, a value or a curve against wind speed; default 0.8'),
    series: seriesFile
      .optional()
      .describe('turbine time series with columns time, yaw_deg (nacelle direction), optional wind_direction_deg, power_kw, wind_speed_ms (nacelle anemometer) and status'),
  })
  .strict();

/** Not a Windows device name (any case, with or without an extension); no regex flag, so the JSON schema keeps it. */
const WINDOWS_DEVICE = new RegExp(`^(?!(?:${['CON', 'PRN', 'AUX', 'NUL', 'COM[1-9]', 'LPT[1-9]'].map((w) => w.replace(/[A-Z]/g, (ch) => `[${ch}${ch.toLowerCase()}]`)).join('|')})(?:\\.|$))`);

export const campaignSchema = z
  .object({
    name: z
      .string()
      .max(100, 'at most 100 characters (used as the output folder name)')
      .regex(/^[A-Za-z0-9_-][A-Za-z0-9_.-]*$/, 'letters, digits, "_", "." and "-" only, not starting with "." (used as the output folder name)')
      // Windows drops a final dot (so "x." is the folder "x") and opens a device for these names, with any extension.
      .regex(/[^.]$/, 'not ending with "." (Windows drops it: another folder) (used as the output folder name)')
      .regex(WINDOWS_DEVICE, 'not a device name Windows reserves (CON, PRN, AUX, NUL, COM1-9, LPT1-9, with or without an extension) (used as the output folder name)')
      .describe('campaign name; the output folder is <output.dir>/<name>'),
    description: z.string().default(''),
    site: z
      .object({
        origin_wgs84: z
          .object({ lat_deg: finite().min(-90).max(90), lon_deg: finite().min(-180).max(180), alt_m: finite() })
          .strict()
          .optional()
          .describe('WGS84 position of the site-frame origin; needed for instruments given in latitude/longitude'),
        groundLevel_m: finite().default(0).describe('ground height in the site frame (flat terrain), metres; default 0'),
        terrain: terrainSchema.optional().describe('a terrain model (ground height under every sample and beam); default: flat ground at groundLevel_m'),
        earthCurvature: z.boolean().default(false).describe('correct beam heights for the Earth curvature (ranges of kilometres); default false'),
      })
      .strict()
      .default({ groundLevel_m: 0, earthCurvature: false }),
    turbine: turbineSchema
      .optional()
      .describe('a single turbine (kept for campaigns with one); it becomes the first turbine of the list'),
    turbines: z
      .array(turbineSchema)
      .optional()
      .describe('the turbines in view (a row, a farm): each with its own position, size, thrust curve and series; listed after `turbine` when both are given'),
    instruments: z.array(instrumentSchema).min(1),
    planes: z.array(planeSchema).default([]).describe('measurement planes of the plane scanners (at least one when an instrument has role plane)'),
    qc: z
      .object({
        cnr_db: z
          .object({
            min: z
              .union([finite(), z.literal('auto')])
              .default('auto')
              .describe('samples below are rejected as noise, dB, or "auto": estimated per instrument from the data before the run (src/qc/cnrLimit.ts: where the share of samples inconsistent with their neighbours grows as the signal weakens); default auto. A number is one fixed limit for every instrument (-27 is common practice for pulsed lidars)'),
            max: finite().default(5).describe('samples above are rejected as hard-target returns, dB; default 5'),
            auto: cnrAutoSchema.default(CNR_AUTO_DEFAULT).describe('settings of the estimated limit (min: auto)'),
          })
          .strict()
          .default({ min: 'auto', max: 5, auto: CNR_AUTO_DEFAULT }),
        radialVelocityLimit_ms: finite().positive().max(64).default(35).describe('|radial velocity| above is rejected, m/s (at most 64); default 35'),
        groundClearance_m: finite().min(0).default(2).describe('measurement points lower than this above ground are rejected, metres; default 2'),
        dropDuplicates: z
          .boolean()
          .default(false)
          .describe('reject rows repeating an earlier row of the same instrument (time, angles and range) as "duplicate"; default false (kept, with a warning)'),
        timeOrderTolerance_s: finite()
          .min(0)
          .default(1)
          .describe('time steps backward within a file up to this are not reported as out of order, s; default 1'),
        robust: z
          .object({
            enabled: z.boolean().default(true),
            k: finite().positive().default(3.5).describe('reject |v - median| > k * 1.4826 * MAD per instrument, cell and window; default 3.5'),
            minSamples: z.number().int().min(3).default(5).describe('apply only where a group has at least this many samples; default 5'),
          })
          .strict()
          .default({ enabled: true, k: 3.5, minSamples: 5 }),
      })
      .strict()
      .default({
        cnr_db: { min: 'auto', max: 5, auto: CNR_AUTO_DEFAULT },
        radialVelocityLimit_ms: 35,
        groundClearance_m: 2,
        dropDuplicates: false,
        timeOrderTolerance_s: 1,
        robust: { enabled: true, k: 3.5, minSamples: 5 },
      }),
    windows: windowSchema
      .default({ kind: 'fixed', length_s: 600, anchor: 'first-sample' })
      .describe('averaging windows; default fixed 600 s from the first sample'),
    conditions: conditionsSchema
      .optional()
      .describe('condition bins: windows with the same condition are pooled into one ensemble field per plane'),
    windDirection: windDirectionSchema.describe('wind-direction source defining the rotor frame'),
    retrieval: z
      .object({
        maxAmplification: finite().min(1).default(3).describe('mask a component whose error amplification exceeds this; default 3'),
        minSamplesPerInstrument: z.number().int().min(1).default(3).describe('an instrument counts in a cell with at least this many samples; default 3'),
        twoInstrumentAssumption: z
          .enum(['w-zero', 'none'])
          .default('w-zero')
          .describe('with two instruments in a cell: w-zero solves u, v assuming w = 0 (stated in the output); none masks the cell; default w-zero'),
      })
      .strict()
      .default({ maxAmplification: 3, minSamplesPerInstrument: 3, twoInstrumentAssumption: 'w-zero' }),
    uncertainty: z
      .object({
        budget: z.boolean().default(true).describe('compute the per-cell uncertainty budget and turbulence statistics; default true'),
        maxCombined_ms: finite().positive().optional().describe('mask a component whose combined standard uncertainty exceeds this, m/s; default: no mask'),
      })
      .strict()
      .default({ budget: true })
      .describe('the uncertainty budget (README: Uncertainty)'),
    inflow: z
      .union([
        z.object({ kind: z.literal('plane'), law: z.enum(['power', 'log']).default('power') }).strict().describe('fit the undisturbed cells of each plane'),
        z.object({ kind: z.literal('fixed'), speed_ms: finite().positive(), height_m: finite().positive(), law: z.enum(['power', 'log']).default('power'), alpha: finite().default(0.2), z0_m: finite().positive().default(0.03) }).strict(),
        seriesFile.extend({ kind: z.literal('series') }).describe('reference series with columns time, height_m, speed_ms, direction_deg; the speed of each row is projected on the window direction (speed cos(direction - window direction)) before the per-height means and a power-law fit'),
        profileInflowSchema,
      ])
      .default({ kind: 'plane', law: 'power' })
      .describe('inflow reference for the deficit; default: fit the plane itself'),
    wake: z
      .object({
        yawBin_deg: finite().positive().default(5).describe('width of yaw-offset bins for wake steering, degrees; default 5'),
        turbulenceIntensity: finite().min(0).default(0.1).describe('ambient turbulence intensity for the yawed-wake model; default 0.1'),
      })
      .strict()
      .default({ yawBin_deg: 5, turbulenceIntensity: 0.1 }),
    output: z
      .object({
        dir: z.string().min(1).default('output').describe('output root, relative to the campaign file\'s folder (like the data files); results go to <dir>/<name>; default "output"'),
        writeRejected: z.boolean().default(true).describe('write rejected rows with file, line and reason; default true'),
        images: z.boolean().default(true).describe('render images and the report; default true'),
        figures: figuresSchema.default(FIGURES_DEFAULT).describe('which figures to draw and on which scales (see src/campaign/figures.ts)'),
        netcdf: z.boolean().default(true).describe('also write the fields and wake tables as NetCDF-4/CF files; default true'),
      })
      .strict()
      .default({ dir: 'output', writeRejected: true, images: true, figures: FIGURES_DEFAULT, netcdf: true }),
    simulation: z
      .record(z.string(), z.unknown())
      .optional()
      .describe('settings of the built-in simulator (demo scenarios only)'),
    power: powerSchema
      .optional()
      .describe('power gain of wake steering from the turbines\' series (downstream power over a reference, with and without yaw offset); default: analysed when two or more turbines have power series'),
    plan: planSchema.optional().describe('campaign planner settings (trust maps, pointing tables, layout search); defaults apply when absent'),
  })
  .strict();

export type CampaignInput = z.input<typeof campaignSchema>;
export type CampaignParsed = z.output<typeof campaignSchema>;
export type ColumnMap = z.output<typeof columnMapSchema>;
