/**
 * Numbers for labels and report tables: a value rounded to its uncertainty, and a quantity glued to its unit.
 *
 * Rounding follows the GUM (JCGM 100:2008, 7.2.6 [from memory]): the uncertainty is quoted with at most two
 * significant digits and the value to the same decimal place. We quote two digits (one more than the minimum) so
 * that rounding the uncertainty changes it by at most 5 %. Numbers use the typographic minus sign; a no-break space
 * (U+00A0) joins a number to its unit and to "±", so that a line break never separates them.
 */

export const NBSP = '\u00a0';
const MINUS = '\u2212';

/** Decimal places that show `u` with `sig` significant digits (negative: round to tens, hundreds, ...). */
export function decimalsForUncertainty(u: number, sig = 2): number {
  if (!(u > 0) || !Number.isFinite(u)) return NaN;
  let d = sig - 1 - Math.floor(Math.log10(u));
  // 0.0996 at two digits is 0.10, which has one digit fewer after rounding: keep the decimals of the rounded value.
  const rounded = roundTo(u, d);
  if (rounded >= 10 ** (sig - d)) d -= 1;
  return d;
}

/** `x` rounded to `d` decimal places (negative d rounds to tens, hundreds, ...). */
export function roundTo(x: number, d: number): number {
  if (d >= 0) return Number(x.toFixed(Math.min(d, 20)));
  const p = 10 ** -d;
  return Math.round(x / p) * p;
}

/** Fixed-point text with a typographic minus; "–" for NaN; no "−0". */
export function fixed(x: number, d: number): string {
  if (!Number.isFinite(x)) return '\u2013';
  const s = roundTo(x, d).toFixed(Math.max(0, Math.min(d, 20)));
  if (/^-0(\.0*)?$/.test(s)) return s.slice(1);
  return s.startsWith('-') ? MINUS + s.slice(1) : s;
}

/** Text with `sig` significant digits (no exponent for magnitudes between 1e-4 and 1e9). */
export function significant(x: number, sig = 3): string {
  if (!Number.isFinite(x)) return '\u2013';
  if (x === 0) return '0';
  const d = Math.max(0, sig - 1 - Math.floor(Math.log10(Math.abs(x))));
  return fixed(x, d);
}

export interface Rounded {
  value: string;
  uncertainty: string;
  /** Decimal places used (NaN when the uncertainty is not usable). */
  decimals: number;
}

/**
 * A value and its uncertainty rounded together: the uncertainty to `sig` significant digits (default 2), the
 * value to the same decimal place. Without a usable uncertainty (NaN, zero, negative) the value is given to
 * `fallbackSig` significant digits and the uncertainty as "–".
 */
export function roundToUncertainty(x: number, u: number, sig = 2, fallbackSig = 3): Rounded {
  const d = decimalsForUncertainty(u, sig);
  if (!Number.isFinite(d)) return { value: significant(x, fallbackSig), uncertainty: '\u2013', decimals: NaN };
  return { value: fixed(x, d), uncertainty: fixed(u, d), decimals: d };
}

/** "12.3 ± 0.4" (no-break spaces), or the value alone when the uncertainty is not usable. */
export function withUncertainty(x: number, u: number, unit = '', sig = 2): string {
  const r = roundToUncertainty(x, u, sig);
  const tail = unit ? unitSuffix(unit) : '';
  if (!Number.isFinite(r.decimals)) return r.value + tail;
  return `${r.value}${NBSP}\u00b1${NBSP}${r.uncertainty}${tail}`;
}

/** A number with its unit, kept on one line: "8.5 m/s", "270°", "12 %". */
export function qty(x: number, unit: string, decimals: number): string {
  return fixed(x, decimals) + unitSuffix(unit);
}

/** The unit as it follows a number: degrees attach directly, other units after a no-break space. */
export function unitSuffix(unit: string): string {
  if (!unit) return '';
  return unit === '\u00b0' ? unit : NBSP + unit;
}
