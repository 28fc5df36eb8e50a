/** Angle helpers shared by every stage (degrees). */

/** Wraps an angle in degrees to [-180, 180). */
export function wrapDeg180(a: number): number {
  return (((a + 180) % 360) + 360) % 360 - 180;
}

/** Wraps an angle in degrees to [0, 360). */
export function wrapDeg360(a: number): number {
  return ((a % 360) + 360) % 360;
}
