/**
 * Why a sample was not used. Every sample read is either accepted (used in a cell of some plane) or counted under
 * exactly one of these reasons, so read = accepted + sum of rejections, per instrument, in every run.
 * Parse-time reasons come from the readers; the others from quality control, geometry and the robust filter.
 */
export const REJECT_REASONS = [
  // reading
  'bad_number', 'missing_field', 'bad_time', 'angle_out_of_range', 'bad_range', 'unknown_instrument',
  // reading NetCDF: a fill value, missing_value, a value outside valid_range, or NaN
  'missing_value',
  // quality control
  'low_cnr', 'hard_target_cnr', 'radial_velocity_limit', 'below_ground', 'out_of_time_order', 'no_wind_direction',
  // terrain: the beam passed below the ground before the point; the point lies outside the terrain model
  'beam_blocked', 'outside_terrain',
  // time: outside every window (gaps between listed windows, turbine-state transitions)
  'outside_windows',
  // geometry
  'outside_planes',
  // single-instrument geometries: no nacelle direction at the sample time (turbine-series gap), nacelle-relative
  // angles outside the forward half (site angles given as nacelle-relative?), and samples outside a profiler's
  // height bins, a nacelle instrument's beams and gates, or a tracker's bins
  'no_nacelle_direction', 'wrong_beam_frame', 'outside_heights', 'outside_beams', 'outside_track',
  // robust filter (median and scaled MAD per instrument, cell and window)
  'outlier',
  // an exact repeat of an earlier row of the same instrument, with qc.dropDuplicates (src/qc/suspicion.ts)
  'duplicate',
] as const;
export type RejectReason = (typeof REJECT_REASONS)[number];
export const REJECT_INDEX: Record<RejectReason, number> = Object.fromEntries(REJECT_REASONS.map((r, i) => [r, i])) as Record<RejectReason, number>;

/** Per-instrument sample accounting. */
export interface SampleAccount {
  read: number;
  accepted: number;
  rejected: Record<RejectReason, number>;
}

export function emptyAccount(): SampleAccount {
  return { read: 0, accepted: 0, rejected: Object.fromEntries(REJECT_REASONS.map((r) => [r, 0])) as Record<RejectReason, number> };
}

/** True when read = accepted + all rejections. */
export function accountBalances(a: SampleAccount): boolean {
  let sum = a.accepted;
  for (const r of REJECT_REASONS) sum += a.rejected[r];
  return sum === a.read;
}
