/**
 * Nacelle-mounted forward-looking instrument results, per window: per range gate the horizontal wind of each beam
 * pair, the shear exponent between an upper and a lower pair (4 beams), and at the chosen upstream distance the hub
 * speed, the shear-corrected hub speed, the induction-corrected free-stream speed and the yaw misalignment.
 * Site frame; speeds m/s; directions = where the wind comes from, degrees clockwise from north; yaw misalignment =
 * nacelle direction minus wind direction, degrees in (-180, 180], positive when the nacelle is turned clockwise
 * (seen from above) from the wind. NaN where a value could not be formed; flag and reason say why.
 */
export type NacelleFlag =
  | 'ok'
  /** No gate with both beams of a pair. */
  | 'no_data'
  /** A beam of a pair has no samples at some gates (those gates, or the shear, are left out). */
  | 'missing_beam'
  /** The turbine series (or the instrument's inclinometer series) has a gap inside the window: samples there had no nacelle direction (or tilt). */
  | 'nacelle_series_gap'
  /** The chosen distance lies outside the gates: the nearest gate is reported. */
  | 'distance_outside_gates';

export interface PairWind {
  /** 'upper', 'lower' or 'hub' (a 2-beam instrument). */
  pair: string;
  height_m: number;
  u_ms: number;
  v_ms: number;
  speed_ms: number;
  sspeed_ms: number;
  direction_deg: number;
  sdirection_deg: number;
  samples: number;
}

export interface NacelleGate {
  range_m: number;
  /** Mean upstream distance along the nacelle axis of the gate's samples, metres. */
  upstream_m: number;
  pairs: PairWind[];
  /** Power-law shear exponent between the upper and lower pairs (NaN with 2 beams), and its standard uncertainty. */
  alpha: number;
  salpha: number;
  /** Horizontal speed at hub height: the pair's (2 beams), or the mean of the pairs (4 beams), m/s. */
  hubSpeed_ms: number;
  shubSpeed_ms: number;
  /** Height above ground of hubSpeed_ms: the pair's (2 beams) or the mean of the pairs' heights (4 beams), metres. */
  speedHeight_m: number;
  /** 4 beams: V_hub = V_lower (H / z_lower)^alpha, m/s (NaN with 2 beams). */
  hubSpeedShear_ms: number;
  shubSpeedShear_ms: number;
  direction_deg: number;
  sdirection_deg: number;
  ok: boolean;
  note: string;
}

export interface NacelleWindow {
  instrumentId: string;
  window: { index: number; start_s: number; end_s: number; kind?: string; label?: string };
  /** Mean nacelle direction over the window from the turbine series (its rows in the window, else the series interpolated over it), degrees. */
  nacelle_deg: number;
  /** Upstream distance of the reported values, metres and rotor diameters. */
  distance_m: number;
  distance_D: number;
  hubSpeed_ms: number;
  shubSpeed_ms: number;
  /**
   * Height above ground of hubSpeed_ms at the distance, metres: the beam pair's (2 beams: its speed is measured
   * there, not at the hub, and cannot be carried to the hub without a second pair) or the mean of the pairs' (4 beams).
   */
  speedHeight_m: number;
  hubSpeedShear_ms: number;
  shubSpeedShear_ms: number;
  alpha: number;
  salpha: number;
  direction_deg: number;
  sdirection_deg: number;
  /** Nacelle minus wind direction, degrees in (-180, 180]. */
  yawMisalignment_deg: number;
  syawMisalignment_deg: number;
  /** Axial induction factor a = (1 - sqrt(1 - Ct)) / 2 and the on-axis speed ratio U/U_inf at the distance. */
  induction_a: number;
  inductionRatio: number;
  /** Hub speed (shear-corrected when available) divided by the induction ratio: the free-stream estimate, m/s. */
  freeStream_ms: number;
  sfreeStream_ms: number;
  samples: number;
  gates: NacelleGate[];
  flag: NacelleFlag;
  reason: string;
}
