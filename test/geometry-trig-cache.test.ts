/**
 * The remembered sines and cosines of reported angles (src/geometry/trigCache.ts) against the JavaScript engine's
 * Math.sin and Math.cos of the same angle (the reference: the ECMAScript library functions the direct computation
 * calls), tolerance 0 (the cache must give the very doubles the direct computation gives, or results would change
 * with the order samples arrive in).
 */
import { describe, expect, it } from 'vitest';
import { SinCosCache } from '../src/geometry/trigCache.ts';
import { mulberry32 } from '../src/math/random.ts';

describe('SinCosCache', () => {
  it('gives Math.sin and Math.cos of deg * PI / 180 bit for bit, on and off the millidegree grid, first and repeated uses', () => {
    const az = new SinCosCache(0, 360), el = new SinCosCache(-90, 90);
    const r = mulberry32(5);
    let onGrid = 0;
    for (let i = 0; i < 200_000; i++) {
      const decimals = i % 5; // 0-3 decimals (remembered) and 4 (computed directly)
      const p = 10 ** decimals;
      const a = i % 97 === 0 ? r() * 360 : Math.round(r() * 360 * p) / p; // some with every digit of a double
      const e = Math.round((r() * 180 - 90) * p) / p;
      if (Math.round(a * 1000) / 1000 === a) onGrid++;
      for (let rep = 0; rep < 2; rep++) {
        az.sinCos(a);
        el.sinCos(e);
        const ra = (a * Math.PI) / 180, re = (e * Math.PI) / 180;
        expect(az.sin).toBe(Math.sin(ra)); // tolerance 0, see the file's comment
        expect(az.cos).toBe(Math.cos(ra));
        expect(el.sin).toBe(Math.sin(re));
        expect(el.cos).toBe(Math.cos(re));
      }
    }
    expect(onGrid).toBeGreaterThan(100_000); // the remembered path was exercised (about 4 in 5 angles)
  });

  it('computes angles outside its range directly (a wrapped azimuth, an elevation beyond the vertical), and +0 and -0 each with its own sign', () => {
    const c = new SinCosCache(-90, 90);
    for (const d of [-180, -90.001, 90.001, 135.5, 720, 0, -0]) {
      c.sinCos(d);
      expect(c.sin).toBe(Math.sin((d * Math.PI) / 180));
      expect(c.cos).toBe(Math.cos((d * Math.PI) / 180));
    }
  });
});
