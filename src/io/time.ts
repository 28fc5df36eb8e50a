/**
 * Time stamps: ISO 8601 in UTC (or with an explicit offset, converted to UTC) or Unix seconds. Returns Unix seconds
 * (NaN when the text is neither). A stamp without a zone designator is taken as UTC, as the campaign schema states.
 */
const ISO = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?(Z|[+-]\d{2}:?\d{2})?$/;

export function parseTime(text: string): number {
  const t = text.trim();
  if (t === '') return NaN;
  if (/^[+-]?\d+(\.\d+)?([eE][+-]?\d+)?$/.test(t)) return Number(t);
  const m = ISO.exec(t);
  if (!m) return NaN;
  const [, Y, Mo, D, h, mi, s, zone] = m;
  const mo = Number(Mo), d = Number(D), hh = Number(h), mm = Number(mi), ss = s ? Number(s) : 0;
  if (mo < 1 || mo > 12 || d < 1 || d > 31 || hh > 24 || mm > 59 || ss >= 61) return NaN;
  let secs = Date.UTC(Number(Y), mo - 1, d, hh, mm, 0) / 1000 + ss;
  if (zone && zone !== 'Z') {
    const sign = zone[0] === '-' ? -1 : 1;
    const digits = zone.slice(1).replace(':', '');
    secs -= sign * (Number(digits.slice(0, 2)) * 3600 + Number(digits.slice(2)) * 60);
  }
  return secs;
}

/** Unix seconds to ISO 8601 UTC with millisecond precision. */
export function isoTime(unix_s: number): string {
  return Number.isFinite(unix_s) ? new Date(Math.round(unix_s * 1000)).toISOString() : '';
}
