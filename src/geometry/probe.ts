/**
 * Probe volumes: how a lidar weights the air along its beam around the nominal measurement point.
 *
 * Continuous-wave (focused) lidar. The weighting along the beam is a Lorentzian about the focus distance R,
 *   phi(F) = (1/pi) Gamma / (Gamma^2 + (F - R)^2),  Gamma = lambda R^2 / (pi a^2),
 * a the 1/e^2 beam radius at the lens, lambda the wavelength. Gamma is the half width at half maximum, so the probe
 * length (FWHM) is 2 Gamma; it grows with the square of the focus distance. Valid for R << z_L = pi a^2 / lambda
 * (the collimated beam's Rayleigh range): the exact Gaussian-beam waist carries a factor 1 / (1 + (R / z_L)^2), so
 * at R = 0.1 z_L the formula is about 1 % long. Sonnenschein & Horrigan (1971), Applied Optics 10(7) (from memory).
 *
 * Pulsed lidar. The weighting is a unit-area Gaussian pulse convolved with the range gate,
 *   phi(s) = [erf((s + dp/2) / r_p) - erf((s - dp/2) / r_p)] / (2 dp),  r_p = c tau / (4 sqrt(ln 2)),
 * tau the pulse intensity FWHM (s), dp the gate length (m), s the distance from the gate centre along the beam (m);
 * it does not depend on range. Banakh & Smalikho (1997), Coherent Doppler Wind Lidars in a Turbulent Atmosphere
 * (from memory). Its FWHM has no closed form and is found here by bisection.
 *
 * Units: metres, seconds; phi in 1/m.
 */
import type { Instrument } from '../campaign/types.ts';
import erf from '@stdlib/math-base-special-erf';

/** Speed of light in vacuum, m/s (exact, SI definition). */
export const SPEED_OF_LIGHT = 299_792_458;

/** Lorentzian half width Gamma (m) of a continuous-wave lidar focused at R (m). */
export function cwHalfWidth(focus_m: number, wavelength_m: number, apertureRadius_m: number): number {
  return (wavelength_m * focus_m * focus_m) / (Math.PI * apertureRadius_m * apertureRadius_m);
}

/** The collimated beam's Rayleigh range pi a^2 / lambda (m); the CW formula needs R much smaller. */
export function cwRayleighRange(wavelength_m: number, apertureRadius_m: number): number {
  return (Math.PI * apertureRadius_m * apertureRadius_m) / wavelength_m;
}

/** CW weighting phi(F) (1/m) at distance F along the beam for focus R. */
export function cwWeight(F_m: number, focus_m: number, wavelength_m: number, apertureRadius_m: number): number {
  const g = cwHalfWidth(focus_m, wavelength_m, apertureRadius_m);
  const d = F_m - focus_m;
  return g / (Math.PI * (g * g + d * d));
}

/** Pulse width parameter r_p = c tau / (4 sqrt(ln 2)) (m) for pulse intensity FWHM tau (s). */
export function pulseWidthParameter(pulseFwhm_s: number): number {
  return (SPEED_OF_LIGHT * pulseFwhm_s) / (4 * Math.sqrt(Math.LN2));
}

/** Pulsed weighting phi(s) (1/m) at distance s (m) from the gate centre. */
export function pulsedWeight(s_m: number, pulseFwhm_s: number, gateLength_m: number): number {
  const rp = pulseWidthParameter(pulseFwhm_s);
  const h = gateLength_m / 2;
  return (erf((s_m + h) / rp) - erf((s_m - h) / rp)) / (2 * gateLength_m);
}

/** FWHM (m) of the pulsed weighting (symmetric and unimodal), by bisection to 1e-9 m. */
export function pulsedFwhm(pulseFwhm_s: number, gateLength_m: number): number {
  const half = pulsedWeight(0, pulseFwhm_s, gateLength_m) / 2;
  let lo = 0;
  let hi = gateLength_m + 4 * pulseWidthParameter(pulseFwhm_s); // phi(hi) is far below half its peak
  while (hi - lo > 1e-9) {
    const mid = (lo + hi) / 2;
    if (pulsedWeight(mid, pulseFwhm_s, gateLength_m) > half) lo = mid;
    else hi = mid;
  }
  return lo + hi; // 2 * (lo + hi) / 2
}

export interface ProbeLength {
  /** Probe length along the beam (FWHM of the weighting), metres. */
  length_m: number;
  /** False when a CW focus lies beyond the validity limit of the Lorentzian formula. */
  valid: boolean;
}

/**
 * Probe length (FWHM) of an instrument measuring at range R (m). `cwValidityFraction` (default 0.1): the CW formula
 * is flagged invalid beyond this fraction of pi a^2 / lambda.
 */
export function probeLength(ins: Pick<Instrument, 'kind' | 'cw' | 'pulsed'>, range_m: number, cwValidityFraction = 0.1): ProbeLength {
  if (ins.kind === 'cw') {
    const { wavelength_m, apertureRadius_m } = ins.cw;
    return {
      length_m: 2 * cwHalfWidth(range_m, wavelength_m, apertureRadius_m),
      valid: range_m <= cwValidityFraction * cwRayleighRange(wavelength_m, apertureRadius_m),
    };
  }
  return { length_m: pulsedFwhm(ins.pulsed.pulseFwhm_ns * 1e-9, ins.pulsed.gateLength_m), valid: true };
}
