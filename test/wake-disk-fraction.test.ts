/**
 * cellFractionInDisk classifies cells far inside or outside the circle without sub-sampling; its result must be
 * the definition's: the fraction of the 4 x 4 sub-samples (cell centres of a uniform 4 x 4 split, the midpoint rule
 * of numerical integration, e.g. Press et al. 2007, Numerical Recipes 3rd ed., sec. 4.1) that lie in the circle.
 */
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../src/math/random.ts';
import { cellFractionInDisk } from '../src/wake/diskCentre.ts';

function definition(y0: number, z0: number, dy: number, dz: number, iy: number, iz: number, cy: number, cz: number, r: number): number {
  const y = y0 + iy * dy, z = z0 + iz * dz;
  const half = Math.hypot(dy, dz) / 2;
  const d = Math.hypot(y - cy, z - cz);
  if (d + half <= r) return 1;
  if (d - half >= r) return 0;
  let k = 0;
  for (let a = 0; a < 4; a++) for (let b = 0; b < 4; b++) {
    const sy = y + ((a + 0.5) / 4 - 0.5) * dy, sz = z + ((b + 0.5) / 4 - 0.5) * dz;
    if ((sy - cy) ** 2 + (sz - cz) ** 2 <= r * r) k++;
  }
  return k / 16;
}

describe('cellFractionInDisk', () => {
  it('equals the sub-sample definition exactly, for cells inside, outside and cut by the circle', () => {
    const rnd = mulberry32(7);
    let partial = 0, whole = 0, none = 0;
    for (let t = 0; t < 20000; t++) {
      const dy = 1 + 30 * rnd(), dz = 1 + 30 * rnd(), ny = 24, nz = 16;
      const g = { y0: -ny * dy / 2, z0: 0, dy, dz, ny, nz };
      const r = 0.2 * dy + 150 * rnd(), cy = 200 * rnd() - 100, cz = 150 * rnd();
      const iy = Math.floor(rnd() * ny), iz = Math.floor(rnd() * nz);
      const a = cellFractionInDisk(g as never, iy, iz, cy, cz, r);
      expect(a).toBe(definition(g.y0, g.z0, dy, dz, iy, iz, cy, cz, r)); // tolerance 0: the same fraction of 16
      if (a === 1) whole++; else if (a === 0) none++; else partial++;
    }
    expect(Math.min(partial, whole, none)).toBeGreaterThan(500); // all three cases exercised
  });
});
