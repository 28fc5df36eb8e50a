/**
 * The campaign after validation and defaulting: every path absolute, every position in the site frame (east, north,
 * up, metres), every plane in metres. This is what the rest of wakeplane consumes.
 */
import type { CampaignParsed, ColumnMap } from './schema.ts';
import type { NacelleSettings, ProfileSettings, TrackSettings } from './geometrySchema.ts';

export type Vec3 = [number, number, number];

export interface Calibration {
  /** Heading offset, degrees clockwise: true azimuth = reported azimuth + heading (before pitch and roll). */
  heading_deg: number;
  /** Pitch, degrees: rotation about the instrument east axis; positive tilts the instrument's north axis up. */
  pitch_deg: number;
  /** Roll, degrees: rotation about the instrument north axis; positive tilts the instrument's east axis up. */
  roll_deg: number;
  /** Added to every reported range, metres. */
  rangeOffset_m: number;
}

export interface Instrument {
  id: string;
  /** Index in campaign.instruments, also the value stored in sample batches. */
  index: number;
  /** Site-frame beam origin, metres. */
  position: Vec3;
  kind: 'pulsed' | 'cw';
  pulsed: { pulseFwhm_ns: number; gateLength_m: number };
  cw: { wavelength_m: number; apertureRadius_m: number };
  calibration: Calibration;
  /** Standard uncertainties of the pointing (degrees) and position (metres, each axis) for the uncertainty budget. */
  pointingUncertainty: { azimuth_deg: number; elevation_deg: number; position_m: number };
  /** Absolute paths of the data files. */
  files: string[];
  columns: ColumnMap;
  radialVelocitySign: 'away' | 'toward';
  /** This instrument's lower CNR limit (dB, or 'auto'), overriding qc.cnr_db.min; absent: qc.cnr_db.min. */
  cnrMin_db?: number | 'auto';
  scan: { dwell_s: number; slewRate_degs: number };
  /** What the instrument does (campaign key role); plane scanners feed the planes. */
  role: 'plane' | 'profiler' | 'nacelle' | 'tracker';
  /** Frame of the reported beam angles: site, or nacelle (turned by the nacelle direction at each sample). */
  beamFrame: 'site' | 'nacelle';
  /** beamFrame nacelle: beam origin in the nacelle frame [forward, left, up] from the tower base, metres. */
  mount: Vec3;
  /** Inclinometer series (time, tilt_deg, roll_deg) of a nacelle-mounted instrument. */
  orientationSeries?: SeriesRef;
  profile?: ProfileSettings;
  nacelle?: NacelleSettings;
  track?: TrackSettings;
}

export interface PlaneSpec {
  id: string;
  index: number;
  orientation: 'cross' | 'horizontal';
  /** Cross plane: downstream distance from the rotor, metres. */
  x_m: number;
  /** Horizontal plane: height above ground, metres. */
  z_m: number;
  /** Lateral extent, metres (rotor frame y). */
  y: { min: number; max: number };
  /** Cross plane: vertical extent (height above ground); horizontal plane: downstream extent (x). */
  second: { min: number; max: number };
  /** Cell size [along y, along the second axis], metres. */
  cell_m: [number, number];
  thickness_m: number;
  /**
   * Index of the turbine whose frame the plane belongs to (campaign.turbines), or -1 for the site frame. Always set
   * by the campaign loader; planes made in code without it belong to the first turbine.
   */
  turbineIndex?: number;
  /** Origin of the plane's frame in the site frame, metres: the turbine's tower base, or [0, 0, 0] for the site frame. */
  origin?: Vec3;
  /** What heights are measured from: the frame origin (default), the terrain under each point, or the site-frame up axis. */
  heights?: 'base' | 'terrain' | 'site';
}

export interface SeriesRef {
  file: string;
  columns: Record<string, string>;
}

/** One turbine of the campaign, resolved: every key defaulted, its series path absolute. */
export interface Turbine {
  id: string;
  /** Position in campaign.turbines. */
  index: number;
  /** Tower base in the site frame (east, north, up), metres. */
  position: Vec3;
  hubHeight_m: number;
  rotorDiameter_m: number;
  thrustCoefficient: number | [number, number][];
  series?: SeriesRef;
}

/** The terrain model's file, resolved (campaign key site.terrain). */
export interface TerrainRef {
  file: string;
  format: 'geotiff' | 'xyz';
  crs?: string;
  columns: Record<string, string>;
  heightOffset_m: number;
}

export type Campaign = Omit<CampaignParsed, 'instruments' | 'planes' | 'turbine' | 'turbines' | 'windDirection' | 'inflow' | 'site'> & {
  /** Absolute path of the campaign file (or '<memory>'). */
  sourceFile: string;
  /** Folder the campaign file sits in; relative paths resolve against it. */
  baseDir: string;
  instruments: Instrument[];
  planes: PlaneSpec[];
  /** Every turbine, in campaign order (the single `turbine` key first). Look turbines up with campaign/turbines.ts. */
  turbines: Turbine[];
  /** The first turbine (campaign.turbines[0]): the frame of planes that name none. Prefer turbineOfPlane(). */
  turbine: Turbine;
  site: Omit<CampaignParsed['site'], 'terrain'> & { terrain?: TerrainRef };
  /** uncertainty_deg: the direction source's own standard uncertainty (type B), degrees; 0 when not given. */
  windDirection: { kind: 'fixed'; deg: number; uncertainty_deg: number } | ({ kind: 'series'; uncertainty_deg: number } & SeriesRef);
  inflow: CampaignParsed['inflow'] extends infer T ? (T extends { kind: 'series' } ? { kind: 'series' } & SeriesRef : T) : never;
};
