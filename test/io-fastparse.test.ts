/**
 * Byte-level number and time parsers of the sample reader, checked against the JavaScript engine's own parsers as
 * the outside reference: Number() (ECMAScript StringToNumber, correctly rounded, ECMA-262 sec. 7.1.4.1.1) and
 * Date.parse (ECMA-262 sec. 21.4.3.2, the Date Time String Format, sec. 21.4.1.32).
 */
import { describe, expect, it } from 'vitest';
import { createDayCache, daysFromCivil, parseDecimal, parsedTo } from '../src/io/fastParse.ts';
import { parseNumberField, parseTimeField, wrap360 } from '../src/io/sampleRow.ts';
import { mulberry32 as rng } from '../src/math/random.ts';


const B = (s: string) => Buffer.from(s, 'latin1');
const num = (s: string) => parseNumberField(B(s), 0, s.length);

describe('parseDecimal against Number()', () => {
  it('gives the identical double for 200,000 random decimals of up to 15 digits', () => {
    const r = rng(12345);
    let checked = 0;
    for (let k = 0; k < 200_000; k++) {
      const nd = 1 + Math.floor(r() * 15);
      let digits = '';
      for (let j = 0; j < nd; j++) digits += String(Math.floor(r() * 10));
      const dot = Math.floor(r() * (nd + 1)); // 0 -> ".123", nd -> "123." or no dot
      const withDot = r() < 0.8;
      let s = withDot ? `${digits.slice(0, dot)}.${digits.slice(dot)}` : digits;
      if (s === '.') continue;
      const sg = r();
      if (sg < 0.3) s = `-${s}`;
      else if (sg < 0.35) s = `+${s}`;
      const buf = B(`${s},`);
      const v = parseDecimal(buf, 0, buf.length);
      // exact: m < 2^53 and 10^k exact, one IEEE division is correctly rounded (Clinger 1990), as Number() is
      expect(Object.is(v, Number(s)), s).toBe(true);
      expect(parsedTo()).toBe(s.length); // stops at the delimiter
      checked++;
    }
    expect(checked).toBeGreaterThan(190_000);
  });

  it('declines what the fast grammar does not cover, and parseNumberField falls back to Number()', () => {
    for (const s of ['1234567890.1234567', '0.00000000000000012345', '1e3', '-2.5E-4', '6.02214076e23']) {
      expect(Number.isNaN(parseDecimal(B(s), 0, s.length)) || parsedTo() !== s.length).toBe(true);
      expect(Object.is(num(s), Number(s)), s).toBe(true); // exact: it is Number()
    }
  });

  it('rejects non-numbers, non-finite and hexadecimal text (all NaN)', () => {
    for (const s of ['NaN', 'Infinity', '-Infinity', '1e400', '0x1A', '', '.', '-', '1.2.3', '12a', '1 2', '١٢']) {
      expect(num(s), JSON.stringify(s)).toBeNaN();
    }
  });
});

describe('ISO 8601 times against Date.parse', () => {
  const pad = (n: number, w = 2) => String(n).padStart(w, '0');

  it('equals Date.parse(s) / 1000 exactly for 50,000 random stamps with Z, offsets and 0-3 fraction digits', () => {
    const r = rng(777);
    const days = createDayCache();
    for (let k = 0; k < 50_000; k++) {
      const ms = Math.floor((r() * 2 - 0.5) * 4e12); // about 1906 .. 2097
      const d = new Date(ms);
      const fd = Math.floor(r() * 4);
      const frac = fd === 0 ? '' : '.' + pad(d.getUTCMilliseconds(), 3).slice(0, fd);
      const zr = r();
      const zone = zr < 0.5 ? 'Z' : `${zr < 0.75 ? '+' : '-'}${pad(Math.floor(r() * 14))}:${pad(r() < 0.7 ? 0 : 30)}`;
      const s =
        `${pad(d.getUTCFullYear(), 4)}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}T` +
        `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())}${frac}${zone}`;
      const t = parseTimeField(B(s), 0, s.length, days);
      // exact: both are one correctly rounded division of the same integer count of 10^-fd s (Date.parse in ms)
      expect(Object.is(t, Date.parse(s) / 1000), s).toBe(true);
    }
  });

  it('reads the same instant from ISO text and Unix-second text (identical doubles)', () => {
    const days = createDayCache();
    const iso = '2026-06-14T10:00:00.125Z';
    const unix = String(Date.parse(iso) / 1000); // outside reference for the Unix value
    expect(unix).toBe('1781431200.125');
    expect(Object.is(parseTimeField(B(iso), 0, iso.length, days), num(unix))).toBe(true);
  });

  it('accepts a space separator, no seconds, no zone (UTC) and +hhmm', () => {
    const days = createDayCache();
    const cases: [string, string][] = [
      ['2026-06-14 10:00:00Z', '2026-06-14T10:00:00Z'],
      ['2026-06-14T10:00Z', '2026-06-14T10:00:00Z'],
      ['2026-06-14T10:00:00', '2026-06-14T10:00:00Z'],
      ['2026-06-14T12:00:00+0200', '2026-06-14T10:00:00Z'],
      ['2026-06-14T12:00:00.5+02', '2026-06-14T10:00:00.5Z'],
    ];
    for (const [s, ref] of cases) {
      expect(parseTimeField(B(s), 0, s.length, days), s).toBe(Date.parse(ref) / 1000); // exact, as above
    }
  });

  it('keeps sub-millisecond digits (6 digits exact, as the decimal text)', () => {
    const days = createDayCache();
    const s = '2026-06-14T10:00:00.123456Z';
    // exact: (whole * 1e6 + 123456) / 1e6 is one correctly rounded division, as Number() of the Unix text is
    expect(parseTimeField(B(s), 0, s.length, days)).toBe(Number('1781431200.123456'));
  });

  it('rejects dates that do not exist and malformed stamps (NaN)', () => {
    const days = createDayCache();
    for (const s of [
      '2026-02-29T00:00:00Z', '2024-02-30T00:00:00Z', '2026-13-01T00:00:00Z', '2026-00-10T00:00:00Z',
      '2026-06-14T25:00:00Z', '2026-06-14T10:60:00Z', '2026-06-14T24:00:01Z', '2026-06-14T10:00:00.Z',
      '2026-06-14T10:00:00+25:00', '2026-06-14X10:00:00Z', '2026-06-14T10:00:00ZZ', 'yesterday', '14/06/2026 10:00',
    ]) {
      expect(parseTimeField(B(s), 0, s.length, days), s).toBeNaN();
    }
    // but 29 February of a leap year exists (Gregorian rule: divisible by 4, not by 100 unless by 400)
    const s = '2024-02-29T00:00:00Z';
    expect(parseTimeField(B(s), 0, s.length, days)).toBe(Date.parse(s) / 1000);
  });

  it('daysFromCivil matches Date.UTC for every day of 1600..2400 in steps of 37 days', () => {
    for (let ms = Date.UTC(1600, 0, 1); ms < Date.UTC(2400, 0, 1); ms += 37 * 86400e3) {
      const d = new Date(ms);
      expect(daysFromCivil(d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate())).toBe(ms / 86400e3); // exact integers
    }
  });
});

describe('wrap360', () => {
  it('normalises azimuths into [0, 360)', () => {
    // exact: x % 360 of integers is exact
    expect([-360, -30, 0, 359, 360, 540, 720].map(wrap360)).toEqual([0, 330, 0, 359, 0, 180, 0]);
    expect(wrap360(-1e-20)).toBe(0); // -1e-20 + 360 rounds to 360, which must wrap to 0
  });
});
