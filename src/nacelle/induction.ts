/**
 * Upstream induction on the rotor axis, vortex-sheet (actuator-disc) model: U(x)/U_inf = 1 - a (1 - xi / sqrt(1 +
 * xi^2)), xi = upstream distance / rotor radius, a the axial induction factor at the disc [from memory; the model as
 * used by Medici, Ivanell, Dahlberg & Alfredsson 2011, Wind Energy 14, 691-697]. With a from one-dimensional momentum
 * theory, Ct = 4 a (1 - a), so a = (1 - sqrt(1 - Ct)) / 2 for Ct <= 1 (Burton et al., Wind Energy Handbook, section
 * 3.2 [from memory]). Assumptions: steady, axisymmetric, no yaw, on the axis; off-axis and yawed induction are
 * smaller at the same distance, so the correction is an upper bound there.
 */

/** Axial induction factor from the thrust coefficient (momentum theory; Ct above 1 is clipped to 1). */
export function inductionFactor(ct: number): number {
  const c = Math.min(1, Math.max(0, ct));
  return (1 - Math.sqrt(1 - c)) / 2;
}

/** U(x)/U_inf on the axis at distance x_m upstream of a rotor of radius R_m with induction factor a. */
export function inductionRatio(a: number, x_m: number, R_m: number): number {
  const xi = x_m / R_m;
  return 1 - a * (1 - xi / Math.sqrt(1 + xi * xi));
}
