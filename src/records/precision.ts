/**
 * How many digits a number is written with. The rule, stated once:
 *
 * 1. A value with a standard uncertainty in the same row (`uncertainty`) is rounded to the decimal place of the
 *    second significant digit of that uncertainty, and the uncertainty itself is written with two significant
 *    digits (`significant`, 2, zeros kept): JCGM 100:2008 (GUM) 7.2.6, "it usually suffices to quote u_c ... to at
 *    most two significant digits", the estimate rounded to match. Example: u = 7.123456 m/s with
 *    u_se = 0.0234 m/s is written 7.123 and 0.023. The place never goes below the column's own resolution
 *    (`finest` decimals), and a value whose uncertainty is unknown (empty, zero) is written at that resolution.
 * 2. A value without an uncertainty is written at a stated resolution (`decimals`: rounded to 10^-d of its unit,
 *    shortest form, trailing zeros dropped) or with a stated number of significant digits (`significant`), chosen
 *    per column for what the value can carry (positions to the millimetre, angles to 0.001 degree, ratios to four
 *    significant digits, common practice).
 * 3. Counts and indices are integers; text as it is; times ISO 8601 UTC to the millisecond.
 * NaN and infinities are written empty in CSV (missing), and as the variable's fill value in NetCDF, where values
 * keep their full binary precision (a binary file has no digits to choose; the rule is for text).
 */

export type Precision =
  | { kind: 'decimals'; decimals: number }
  | { kind: 'significant'; digits: number; keepZeros?: boolean }
  | { kind: 'uncertainty'; by: string; finest: number }
  | { kind: 'integer' }
  | { kind: 'text' }
  | { kind: 'time' };

/** Decimal places the rule gives a value whose standard uncertainty is `s` (can be negative: tens, hundreds). */
export function decimalsForUncertainty(s: number, finest: number): number {
  if (!(s > 0) || !Number.isFinite(s)) return finest;
  const s2 = Number(s.toPrecision(2)); // 0.0996 -> 0.10: the place follows the written uncertainty
  const d = 1 - Math.floor(Math.log10(s2));
  return Math.min(d, finest);
}

/** `v` rounded to `d` decimals (d < 0: to tens, hundreds, ...), as text; zeros kept when `keep`. Empty for non-finite. */
export function formatDecimals(v: number, d: number, keep: boolean): string {
  if (!Number.isFinite(v)) return '';
  if (d <= 0) {
    const step = 10 ** -d;
    const r = Math.round(v / step) * step;
    return String(r === 0 ? 0 : r);
  }
  const r = Math.round(v * 10 ** d) / 10 ** d;
  if (r === 0) return keep ? (0).toFixed(d) : '0';
  return keep ? r.toFixed(d) : String(r);
}

/** `v` with `n` significant digits; shortest form unless `keep` (then trailing zeros state the digits). */
export function formatSignificant(v: number, n: number, keep: boolean): string {
  if (!Number.isFinite(v)) return '';
  if (v === 0) return '0';
  const t = v.toPrecision(n);
  return keep ? t : String(Number(t));
}
