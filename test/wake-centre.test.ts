import { describe, expect, it } from 'vitest';
import { diskMeanCube, diskSummer, minPowerDiskCentre } from '../src/wake/diskCentre.ts';
import { deficitCentroid } from '../src/wake/centroid.ts';
import type { GridSpec } from '../src/grid/grid.ts';

describe('minimum-available-power disk', () => {
  it('prefix-sum disk sums equal the direct sub-sampled sums (random disks, field with holes)', () => {
    // Same arithmetic, different order: equal to 1e-12 relative (rounding only).
    const g: GridSpec = { ny: 57, nz: 43, y0: -140, z0: 3, dy: 5, dz: 7 };
    const u = new Float64Array(g.ny * g.nz).map((_, k) => (Math.sin(k * 1.7) > 0.9 ? NaN : 6 + Math.sin(k * 0.37)));
    const fast = diskSummer(g, u);
    let seed = 1;
    const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
    for (let t = 0; t < 500; t++) {
      const cy = -160 + rnd() * 320, cz = -10 + rnd() * 320, r = 5 + rnd() * 80;
      const a = diskMeanCube(g, u, cy, cz, r), b = fast(cy, cz, r);
      if (Number.isNaN(a.meanCube)) { expect(b.meanCube).toBeNaN(); continue; }
      expect(Math.abs(b.meanCube / a.meanCube - 1)).toBeLessThan(1e-12);
      expect(Math.abs(b.coverage - a.coverage)).toBeLessThan(1e-12);
    }
  });

  it('full coverage of a uniform field: coverage = 1 and mean cube = u^3 (analytic)', () => {
    const g: GridSpec = { ny: 200, nz: 200, y0: -99.5, z0: 0.5, dy: 1, dz: 1 };
    const u = new Float64Array(g.ny * g.nz).fill(2);
    const r = diskMeanCube(g, u, 0, 100, 40);
    expect(r.meanCube).toBeCloseTo(8, 12);
    // 4x4 sub-sampling of the boundary cells of a 40 m circle with 1 m cells: area error < 0.1 %.
    expect(Math.abs(r.coverage - 1)).toBeLessThan(1e-3);
  });

  it('finds a circular dip off the grid nodes to sub-cell precision, and flags an edge minimum', () => {
    const g: GridSpec = { ny: 81, nz: 61, y0: -200, z0: 0, dy: 5, dz: 5 };
    const s = new Float64Array(g.ny * g.nz);
    const field = (yc: number, zc: number) => {
      for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
        const y = g.y0 + iy * g.dy, z = g.z0 + iz * g.dz;
        s[iy + iz * g.ny] = 1 - 0.4 * Math.exp(-((y - yc) ** 2 + (z - zc) ** 2) / (2 * 45 ** 2));
      }
      return s;
    };
    const c = minPowerDiskCentre(g, field(-12.5, 103), 60);
    // Symmetric dip: the disk-mean is symmetric about the dip centre, the parabola refinement puts it within a
    // quarter cell (1.25 m) of (-12.5, 103).
    expect(c.ok).toBe(true);
    expect(Math.abs(c.y_m + 12.5)).toBeLessThan(1.25);
    expect(Math.abs(c.z_m - 103)).toBeLessThan(1.25);
    const e = minPowerDiskCentre(g, field(260, 100), 60);
    expect(e.ok).toBe(false); // minimum at the edge of the searchable region
    expect(e.atEdge).toBe(true);
  });
});

describe('deficit centroid', () => {
  it('symmetric blob: centroid at its centre (analytic)', () => {
    const g: GridSpec = { ny: 21, nz: 21, y0: -50, z0: 50, dy: 5, dz: 5 };
    const d = new Float64Array(g.ny * g.nz);
    for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
      const y = g.y0 + iy * g.dy, z = g.z0 + iz * g.dz;
      d[iy + iz * g.ny] = 0.3 * Math.exp(-((y - 10) ** 2 + (z - 95) ** 2) / 800);
    }
    const c = deficitCentroid(g, d, 0.3, 0.5);
    // Cells are symmetric about (10, 95) (both on the 5 m lattice): exact to rounding.
    expect(c.y_m).toBeCloseTo(10, 10);
    expect(c.z_m).toBeCloseTo(95, 10);
  });
});
