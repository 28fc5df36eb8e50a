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

/** 10^k for k = 0 .. 22, each exact as a double. */
const POW10 = Array.from({ length: 23 }, (_, k) => 10 ** k);
/** Strings of k zeros, k = 0 .. 22. */
const ZEROS = Array.from({ length: 23 }, (_, k) => '0'.repeat(k));

/**
 * The fast paths below give the same text as the plain definitions (toFixed, toPrecision, String of a number; kept
 * beside each as the fallback) without their string round trips: a value rounded to a decimal place or to p
 * significant digits is an integer a times 10^-d, written from a's digits. Exact because a has at most 15 digits:
 * the double nearest a * 10^-d then prints (shortest form, ECMAScript Number::toString) as exactly those digits,
 * and toFixed's integer is a itself (test/records-precision-fast.test.ts compares both over many values). Where a
 * rounding could be decided differently by the one floating-point multiplication (a scaled value within 1e-6 of a
 * tie) or the text would be exponential, the plain definition is used.
 */

/** a (integer, 0 <= a < 2^53) times 10^-d (0 <= d <= 22) as text: trailing fractional zeros dropped when `strip`. */
function fixedText(a: number, d: number, strip: boolean): string {
  if (d === 0) return String(a);
  const P = POW10[d];
  const ip = Math.floor(a / P);
  let fp = a - ip * P;
  if (fp === 0) return strip ? String(ip) : String(ip) + '.' + ZEROS[d];
  if (strip) while (fp % 10 === 0) { fp /= 10; d--; }
  const fs = String(fp);
  return String(ip) + '.' + ZEROS[d - fs.length] + fs;
}

/** Scratch of roundSignificant: the integer of p digits and the decimal exponent of its leading digit. */
let sigN = 0, sigE = 0;

/**
 * x > 0 (finite) rounded to p <= 8 significant digits as toPrecision rounds it (ties to the larger): sets sigN (p
 * digits) and sigE (x ~ sigN * 10^(sigE - p + 1)); false when the rounding is too close to call in floating point
 * (the scaled value below 10^8 is within 1e-8 of exact, so 1e-6 from a tie decides it) or out of the exactly
 * scaled range: the caller then uses toPrecision.
 */
/** The bits of a double (roundSignificant reads its binary exponent). */
const bitsF = new Float64Array(1), bitsI = new Int32Array(bitsF.buffer);
const HI = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0; // high word index (little-endian: 1)

function roundSignificant(x: number, p: number): boolean {
  // floor(log10 x) from the binary exponent b (2^b <= x < 2^(b+1)): floor(b log10 2) is it or one less (the interval
  // spans 0.30103 decades), which the range check below corrects; subnormals go the plain way.
  bitsF[0] = x;
  const b = ((bitsI[HI] >>> 20) & 0x7ff) - 1023;
  if (b === -1023) return false;
  let e = Math.floor(b * 0.30102999566398120);
  let k = p - 1 - e;
  if (k > 22 || k < -22) return false;
  let y = k >= 0 ? x * POW10[k] : x / POW10[-k];
  // log10 may be one off next to a power of ten: bring y into [10^(p-1), 10^p).
  if (y >= POW10[p]) { e++; k--; if (k < -22) return false; y = k >= 0 ? x * POW10[k] : x / POW10[-k]; }
  else if (y < POW10[p - 1]) { e--; k++; if (k > 22) return false; y = k >= 0 ? x * POW10[k] : x / POW10[-k]; }
  if (!(y >= POW10[p - 1] && y < POW10[p])) return false;
  const f = y - Math.floor(y);
  if (Math.abs(f - 0.5) < 1e-6) return false; // near a tie: the scaling's rounding could decide it
  let n = Math.round(y);
  if (n === POW10[p]) { n = POW10[p - 1]; e++; }
  sigN = n; sigE = e;
  return true;
}

/** Decimal places the rule gives a value whose standard uncertainty is `s` (can be negative: tens, hundreds). */
export function decimalsForUncertainty(s: number, finest: number): number {
  if (!(s > 0) || !Number.isFinite(s)) return finest;
  // s to two significant digits is sigN * 10^(sigE - 1); strictly between two powers of ten unless sigN is 10, so
  // floor(log10) of it is sigE (the power of ten itself: the plain definition below).
  if (roundSignificant(s, 2) && sigN !== 10) return Math.min(1 - sigE, finest);
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
  const m = Math.round(v * 10 ** d);
  const r = m / 10 ** d;
  if (r === 0) return keep ? (0).toFixed(d) : '0';
  if (d <= 6 && m < 1e15 && m > -1e15) {
    // r = m * 10^-d, |m| below 10^15: String(r) and r.toFixed(d) are m's digits (see fixedText); r >= 1e-6 in size
    // prints without exponent.
    return m < 0 ? '-' + fixedText(-m, d, !keep) : fixedText(m, d, !keep);
  }
  return keep ? r.toFixed(d) : String(r);
}

/** `v` with `n` significant digits; shortest form unless `keep` (then trailing zeros state the digits). */
export function formatSignificant(v: number, n: number, keep: boolean): string {
  if (!Number.isFinite(v)) return '';
  if (v === 0) return '0';
  const x = v < 0 ? -v : v;
  if (n >= 1 && n <= 8 && roundSignificant(x, n)) {
    // The value written is sigN * 10^(sigE - n + 1). toPrecision writes it without exponent for -6 <= sigE < n,
    // String(Number(...)) for -6 <= sigE < 21 (15 here: integers stay below 2^53).
    const e = sigE;
    if (e >= -6 && (keep ? e < n : e < 15)) {
      const q = e - n + 1;
      const t = q >= 0 ? String(sigN * POW10[q]) : fixedText(sigN, -q, !keep);
      return v < 0 ? '-' + t : t;
    }
  }
  const t = v.toPrecision(n);
  return keep ? t : String(Number(t));
}
