/**
 * Beam height over a curved Earth with an effective radius k_e a (4/3 Earth model):
 *   h = sqrt(r^2 + (k_e a)^2 + 2 r k_e a sin theta_e) - k_e a           (Doviak & Zrnic 1993, eq. 2.28b)
 *   s = k_e a asin(r cos theta_e / (k_e a + h))                          (ground distance, same source, eq. 2.28c)
 * h is computed as (r^2 + 2 r k_e a sin theta_e) / (sqrt(...) + k_e a) to avoid cancellation at short range.
 */
export const EARTH_RADIUS_M = 6_371_000;
/** Effective-radius factor; 4/3 is the standard default for radio waves and used for near-infrared lidar too. */
export const EFFECTIVE_RADIUS_FACTOR = 4 / 3;

export function beamHeight(range_m: number, elevation_rad: number, ke = EFFECTIVE_RADIUS_FACTOR, a = EARTH_RADIUS_M): number {
  const R = ke * a;
  const num = range_m * range_m + 2 * range_m * R * Math.sin(elevation_rad);
  return num / (Math.sqrt(range_m * range_m + R * R + 2 * range_m * R * Math.sin(elevation_rad)) + R);
}

/** `height_m` may be passed when beamHeight was already computed for the same beam and range. */
export function groundDistance(
  range_m: number, elevation_rad: number, ke = EFFECTIVE_RADIUS_FACTOR, a = EARTH_RADIUS_M,
  height_m = beamHeight(range_m, elevation_rad, ke, a),
): number {
  const R = ke * a;
  const h = height_m;
  return R * Math.asin((range_m * Math.cos(elevation_rad)) / (R + h));
}
