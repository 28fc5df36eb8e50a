/**
 * Terrain: bilinear heights, beams blocked by the ground, the site frame into WGS84 and UTM against PROJ (pyproj,
 * test/reference/terrain_crs.py, output quoted below and in terrain_crs.out), GeoTIFF and XYZ rasters read into the
 * site frame, and the one-line errors for rasters that cannot be used.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { writeArrayBuffer } from 'geotiff';
import { enuToWgs84, siteToRaster } from '../src/geometry/crs.ts';
import { firstBlockedRange, flatTerrain, GridTerrain, segmentClear } from '../src/geometry/terrain.ts';
import { loadTerrain, readXyzGrid } from '../src/io/terrainFile.ts';
import { resolveCampaign } from '../src/campaign/load.ts';
import { tinyCampaignObject } from './helpers/tinyCampaign.ts';

const origin = { lat_deg: 45.5, lon_deg: -30.5, alt_m: 60 };

function grid(f: (e: number, n: number) => number, e0: number, n0: number, d: number, ne: number, nn: number): GridTerrain {
  const h = new Float64Array(ne * nn);
  for (let j = 0; j < nn; j++) for (let i = 0; i < ne; i++) h[i + j * ne] = f(e0 + i * d, n0 + j * d);
  return new GridTerrain({ e0, n0, de: d, dn: d, ne, nn, heights: h });
}

describe('bilinear terrain', () => {
  it('reproduces h = a + b e + c n + d e n exactly between nodes and is NaN outside', () => {
    // Bilinear interpolation is exact for functions linear in each coordinate (analytic).
    const f = (e: number, n: number) => 12 + 0.01 * e - 0.02 * n + 1e-5 * e * n;
    const t = grid(f, -500, -400, 25, 41, 33);
    for (const [e, n] of [[0, 0], [12.3, -7.7], [-480.1, 390.2], [499.9, -399.9]]) expect(t.heightAt(e, n)).toBeCloseTo(f(e, n), 9);
    expect(t.heightAt(501, 0)).toBeNaN();
    expect(t.heightAt(0, -401)).toBeNaN();
  });
});

describe('beams blocked by the ground', () => {
  it('flat ground: a descending beam meets the level at r = (level - z0) / n_u (analytic)', () => {
    const nu = -Math.sin((2 * Math.PI) / 180), nh = Math.cos((2 * Math.PI) / 180);
    const r = firstBlockedRange(flatTerrain(0), [0, 0, 10], nh, 0, nu, 0, 1000);
    expect(r).toBeCloseTo(10 / Math.sin((2 * Math.PI) / 180), 9); // 286.54 m
    expect(firstBlockedRange(flatTerrain(0), [0, 0, 10], nh, 0, -nu, 0, 1000)).toBe(Infinity);
  });
  it('a ridge between instrument and target blocks the straight beam; a higher target clears it', () => {
    // Ridge 30 m high at e = 500 (triangular, 100 m wide at its foot), instrument at 2 m, targets at e = 1000.
    const ridge = grid((e) => Math.max(0, 30 - Math.abs(e - 500) * 0.6), 0, -100, 10, 121, 21);
    // Straight line from (0, 0, 2) to (1000, 0, 40): at e = 500 its height is 21 m < 30 m -> blocked.
    expect(segmentClear(ridge, [0, 0, 2], [1000, 0, 40])).toBe(false);
    // To (1000, 0, 80): 41 m at the ridge top, and above the flanks everywhere -> clear.
    expect(segmentClear(ridge, [0, 0, 2], [1000, 0, 80])).toBe(true);
    // The first blocked range lies on the ridge's near flank (the line meets 30 - 0.6 |e - 500| between e = 450 and 500).
    const L = Math.hypot(1000, 38);
    const r = firstBlockedRange(ridge, [0, 0, 2], 1000 / L, 0, 38 / L, 0, L, 2);
    const e = (r * 1000) / L;
    expect(e).toBeGreaterThan(450);
    expect(e).toBeLessThan(500);
  });
});

describe('site frame to WGS84 and UTM against PROJ (test/reference/terrain_crs.py)', () => {
  // pyproj 3.4.1 / PROJ 9.1.1:
  const ref: [number, number, number, number, number, number, number][] = [
    [0, 0, 45.5, -30.5, 60.0, 226558.9872, 5044457.1114],
    [1000, 500, 45.504498007, -30.487204516, 60.0979, 227580.3463, 5044913.2826],
    [-700, -900, 45.491901938, -30.508954842, 60.1019, 225820.0516, 5043588.0275],
    [1900, 900, 45.508095112, -30.475687033, 60.3461, 228497.3842, 5045273.8541],
  ];
  it('gives latitude, longitude and height of the tangent plane to 1e-8 degrees and 1 mm', () => {
    // Tolerances: 1e-8 degrees is about 1 mm; both use WGS84 and exact formulas, so agreement to rounding of the quoted digits.
    for (const [e, n, lat, lon, h] of ref) {
      const p = enuToWgs84(e, n, 0, origin);
      expect(Math.abs(p.lat_deg - lat)).toBeLessThan(1e-8);
      expect(Math.abs(p.lon_deg - lon)).toBeLessThan(1e-8);
      expect(Math.abs(p.alt_m - h)).toBeLessThan(1e-3);
    }
  });
  it('gives UTM zone 26 north easting and northing to 1 mm', () => {
    // The geodesy library's Krueger series is accurate to nanometres within a zone; PROJ's to similar: 1 mm.
    const f = siteToRaster({ kind: 'utm', zone: 26, hemisphere: 'N' }, origin);
    const out = new Float64Array(3);
    for (const [e, n, , , h, E, N] of ref) {
      f(e, n, out);
      expect(Math.abs(out[0] - E)).toBeLessThan(1e-3);
      expect(Math.abs(out[1] - N)).toBeLessThan(1e-3);
      expect(Math.abs(out[2] - h)).toBeLessThan(1e-3);
    }
  });
});

function campaignWith(terrain: Record<string, unknown>, extra: Record<string, unknown> = {}) {
  const c = structuredClone(tinyCampaignObject()) as Record<string, any>;
  c.site = { origin_wgs84: origin, terrain, ...extra };
  return c;
}

describe('terrain rasters into the site frame', () => {
  const dir = mkdtempSync(join(tmpdir(), 'wp-terrain-'));
  // A plane tilted in the site frame: exact under bilinear interpolation, so what remains is the coordinate handling.
  const plane = (e: number, n: number) => 20 + 0.004 * e + 0.002 * n;

  it('reads a UTM GeoTIFF (pixel-is-area, north-up) and recovers the site heights to 2 cm', async () => {
    // Write the raster: every pixel centre's site position found by inverting the UTM mapping numerically (Newton on
    // siteToRaster), its ellipsoidal height = site height + height of the tangent plane there.
    const f = siteToRaster({ kind: 'utm', zone: 26, hemisphere: 'N' }, origin);
    const tmp = new Float64Array(3);
    const d = 20, nx = 130, ny = 110;
    f(-1300, 1100, tmp);
    const x0 = tmp[0], y1 = tmp[1];
    const values = new Float32Array(nx * ny);
    for (let j = 0; j < ny; j++)
      for (let i = 0; i < nx; i++) {
        const X = x0 + i * d, Y = y1 - j * d;
        let e = X - x0 - 1300, n = Y - y1 + 1100;
        for (let k = 0; k < 4; k++) { f(e, n, tmp); e += X - tmp[0]; n += Y - tmp[1]; }
        f(e, n, tmp);
        values[i + j * nx] = plane(e, n) + tmp[2];
      }
    const buf = writeArrayBuffer(values, { width: nx, height: ny, ModelPixelScale: [d, d, 0], ModelTiepoint: [0, 0, 0, x0 - d / 2, y1 + d / 2, 0], GTRasterTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32626, GTModelTypeGeoKey: 1 } as never);
    writeFileSync(join(dir, 'utm.tif'), Buffer.from(buf));
    const c = resolveCampaign(campaignWith({ file: 'utm.tif' }), join(dir, 'c.yaml'));
    const t = await loadTerrain({ ...c, instruments: c.instruments.map((i) => ({ ...i, position: [0, 0, 0] as [number, number, number] })) });
    // Float32 heights near 60-70 m hold about 4 micrometres; the lattice interpolation of the mapping well below a
    // millimetre; the resampling is bilinear of a plane: 2 cm covers the Float32 rounding of the tilted plane.
    for (const [e, n] of [[0, 0], [250, -300], [-1000, 800], [900, 250]]) expect(Math.abs(t.heightAt(e, n) - plane(e, n))).toBeLessThan(0.02);
  });

  it('reads an XYZ grid in the site frame, and refuses irregular or incomplete grids naming the file', () => {
    let text = 'x,y,z\n';
    for (let n = -100; n <= 100; n += 50) for (let e = -200; e <= 200; e += 50) text += `${e},${n},${plane(e, n)}\n`;
    writeFileSync(join(dir, 'g.xyz'), text);
    const r = readXyzGrid(join(dir, 'g.xyz'), {});
    expect([r.nx, r.ny, r.dx, r.dy]).toEqual([9, 5, 50, 50]);
    writeFileSync(join(dir, 'hole.xyz'), text.split('\n').filter((_, i) => i !== 7).join('\n'));
    expect(() => readXyzGrid(join(dir, 'hole.xyz'), {})).toThrow(/hole\.xyz: not a regular grid: 1 of 45 nodes missing/);
    writeFileSync(join(dir, 'odd.xyz'), 'x,y,z\n0,0,1\n10,0,1\n25,0,1\n0,10,1\n10,10,1\n25,10,1\n');
    expect(() => readXyzGrid(join(dir, 'odd.xyz'), {})).toThrow(/odd\.xyz: not a regular grid: x steps 10 and 15/);
  });

  it('refuses a raster that does not cover an instrument, naming the key and the instrument', async () => {
    let text = 'x,y,z\n';
    for (let n = -100; n <= 100; n += 50) for (let e = -200; e <= 200; e += 50) text += `${e},${n},5\n`;
    writeFileSync(join(dir, 'small.xyz'), text);
    const c = resolveCampaign(campaignWith({ file: 'small.xyz' }), join(dir, 'c.yaml'));
    await expect(loadTerrain(c)).rejects.toThrow(/c\.yaml: site\.terrain: the terrain raster .*small\.xyz does not cover instrument "a" at east/);
  });

  it('refuses a GeoTIFF in a coordinate system it cannot convert, or without one', async () => {
    const v = new Float32Array(16).fill(1);
    writeFileSync(join(dir, 'merc.tif'), Buffer.from(writeArrayBuffer(v, { width: 4, height: 4, ModelPixelScale: [10, 10, 0], ModelTiepoint: [0, 0, 0, 0, 0, 0], ProjectedCSTypeGeoKey: 3857, GTModelTypeGeoKey: 1 } as never)));
    const c1 = resolveCampaign(campaignWith({ file: 'merc.tif' }), join(dir, 'c.yaml'));
    await expect(loadTerrain(c1)).rejects.toThrow(/merc\.tif: terrain raster in EPSG:3857, which wakeplane cannot convert/);
    writeFileSync(join(dir, 'none.tif'), Buffer.from(writeArrayBuffer(v, { width: 4, height: 4, ModelPixelScale: [10, 10, 0], ModelTiepoint: [0, 0, 0, 0, 0, 0], ProjectedCSTypeGeoKey: 32767, GTModelTypeGeoKey: 1 } as never)));
    const c2 = resolveCampaign(campaignWith({ file: 'none.tif' }), join(dir, 'c.yaml'));
    await expect(loadTerrain(c2)).rejects.toThrow(/c\.yaml: site\.terrain\.crs: the GeoTIFF .*none\.tif states no coordinate system/);
    const c3 = resolveCampaign(campaignWith({ file: 'merc.tif', crs: 'EPSG:2056' }), join(dir, 'c.yaml'));
    await expect(loadTerrain(c3)).rejects.toThrow(/site\.terrain\.crs: cannot convert this coordinate system/);
  });

  it('refuses a WGS84 or UTM raster without the site origin', async () => {
    const c = campaignWith({ file: 'utm.tif' });
    delete c.site.origin_wgs84;
    const r = resolveCampaign(c, join(dir, 'c.yaml'));
    await expect(loadTerrain(r)).rejects.toThrow(/site\.terrain: the raster is in EPSG:32626: site\.origin_wgs84 is needed/);
  });
});
