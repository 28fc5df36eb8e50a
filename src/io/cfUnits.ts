/**
 * Units of NetCDF variables (the `units` attribute, UDUNITS spelling as CF uses it) turned into the affine map to
 * wakeplane's SI units: SI = stored * scale + offset. Only the units a sample file can sensibly hold are known;
 * anything else is an error naming the variable, never a guess.
 *
 * time: "<unit> since <date>[ <time>][ <zone>]" with unit seconds, minutes, hours, days, milliseconds, microseconds or
 *   nanoseconds (and their usual abbreviations) -> Unix seconds; calendar standard, gregorian or proleptic_gregorian (the same for dates
 *   after 1582).
 * angles: degrees or radians -> degrees. lengths: m or km -> m. speeds: m s-1 (m/s) or km h-1 -> m/s. CNR: dB.
 */
export type Quantity = 'time' | 'angle' | 'length' | 'speed' | 'ratio_db';

export interface Affine {
  scale: number;
  offset: number;
}

const norm = (u: string) => u.trim().replace(/\s+/g, ' ').toLowerCase();

const TIME_UNITS: Record<string, number> = {
  s: 1, sec: 1, secs: 1, second: 1, seconds: 1,
  ms: 1e-3, msec: 1e-3, millisecond: 1e-3, milliseconds: 1e-3,
  // xarray stores pandas times as int64 "microseconds since ..." or "nanoseconds since ..." when they have sub-
  // millisecond parts (its default encoding picks the coarsest unit that holds them exactly).
  us: 1e-6, usec: 1e-6, microsecond: 1e-6, microseconds: 1e-6,
  ns: 1e-9, nsec: 1e-9, nanosecond: 1e-9, nanoseconds: 1e-9,
  min: 60, mins: 60, minute: 60, minutes: 60,
  h: 3600, hr: 3600, hrs: 3600, hour: 3600, hours: 3600,
  d: 86400, day: 86400, days: 86400,
};
const ANGLE: Record<string, number> = {
  degree: 1, degrees: 1, deg: 1, '°': 1, degrees_clockwise_from_north: 1, 'degree_clockwise_from_north': 1,
  rad: 180 / Math.PI, radian: 180 / Math.PI, radians: 180 / Math.PI,
};
const LENGTH: Record<string, number> = { m: 1, meter: 1, meters: 1, metre: 1, metres: 1, km: 1000, kilometer: 1000, kilometers: 1000, kilometre: 1000, kilometres: 1000 };
const SPEED: Record<string, number> = { 'm s-1': 1, 'm/s': 1, 'm s^-1': 1, 'm.s-1': 1, 'ms-1': 1, 'meter second-1': 1, 'meters per second': 1, 'km h-1': 1 / 3.6, 'km/h': 1 / 3.6 };
const DB: Record<string, number> = { db: 1, decibel: 1, decibels: 1 };

/** Unix seconds of a CF reference date ("1970-01-01", "2024-5-1 00:00:00", "2024-05-01T00:00:00Z", "... +02:00"). */
export function parseReferenceDate(text: string): number {
  const m = text.trim().match(/^(-?\d{1,4})-(\d{1,2})-(\d{1,2})(?:[ T](\d{1,2}):(\d{1,2})(?::(\d{1,2}(?:\.\d*)?))?)?\s*(Z|UTC|GMT|[+-]\d{1,2}(?::?\d{2})?)?$/i);
  if (!m) return NaN;
  const [, y, mo, d, h = '0', mi = '0', s = '0', zone] = m;
  let t = Date.UTC(Number(y), Number(mo) - 1, Number(d), Number(h), Number(mi)) / 1000 + Number(s);
  if (zone && /^[+-]/.test(zone)) {
    const z = zone.match(/^([+-])(\d{1,2}):?(\d{2})?$/)!;
    const off = (Number(z[2]) * 60 + Number(z[3] ?? 0)) * 60;
    t -= z[1] === '+' ? off : -off;
  }
  return t;
}

/** The map to SI for `units` of a quantity, or a reason it is not known. */
export function unitsToSi(units: string, q: Quantity, calendar?: string): Affine | string {
  const u = norm(units);
  if (q === 'time') {
    const m = u.match(/^(\S+) since (.+)$/);
    if (!m) return `units "${units}" are not "<unit> since <date>"`;
    const step = TIME_UNITS[m[1]];
    if (step === undefined) return `time unit "${m[1]}" unknown (seconds, minutes, hours, days, milliseconds, microseconds, nanoseconds)`;
    const t0 = parseReferenceDate(m[2]);
    if (!Number.isFinite(t0)) return `reference date "${m[2]}" not understood`;
    if (calendar !== undefined && !['standard', 'gregorian', 'proleptic_gregorian'].includes(norm(calendar))) return `calendar "${calendar}" not supported (standard, gregorian, proleptic_gregorian)`;
    return { scale: step, offset: t0 };
  }
  const table = q === 'angle' ? ANGLE : q === 'length' ? LENGTH : q === 'speed' ? SPEED : DB;
  const k = table[u];
  if (k === undefined) return `units "${units}" unknown for ${q === 'ratio_db' ? 'a ratio in dB' : `${q === 'angle' ? 'an' : 'a'} ${q}`} (known: ${Object.keys(table).slice(0, 6).join(', ')}, ...)`;
  return { scale: k, offset: 0 };
}
