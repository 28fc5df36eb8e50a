/**
 * Analytical single-wake models (dimensionless deficits 1 - u/U, distances in rotor diameters D).
 *
 * Top-hat (Jensen 1983, "A note on wind generator interaction", Risoe-M-2411; Katic, Hojstrup & Jensen 1986,
 * Proc. EWEC'86 [from memory]): inside the wake radius r_w = r0 + k x,
 *   dU/U = (1 - sqrt(1 - Ct)) / (1 + k x / r0)^2,  r0 = D / 2.
 *
 * Gaussian (Bastankhah & Porte-Agel 2014, Renewable Energy 70, 116-123 [formulas from memory; equation numbers not re-checked]):
 *   dU/U = C(x) exp(-r^2 / (2 sigma^2)),  C = 1 - sqrt(1 - Ct / (8 (sigma/d0)^2)),  sigma/d0 = k* x/d0 + eps,
 *   eps = 0.2 sqrt(beta),  beta = 0.5 (1 + sqrt(1 - Ct)) / sqrt(1 - Ct).
 * C is real only where Ct / (8 (sigma/d0)^2) <= 1 (far wake); NaN before.
 */

export function topHatDeficit(x_D: number, ct: number, k: number): number {
  return (1 - Math.sqrt(1 - ct)) / (1 + 2 * k * x_D) ** 2;
}

/** Top-hat wake radius / D. */
export function topHatRadius_D(x_D: number, k: number): number {
  return 0.5 + k * x_D;
}

export function bpBeta(ct: number): number {
  return (0.5 * (1 + Math.sqrt(1 - ct))) / Math.sqrt(1 - ct);
}

export function bpEpsilon(ct: number): number {
  return 0.2 * Math.sqrt(bpBeta(ct));
}

export function gaussianSigma_D(x_D: number, kStar: number, eps: number): number {
  return kStar * x_D + eps;
}

/** Centreline deficit C for a given sigma/d0 (NaN where the square root is imaginary). */
export function gaussianAmplitude(sigma_D: number, ct: number): number {
  const a = 1 - ct / (8 * sigma_D * sigma_D);
  return a >= 0 ? 1 - Math.sqrt(a) : NaN;
}

/**
 * Wake-growth rate from ambient turbulence intensity, k* = 0.38 I + 0.004 (Niayifar & Porte-Agel 2016,
 * Energies 9, 741, eq. 13 [from memory]); used where no fitted k* is available.
 */
export function kStarFromTurbulence(ti: number): number {
  return 0.38 * ti + 0.004;
}
