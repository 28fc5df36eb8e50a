/**
 * CSV rows as every table writes them. Quoting follows RFC 4180 sec. 2 (fields holding a comma, quote or line
 * break are enclosed in quotes, inner quotes doubled); numbers are rounded to 9 significant digits with
 * Number.prototype.toPrecision (ECMA-262 sec. 21.1.3.5) and written by Number::toString (sec. 6.1.6.1.20), the
 * shortest text that reads back as the rounded value. Expected strings worked by hand from those rules.
 */
import { describe, expect, it } from 'vitest';
import { csvRow } from '../src/io/atomic.ts';

describe('csvRow', () => {
  it('rounds to 9 significant digits and writes the shortest form', () => {
    // 0.1 + 0.2 = 0.30000000000000004 -> 0.300000000 -> "0.3"; 1234567891 -> 1.23456789e+9 -> "1234567890";
    // 123456789.4 -> "123456789"; -0 -> "0"; 1e21 -> "1e+21"; 2/3 -> 0.666666667
    expect(csvRow([1, -0, 0.1 + 0.2, 123456789.4, 1234567891, 1e21, 2 / 3, -2.5e-7])).toBe('1,0,0.3,123456789,1234567890,1e+21,0.666666667,-2.5e-7\n');
  });
  it('writes NaN, infinities, null and undefined as empty fields and booleans as 1/0', () => {
    expect(csvRow([NaN, Infinity, -Infinity, null, undefined, true, false])).toBe(',,,,,1,0\n');
  });
  it('quotes fields with a comma, quote or line break (RFC 4180)', () => {
    expect(csvRow(['plain', 'a,b', 'say "hi"', 'two\nlines', 'cr\r', ''])).toBe('plain,"a,b","say ""hi""","two\nlines","cr\r",\n');
  });
});
