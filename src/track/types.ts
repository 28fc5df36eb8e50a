/**
 * Single-instrument wake tracking results: per tracker, window, scan (or the whole window) and downstream bin, the
 * line-of-sight deficit profile across the wake and its fitted centre and width, with the bias the assumed flow
 * direction may cause. Rotor frame (x downstream, y to the left looking downstream, z up), metres; deficit
 * dimensionless (1 - apparent speed / free stream). NaN where a value could not be formed; flag and reason say why.
 */
export type TrackFlag =
  | 'ok'
  /** Fewer usable across-wake bins than the fit needs (5). */
  | 'too_few_bins'
  /** No free-stream speed (no inflow reference and no bins outside the wake). */
  | 'no_free_stream'
  /** Peak deficit below the threshold: no wake seen. */
  | 'no_wake'
  /** Fitted centre outside the bins or within one bin of their edge. */
  | 'off_edge'
  /** The Gaussian fit did not converge or gave a non-positive width. */
  | 'not_converged';

export interface TrackPoint {
  instrumentId: string;
  window: { index: number; start_s: number; end_s: number; kind?: string; label?: string };
  /** Scan number in the window, or -1 for all scans of the window pooled. */
  scan: number;
  x_m: number;
  x_D: number;
  /** 'y' (horizontal sector) or 'z' (vertical sector): the across-wake coordinate of centre and width. */
  axis: 'y' | 'z';
  /** Free-stream speed used, m/s, and where it came from. */
  freeStream_ms: number;
  freeStreamSource: string;
  amplitude: number;
  centre_m: number;
  scentre_m: number;
  width_m: number;
  swidth_m: number;
  /** Deficit-weighted centroid of the bins above half the peak (shape-independent centre), metres. */
  centroid_m: number;
  r2: number;
  bins: number;
  samples: number;
  /** Largest change of centre and width when the assumed flow direction is moved by +/- its uncertainty, metres. */
  directionBiasCentre_m: number;
  directionBiasWidth_m: number;
  flag: TrackFlag;
  reason: string;
  /** The across-wake profile: bin centres, deficit and its standard uncertainty. */
  profile: { c_m: number[]; deficit: number[]; sdeficit: number[] };
}
