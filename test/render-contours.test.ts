import { describe, expect, it } from 'vitest';
import { clipRing, contourRegions, fillGaps, regionArea, ringArea } from '../src/render/contours.ts';
import { niceExtent, niceTicks, formatTick } from '../src/render/ticks.ts';

/**
 * Level sets of a two-dimensional Gaussian are ellipses (analytic, no outside library needed):
 *   f(y, z) = A exp(-(y - y0)^2 / (2 sy^2) - (z - z0)^2 / (2 sz^2)) >= c
 *   <=> (y - y0)^2 / (2 sy^2) + (z - z0)^2 / (2 sz^2) <= ln(A / c)
 *   <=> (y - y0)^2 / a^2 + (z - z0)^2 / b^2 <= 1,  a = sy sqrt(2 ln(A/c)), b = sz sqrt(2 ln(A/c)),
 * so the region enclosed by the level-c contour has area pi a b = 2 pi sy sz ln(A/c), centred on (y0, z0).
 *
 * Tolerance from the grid spacing h (the larger of dy, dz), two error sources of marching squares with linear
 * interpolation, written in coordinates scaled by sigma where the level set is a circle of radius rho = sqrt(2 ln(A/c)):
 *  - the linear interpolant of f between two grid points misplaces the crossing by about h^2 |f''| / (8 |f'|), with
 *    f'/f = -r / s^2 and f''/f = r^2 / s^4 - 1 / s^2 along the radius, i.e. h^2 |rho^2 - 1| / (8 r); over the
 *    perimeter 2 pi r this changes the area by pi h^2 |rho^2 - 1| / 4;
 *  - straight chords (at most h long) inside a curve of radius r cut off about chord^3 / (12 r) each, over 2 pi r / h
 *    chords at most about pi h^2 / 3 (chords up to h sqrt2, rounded).
 * Bound: |area - pi a b| <= pi h^2 (|rho^2 - 1| / 4 + 1 / 3). The centroid of the ring must sit on (y0, z0) within
 * 0.05 h (a half-cell slip in the coordinate mapping would move it by 0.5 h).
 */
describe('filled contours (d3-contour) on an analytic Gaussian', () => {
  const A = 0.4, y0 = 12, z0 = 95, sy = 35, sz = 28;
  for (const [dy, dz] of [[2, 2], [7.5, 5], [10, 10]] as const) {
    const ny = Math.round(300 / dy) + 1, nz = Math.round(160 / dz) + 1;
    const gy0 = -150, gz0 = 10;
    const values = new Float64Array(ny * nz);
    for (let j = 0; j < nz; j++) {
      for (let i = 0; i < ny; i++) {
        const y = gy0 + i * dy, z = gz0 + j * dz;
        values[i + j * ny] = A * Math.exp(-((y - y0) ** 2) / (2 * sy ** 2) - ((z - z0) ** 2) / (2 * sz ** 2));
      }
    }
    const grid = { ny, nz, y0: gy0, z0: gz0, dy, dz, values };
    for (const c of [0.3, 0.2, 0.1]) {
      it(`level ${c} on a ${dy} x ${dz} m grid encloses pi a b`, () => {
        const [polys] = contourRegions(grid, [c]);
        expect(polys.length).toBe(1); // one closed region, no holes: exact, the level set is one ellipse
        expect(polys[0].length).toBe(1);
        const L = Math.log(A / c);
        const exact = Math.PI * (sy * Math.sqrt(2 * L)) * (sz * Math.sqrt(2 * L));
        const h = Math.max(dy, dz);
        const bound = Math.PI * h * h * (Math.abs(2 * L - 1) / 4 + 1 / 3);
        expect(Math.abs(regionArea(polys) - exact)).toBeLessThanOrEqual(bound);
        const ring = polys[0][0];
        let cy = 0, cz = 0, a2 = 0;
        for (let i = 0, n = ring.length, k = n - 1; i < n; k = i++) {
          const cr = ring[k][0] * ring[i][1] - ring[i][0] * ring[k][1];
          a2 += cr;
          cy += (ring[k][0] + ring[i][0]) * cr;
          cz += (ring[k][1] + ring[i][1]) * cr;
        }
        expect(Math.abs(cy / (3 * a2) - y0)).toBeLessThanOrEqual(0.05 * h);
        expect(Math.abs(cz / (3 * a2) - z0)).toBeLessThanOrEqual(0.05 * h);
      });
    }
  }

  it('a level above every value gives no region, a level below every value gives the whole grid', () => {
    const values = new Float64Array(12).fill(1);
    const grid = { ny: 4, nz: 3, y0: 0, z0: 0, dy: 10, dz: 5, values };
    const [above, below] = contourRegions(grid, [2, 0]);
    expect(above.length).toBe(0);
    // Whole grid: 4 x 10 m by 3 x 5 m = 600 m^2, exact (the padded ring is cut at the outer cell edges).
    expect(regionArea(below)).toBeCloseTo(600, 9);
  });
});

describe('clipRing', () => {
  it('clips a 2 x 2 square centred on the origin to the first quadrant box: area 1 (hand computed)', () => {
    const sq: [number, number][] = [[-1, -1], [1, -1], [1, 1], [-1, 1]];
    expect(Math.abs(ringArea(clipRing(sq, [0, 0, 2, 2])))).toBeCloseTo(1, 12); // exact up to rounding
    expect(clipRing(sq, [5, 5, 6, 6])).toEqual([]); // disjoint: nothing left
  });
});

describe('fillGaps', () => {
  it('fills an empty cell with the mean of its finite 4-neighbours and leaves finite cells alone', () => {
    // 3 x 3 grid, centre empty; neighbours 2, 4, 6, 8 -> mean 5 (hand computed).
    const v = Float64Array.from([1, 2, 3, 4, NaN, 6, 7, 8, 9]);
    const out = fillGaps(v, 3, 3);
    expect(out[4]).toBe(5); // exact: (2 + 4 + 6 + 8) / 4
    expect(Array.from(out).filter((_, i) => i !== 4)).toEqual([1, 2, 3, 4, 6, 7, 8, 9]);
    expect(Number.isNaN(v[4])).toBe(true); // input untouched
  });
  it('reaches cells with no finite neighbour in later passes; an all-empty grid stays empty', () => {
    const v = Float64Array.from([NaN, NaN, 3]);
    expect(Array.from(fillGaps(v, 3, 1))).toEqual([3, 3, 3]);
    expect(fillGaps(new Float64Array(4).fill(NaN), 2, 2).every(Number.isNaN)).toBe(true);
  });
});

describe('nice ticks (hand-computed cases)', () => {
  it('steps of 1, 2 or 5 times a power of ten', () => {
    expect(niceTicks(0, 1, 5)).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    expect(niceTicks(-150, 150, 6)).toEqual([-150, -100, -50, 0, 50, 100, 150]);
    expect(niceTicks(10, 170, 5)).toEqual([20, 40, 60, 80, 100, 120, 140, 160]);
  });
  it('widens a range outward to the step', () => {
    expect(niceExtent(0.55, 0.98, 10)).toEqual([0.55, 1]);
    // A zero-width range opens by 5 % of the value each side: [2.85, 3.15], already multiples of the 0.05 step.
    const [lo, hi] = niceExtent(3, 3);
    expect(lo).toBeCloseTo(2.85, 12); // floating-point multiple of 0.05
    expect(hi).toBeCloseTo(3.15, 12);
  });
  it('labels with a typographic minus and the decimals of the step', () => {
    expect(formatTick(-0.5, 0.25)).toBe('\u22120.50');
    expect(formatTick(100, 50)).toBe('100');
  });
});
