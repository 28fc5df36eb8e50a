/**
 * Byte-level parsers for the sample reader's fast path: decimal numbers and time stamps read straight from a
 * Buffer, without building strings. Each parser starts at byte `i`, reads no further than `end` (exclusive), stops
 * at the first byte that does not belong to its grammar and returns NaN when the text is not in that grammar; the
 * caller reads where it stopped with `parsedTo()` and checks that a delimiter follows.
 *
 * Decimal exactness: digits accumulate into an integer mantissa m (at most 15 significant digits, so m < 2^53 is
 * exact) and the value is m / 10^k with 10^k exact (k <= 22); IEEE 754 division rounds once, so the result is the
 * correctly rounded double of the decimal text, the same double Number() returns (Clinger 1990, "How to read
 * floating point numbers accurately", PLDI, the "fast path" case). Longer inputs or exponents are left to the
 * caller's slow path (Number()).
 */

/** Exact powers of ten 10^0 .. 10^22 (all exactly representable as doubles). */
export const POW10 = Float64Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));

let stop = 0;

/**
 * NaN read from a Float64Array. Returning the literal NaN beside a computed double makes V8's optimiser merge the
 * two as tagged values, boxing every parsed number into a heap object (measured: ~90 bytes of garbage per row and
 * 25 % slower); a NaN loaded from a typed array keeps the return value an unboxed double.
 */
export const NAN = new Float64Array([NaN]);

/** Index just after the last byte the most recent parse consumed. */
export function parsedTo(): number {
  return stop;
}

/**
 * Plain decimal: optional sign, digits with at most one '.', at least one digit, at most 15 digits in all (leading
 * zeros count). No exponent, no spaces. NaN otherwise (the caller may retry with Number()).
 */
export function parseDecimal(buf: Uint8Array, i: number, end: number): number {
  let neg = false;
  if (i < end) {
    const c = buf[i];
    if (c === 45) { neg = true; i++; }
    else if (c === 43) i++;
  }
  let m = 0;
  const s0 = i;
  while (i < end) {
    const d = buf[i] - 48;
    if (d < 0 || d > 9) break;
    m = m * 10 + d;
    i++;
  }
  let nd = i - s0, fd = 0;
  if (i < end && buf[i] === 46) {
    const f0 = ++i;
    while (i < end) {
      const d = buf[i] - 48;
      if (d < 0 || d > 9) break;
      m = m * 10 + d;
      i++;
    }
    fd = i - f0;
    nd += fd;
  }
  stop = i;
  if (nd === 0 || nd > 15) return NAN[0];
  const v = fd === 0 ? m : m / POW10[fd];
  return neg ? -v : v;
}

/** Cache of the date part of ISO stamps: the ten bytes YYYY-MM-DD last seen and their day start, Unix seconds. */
export interface DayCache {
  bytes: Uint8Array;
  valid: boolean;
  dayStart_s: number;
}

export function createDayCache(): DayCache {
  return { bytes: new Uint8Array(10), valid: false, dayStart_s: 0 };
}

/**
 * Days since 1970-01-01 of a proleptic Gregorian date (Hinnant, "chrono-compatible low-level date algorithms",
 * days_from_civil). Pure integer arithmetic: no two-digit-year surprises as with Date.UTC.
 */
export function daysFromCivil(y: number, m: number, d: number): number {
  y -= m <= 2 ? 1 : 0;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const doy = Math.floor((153 * (m + (m > 2 ? -3 : 9)) + 2) / 5) + d - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

function daysInMonth(y: number, m: number): number {
  if (m === 2) return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0 ? 29 : 28;
  return m === 4 || m === 6 || m === 9 || m === 11 ? 30 : 31;
}

function dig(buf: Uint8Array, i: number): number {
  const d = buf[i] - 48;
  return d >= 0 && d <= 9 ? d : NAN[0];
}

function two(buf: Uint8Array, i: number): number {
  return dig(buf, i) * 10 + dig(buf, i + 1);
}

function dayStart(buf: Uint8Array, i: number, cache: DayCache): number {
  const cb = cache.bytes;
  if (cache.valid) {
    let same = true;
    for (let k = 0; k < 10; k++) {
      if (cb[k] !== buf[i + k]) { same = false; break; }
    }
    if (same) return cache.dayStart_s;
  }
  if (buf[i + 4] !== 45 || buf[i + 7] !== 45) return NAN[0];
  const y = two(buf, i) * 100 + two(buf, i + 2);
  const mo = two(buf, i + 5);
  const d = two(buf, i + 8);
  if (!(mo >= 1 && mo <= 12 && d >= 1 && d <= daysInMonth(y, mo))) return NAN[0]; // also false for NaN
  for (let k = 0; k < 10; k++) cb[k] = buf[i + k];
  cache.valid = true;
  cache.dayStart_s = daysFromCivil(y, mo, d) * 86400;
  return cache.dayStart_s;
}

/**
 * ISO 8601 date-time: YYYY-MM-DD, 'T' (or 't' or a space), hh:mm, optional :ss, optional fraction of up to 15
 * digits, optional zone 'Z' / 'z' / +hh:mm / +hhmm / +hh (converted to UTC); no zone means UTC. Returns Unix
 * seconds; with up to 6 fraction digits the result is the correctly rounded double of the exact stamp (so
 * "...T10:00:00.125Z" equals the Unix text "1781431200.125" exactly). hh 24 only as 24:00:00; ss up to 60 (a leap
 * second counts as the next second's start, as POSIX time does). Dates must exist (no 30 February).
 */
export function parseIsoBytes(buf: Uint8Array, i: number, end: number, cache: DayCache): number {
  if (end - i < 16) return NAN[0];
  const day = dayStart(buf, i, cache);
  if (day !== day) return NAN[0];
  const sep = buf[i + 10];
  if (sep !== 84 && sep !== 116 && sep !== 32) return NAN[0];
  const hh = two(buf, i + 11);
  if (buf[i + 13] !== 58) return NAN[0];
  const mm = two(buf, i + 14);
  if (!(hh <= 24 && mm <= 59)) return NAN[0];
  let k = i + 16;
  let ss = 0, frac = 0, fd = 0;
  if (k < end && buf[k] === 58) {
    if (k + 3 > end) return NAN[0];
    ss = two(buf, k + 1);
    if (!(ss <= 60)) return NAN[0];
    k += 3;
    if (k < end && buf[k] === 46) {
      k++;
      while (k < end) {
        const d = buf[k] - 48;
        if (d < 0 || d > 9) break;
        if (fd < 15) { frac = frac * 10 + d; fd++; }
        k++;
      }
      if (fd === 0) return NAN[0];
    }
  }
  if (hh === 24 && (mm !== 0 || ss !== 0 || frac !== 0)) return NAN[0];
  let zone = 0;
  if (k < end) {
    const z = buf[k];
    if (z === 90 || z === 122) k++;
    else if (z === 43 || z === 45) {
      const zh = two(buf, k + 1);
      if (!(zh <= 23) || k + 3 > end) return NAN[0];
      k += 3;
      let zm = 0;
      if (k < end && buf[k] === 58) {
        if (k + 3 > end) return NAN[0];
        zm = two(buf, k + 1);
        k += 3;
      } else if (k + 1 < end && buf[k] >= 48 && buf[k] <= 57) {
        zm = two(buf, k);
        k += 2;
      }
      if (!(zm <= 59)) return NAN[0];
      zone = (z === 45 ? -1 : 1) * (zh * 3600 + zm * 60);
    }
  }
  stop = k;
  const whole = day + hh * 3600 + mm * 60 + ss - zone;
  if (fd === 0) return whole;
  const p = POW10[fd];
  const num = whole * p + frac;
  // exact integer numerator -> one correctly rounded division; otherwise the nearest sum
  return Math.abs(num) <= 9007199254740992 ? num / p : whole + frac / p;
}

/** Decimal text Number() accepts that we also accept: sign, digits, '.', exponent. No hex, no Infinity. */
export const DECIMAL_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
