/**
 * Profile results: one point per profiler, height bin and window (or condition bin). Site frame: u east, v north,
 * w up (m/s); direction = where the wind comes from, degrees clockwise from north; heights above ground, metres.
 * NaN marks a value that could not be computed; the flag and reason say why.
 */
export type ProfileFlag =
  /** Fit made; the uniform wind explains the ring (R^2 >= minR2). */
  | 'ok'
  /** No sector with enough samples at this height. */
  | 'no_data'
  /** Fewer sectors with data than profile.minSectors: no fit. */
  | 'too_few_azimuths'
  /** VAD: the largest azimuth gap between sectors exceeds maxAzimuthGap_deg (fit kept, poorly conditioned). */
  | 'azimuth_gap'
  /** DBS: a slanted beam (no fit) or the declared vertical beam (fit from the slanted beams) is missing. */
  | 'missing_beam'
  /** The beam directions do not determine u, v, w (singular normal matrix). */
  | 'singular'
  /** Fit made, but R^2 < minR2: the wind is not uniform over the ring (values kept, to be used with care). */
  | 'inhomogeneous';

export interface ProfilePoint {
  instrumentId: string;
  height_m: number;
  /**
   * Mean height above ground of the slanted-beam samples in the fit (those that give u and v; all samples when
   * only a vertical beam has data), metres: the height the fitted horizontal wind belongs to. The bin centre
   * (height_m) only labels the bin; gates rarely sit on it, and a DBS set's vertical beam reaches it from other
   * gates (NaN without samples).
   */
  sampleHeight_m: number;
  /** Mean horizontal distance of the samples from the instrument (the ring radius for a VAD), metres. */
  radius_m: number;
  u_ms: number;
  v_ms: number;
  w_ms: number;
  /** Standard uncertainties, m/s (scatter-based, inflated by sqrt(chi^2/dof) when the residual exceeds the scatter). */
  su_ms: number;
  sv_ms: number;
  sw_ms: number;
  /** Horizontal speed and its standard uncertainty (first-order propagation, GUM), m/s. */
  speed_ms: number;
  sspeed_ms: number;
  /** Wind direction (from) and its standard uncertainty, degrees. */
  direction_deg: number;
  sdirection_deg: number;
  /** Sectors (beams) and kept samples in the fit. */
  sectors: number;
  samples: number;
  /** Sample-weighted RMS residual of the sector means about the uniform-wind fit, m/s. */
  rmse_ms: number;
  /** Share of the sector-mean variance the uniform wind explains (homogeneity check). */
  r2: number;
  /** chi^2 / degrees of freedom of the weighted fit (NaN with no degree of freedom). */
  chi2dof: number;
  /** Largest azimuth gap between slanted sectors with data, degrees. */
  maxGap_deg: number;
  flag: ProfileFlag;
  reason: string;
}

export interface ProfileWindow {
  instrumentId: string;
  window: { index: number; start_s: number; end_s: number; kind?: string; label?: string };
  points: ProfilePoint[];
}
