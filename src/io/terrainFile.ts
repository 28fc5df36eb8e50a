/**
 * Reading a terrain model (campaign key site.terrain) into a site-frame height grid (geometry/terrain.ts):
 * - GeoTIFF through the `geotiff` library: the first band, its georeference read from the tags themselves (GeoTIFF
 *   1.0, section 2.6.1: a tie point with a pixel scale, X = (I - i) Sx + x, Y = -(J - j) Sy + y; or the model
 *   transformation X = a I + b J + d, Y = e I + f J + h, rotation terms b and e included), GDAL's no-data value,
 *   and the coordinate system from its GeoKeys (ProjectedCSTypeGeoKey or GeographicTypeGeoKey); pixel centres
 *   follow GTRasterTypeGeoKey (area, the default: raster coordinates I + 1/2, J + 1/2).
 * - XYZ grid: CSV with a header and columns x, y, z (renamed by `columns`), one row per node of a regular grid
 *   (any order; empty z = no data).
 * A raster in the site frame is used as it is (rows turned north-up). One in WGS84 longitude/latitude or UTM, or a
 * turned one (rotation terms), is resampled once onto a regular site-frame grid at its own resolution: the exact transformation (geometry/crs.ts)
 * on a lattice of every 8th node, interpolated bilinearly between (the mapping is smooth: well below a millimetre
 * over such a lattice for sites of a few kilometres), then the raster sampled bilinearly at each node.
 *
 * Errors name the file (and line for XYZ) or the campaign key: a raster without a coordinate system the campaign
 * does not state, a coordinate system wakeplane cannot convert, one that disagrees with the campaign, a grid that is
 * not regular, or a raster that does not cover the instruments and turbines (checked by the caller: coverage()).
 */
import { readFileSync, statSync } from 'node:fs';
import Utm from 'geodesy/utm.js';
import type { Campaign, TerrainRef } from '../campaign/types.ts';
import { ConfigError, InputError } from '../errors.ts';
import { crsName, crsOfEpsg, siteToRaster, type RasterCrs } from '../geometry/crs.ts';
import { wgs84ToEnu } from '../geometry/geodetic.ts';
import { flatTerrain, GridTerrain, type Terrain } from '../geometry/terrain.ts';
import { splitCsvLine } from './series.ts';

/**
 * A raster in its own coordinates: node (i, j) at (x0 + i dx + j skew[0], y0 + i skew[1] + j dy) (skew absent:
 * axis-aligned), values row-major, i fastest.
 */
export interface Raster {
  x0: number;
  y0: number;
  dx: number;
  dy: number;
  /** Rotation terms of a turned raster: x per row, y per column (GeoTIFF model transformation b and e). */
  skew?: [number, number];
  nx: number;
  ny: number;
  values: Float64Array;
  /** From the file's own keys, when it has them. */
  crs?: RasterCrs;
  /** EPSG code found in the file (also when unsupported), for messages. */
  epsg?: number;
}

const KEY = 'site.terrain';

/** GeoTIFF bytes to a raster (first band). */
export async function readGeoTiff(path: string): Promise<Raster> {
  const { fromArrayBuffer } = await import('geotiff');
  let buf: Buffer;
  try {
    buf = readFileSync(path);
  } catch (e) {
    throw new InputError(path, undefined, `cannot read the terrain raster: ${(e as Error).message}`);
  }
  let image;
  try {
    const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength) as ArrayBuffer);
    image = await tiff.getImage();
  } catch (e) {
    throw new InputError(path, undefined, `not a readable GeoTIFF: ${(e as Error).message}`);
  }
  const nx = image.getWidth(), ny = image.getHeight();
  const keys = image.getGeoKeys() ?? {};
  const code = (keys.ProjectedCSTypeGeoKey ?? keys.GeographicTypeGeoKey) as number | undefined;
  const pixelIsPoint = keys.GTRasterTypeGeoKey === 2;
  const half = pixelIsPoint ? 0 : 0.5;
  const [a, b, d, e, f, h] = modelTransformation(path, image.getFileDirectory());
  const rasters = (await image.readRasters({ samples: [0] })) as unknown as ArrayLike<number>[];
  const band = rasters[0];
  const noData = image.getGDALNoData();
  const values = new Float64Array(nx * ny);
  for (let k = 0; k < values.length; k++) {
    const v = band[k];
    values[k] = noData !== null && v === noData ? NaN : v;
  }
  const out: Raster = { x0: d + half * (a + b), y0: h + half * (e + f), dx: a, dy: f, nx, ny, values };
  if (b !== 0 || e !== 0) out.skew = [b, e];
  if (code !== undefined && code !== 32767) {
    out.epsg = code;
    out.crs = crsOfEpsg(code);
  }
  return out;
}

/**
 * The affine map [a, b, d, e, f, h] from raster coordinates (I, J) to model coordinates, X = a I + b J + d,
 * Y = e I + f J + h, from the GeoTIFF tags (GeoTIFF 1.0, section 2.6.1). The tags are read directly: the library's
 * getResolution() drops the rotation terms and, for a model transformation, returns the row step with its sign
 * flipped (a north-up raster came out upside down).
 */
function modelTransformation(path: string, fd: { getValue(tag: 'ModelTiepoint' | 'ModelPixelScale' | 'ModelTransformation'): unknown }): [number, number, number, number, number, number] {
  const nums = (v: unknown) => (v && typeof (v as ArrayLike<number>).length === 'number' ? Array.from(v as ArrayLike<number>, Number) : undefined);
  const tie = nums(fd.getValue('ModelTiepoint')), scale = nums(fd.getValue('ModelPixelScale')), m = nums(fd.getValue('ModelTransformation'));
  if (tie && tie.length === 6 && scale && scale.length >= 2) {
    const [i, j, , x, y] = tie;
    return [scale[0], 0, x - i * scale[0], 0, -scale[1], y + j * scale[1]];
  }
  if (m && m.length === 16) {
    if (!(Math.abs(m[0] * m[5] - m[1] * m[4]) > 0)) throw new InputError(path, undefined, 'the GeoTIFF\'s model transformation is singular (ModelTransformationTag)');
    return [m[0], m[1], m[3], m[4], m[5], m[7]];
  }
  if (tie && tie.length > 6) throw new InputError(path, undefined, `the GeoTIFF is georeferenced by ${tie.length / 6} tie points without a pixel scale (a warped raster): reproject it onto a regular grid`);
  throw new InputError(path, undefined, 'the GeoTIFF has no georeference (tie point and pixel scale, or a model transformation)');
}

/** XYZ grid text to a raster (site coordinates unless the campaign says otherwise). */
export function readXyzGrid(path: string, columns: Record<string, string>): Raster {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw new InputError(path, undefined, `cannot read the terrain grid: ${(e as Error).message}`);
  }
  const lines = text.split(/\r?\n/);
  const sep = /\t/.test(lines[0] ?? '') && !/,/.test(lines[0] ?? '') ? '\t' : ',';
  const split = (l: string) => (sep === ',' ? splitCsvLine(l) : l.split(sep));
  const header = split(lines[0] ?? '').map((h) => h.trim());
  const col = (k: string) => {
    const i = header.indexOf(columns[k] ?? k);
    if (i < 0) throw new InputError(path, 1, `missing required column "${columns[k] ?? k}" (x, y, z: east, north, height)`);
    return i;
  };
  const cx = col('x'), cy = col('y'), cz = col('z');
  const xs: number[] = [], ys: number[] = [], zs: number[] = [], at: number[] = [];
  for (let i = 1; i < lines.length; i++) {
    if (lines[i].trim() === '') continue;
    const cells = split(lines[i]);
    const x = Number(cells[cx]), y = Number(cells[cy]);
    const zt = (cells[cz] ?? '').trim();
    const z = zt === '' ? NaN : Number(zt);
    if (!Number.isFinite(x) || !Number.isFinite(y)) throw new InputError(path, i + 1, 'x and y must be numbers');
    if (zt !== '' && !Number.isFinite(z)) throw new InputError(path, i + 1, `column "${header[cz]}": not a number: ${JSON.stringify(zt)}`);
    xs.push(x); ys.push(y); zs.push(z); at.push(i + 1);
  }
  const axis = (v: number[], name: string) => {
    const u = [...new Set(v)].sort((a, b) => a - b);
    if (u.length < 2) throw new InputError(path, undefined, `a terrain grid needs at least two distinct ${name} values`);
    const d = u[1] - u[0];
    for (let k = 2; k < u.length; k++) {
      if (Math.abs(u[k] - u[k - 1] - d) > 1e-6 * Math.max(1, Math.abs(d))) {
        throw new InputError(path, undefined, `not a regular grid: ${name} steps ${d} and ${u[k] - u[k - 1]} (at ${name} = ${u[k]})`);
      }
    }
    return { v0: u[0], d, n: u.length };
  };
  const ax = axis(xs, 'x'), ay = axis(ys, 'y');
  const values = new Float64Array(ax.n * ay.n).fill(NaN);
  const seen = new Uint8Array(values.length);
  for (let k = 0; k < xs.length; k++) {
    const i = Math.round((xs[k] - ax.v0) / ax.d), j = Math.round((ys[k] - ay.v0) / ay.d);
    const idx = i + j * ax.n;
    if (seen[idx]) throw new InputError(path, at[k], `node (${xs[k]}, ${ys[k]}) given twice`);
    seen[idx] = 1;
    values[idx] = zs[k];
  }
  const missing = seen.length - xs.length;
  if (missing > 0) throw new InputError(path, undefined, `not a regular grid: ${missing} of ${seen.length} nodes missing (give empty z for no data)`);
  return { x0: ax.v0, y0: ay.v0, dx: ax.d, dy: ay.d, nx: ax.n, ny: ay.n, values };
}

/** Coordinates of node (i, j) of a raster, in its own coordinate system. */
function rasterNode(r: Raster, i: number, j: number): [number, number] {
  const [bx, ey] = r.skew ?? [0, 0];
  return [r.x0 + i * r.dx + j * bx, r.y0 + i * ey + j * r.dy];
}

/** Bilinear value of a raster at (x, y) in its own coordinates; NaN outside or next to no-data. */
export function rasterValue(r: Raster, x: number, y: number): number {
  let fx: number, fy: number;
  if (r.skew) {
    // Fractional node indices: solve [dx b; e dy] (fx, fy) = (x - x0, y - y0).
    const [b, e] = r.skew, det = r.dx * r.dy - b * e, px = x - r.x0, py = y - r.y0;
    fx = (r.dy * px - b * py) / det; fy = (r.dx * py - e * px) / det;
  } else {
    fx = (x - r.x0) / r.dx; fy = (y - r.y0) / r.dy;
  }
  if (!(fx >= 0 && fy >= 0 && fx <= r.nx - 1 && fy <= r.ny - 1)) return NaN;
  let i = Math.floor(fx), j = Math.floor(fy);
  if (i === r.nx - 1) i--;
  if (j === r.ny - 1) j--;
  const s = fx - i, t = fy - j, k = i + j * r.nx, v = r.values;
  return (1 - t) * ((1 - s) * v[k] + s * v[k + 1]) + t * ((1 - s) * v[k + r.nx] + s * v[k + r.nx + 1]);
}

/** The raster's coordinate system: its own keys, checked against (or supplied by) the campaign's `crs`. */
export function resolveCrs(ref: Pick<TerrainRef, 'file' | 'crs' | 'format'>, r: Raster, campaignFile: string): RasterCrs {
  const stated = ref.crs === undefined ? undefined : ref.crs === 'site' ? ({ kind: 'site' } as RasterCrs) : crsOfEpsg(Number(ref.crs.split(':')[1]));
  if (ref.crs !== undefined && !stated) {
    throw new ConfigError(campaignFile, `${KEY}.crs`, 'cannot convert this coordinate system to the site frame: give the raster in the site frame, WGS84 (EPSG:4326) or UTM (EPSG:326zz/327zz)', ref.crs);
  }
  if (r.epsg !== undefined && !r.crs) {
    throw new InputError(ref.file, undefined, `terrain raster in EPSG:${r.epsg}, which wakeplane cannot convert to the site frame: reproject it to WGS84 (EPSG:4326), UTM (EPSG:326zz/327zz) or the site frame`);
  }
  if (r.crs && stated && crsName(r.crs) !== crsName(stated)) {
    throw new ConfigError(campaignFile, `${KEY}.crs`, `the raster ${ref.file} says ${crsName(r.crs)}`, ref.crs);
  }
  const crs = r.crs ?? stated ?? (ref.format === 'xyz' ? ({ kind: 'site' } as RasterCrs) : undefined);
  if (!crs) {
    throw new ConfigError(campaignFile, `${KEY}.crs`, `the GeoTIFF ${ref.file} states no coordinate system: set site.terrain.crs ("site" when it is in site-frame metres)`);
  }
  return crs;
}

/** A raster in any supported coordinate system as a site-frame terrain (heights in site-frame up). */
export function rasterToTerrain(r: Raster, crs: RasterCrs, heightOffset_m: number, origin?: { lat_deg: number; lon_deg: number; alt_m: number }): GridTerrain {
  if (crs.kind === 'site' && !r.skew) {
    // North-up, east-right in the site frame (a GeoTIFF's rows usually run southwards: dy < 0).
    const flipY = r.dy < 0, flipX = r.dx < 0;
    const heights = new Float64Array(r.nx * r.ny);
    for (let j = 0; j < r.ny; j++)
      for (let i = 0; i < r.nx; i++) {
        const src = (flipX ? r.nx - 1 - i : i) + (flipY ? r.ny - 1 - j : j) * r.nx;
        heights[i + j * r.nx] = r.values[src] + heightOffset_m;
      }
    return new GridTerrain({
      e0: flipX ? r.x0 + (r.nx - 1) * r.dx : r.x0, n0: flipY ? r.y0 + (r.ny - 1) * r.dy : r.y0,
      de: Math.abs(r.dx), dn: Math.abs(r.dy), ne: r.nx, nn: r.ny, heights,
    });
  }
  if (crs.kind !== 'site' && !origin) throw new RangeError('a WGS84 or UTM raster needs site.origin_wgs84');
  const toRaster = siteToRaster(crs, origin);
  // Site-frame extent of the raster: its corners and edge midpoints mapped to the site frame.
  const corners: [number, number][] = [];
  for (const i of [0, (r.nx - 1) / 2, r.nx - 1]) for (const j of [0, (r.ny - 1) / 2, r.ny - 1]) corners.push(rasterPointToSite(crs, ...rasterNode(r, i, j), origin));
  const eMin = Math.min(...corners.map((c) => c[0])), eMax = Math.max(...corners.map((c) => c[0]));
  const nMin = Math.min(...corners.map((c) => c[1])), nMax = Math.max(...corners.map((c) => c[1]));
  // Spacing: the raster's pixel size in metres (its finer axis).
  const a = rasterPointToSite(crs, ...rasterNode(r, 0, 0), origin), b = rasterPointToSite(crs, ...rasterNode(r, 1, 0), origin), c = rasterPointToSite(crs, ...rasterNode(r, 0, 1), origin);
  let step = Math.min(Math.hypot(b[0] - a[0], b[1] - a[1]), Math.hypot(c[0] - a[0], c[1] - a[1]));
  // At most 4 million nodes.
  step = Math.max(step, Math.sqrt(((eMax - eMin) * (nMax - nMin)) / 4e6));
  const ne = Math.max(2, Math.floor((eMax - eMin) / step) + 1), nn = Math.max(2, Math.floor((nMax - nMin) / step) + 1);
  const heights = new Float64Array(ne * nn);
  // Exact transformation on a lattice of every L-th node, bilinear in between.
  const L = 8;
  const le = Math.ceil((ne - 1) / L) + 1, ln = Math.ceil((nn - 1) / L) + 1;
  const lat = new Float64Array(3 * le * ln);
  const tmp = new Float64Array(3);
  for (let q = 0; q < ln; q++)
    for (let p = 0; p < le; p++) {
      toRaster(eMin + p * L * step, nMin + q * L * step, tmp);
      lat.set(tmp, 3 * (p + q * le));
    }
  for (let j = 0; j < nn; j++) {
    const q = Math.min(Math.floor(j / L), ln - 2), t = j / L - q;
    for (let i = 0; i < ne; i++) {
      const p = Math.min(Math.floor(i / L), le - 2), s = i / L - p;
      const k00 = 3 * (p + q * le), k10 = k00 + 3, k01 = k00 + 3 * le, k11 = k01 + 3;
      const f = (o: number) => (1 - t) * ((1 - s) * lat[k00 + o] + s * lat[k10 + o]) + t * ((1 - s) * lat[k01 + o] + s * lat[k11 + o]);
      heights[i + j * ne] = rasterValue(r, f(0), f(1)) + heightOffset_m - f(2);
    }
  }
  return new GridTerrain({ e0: eMin, n0: nMin, de: step, dn: step, ne, nn, heights });
}

function rasterPointToSite(crs: RasterCrs, x: number, y: number, origin?: { lat_deg: number; lon_deg: number; alt_m: number }): [number, number] {
  if (crs.kind === 'site' || !origin) return [x, y];
  if (crs.kind === 'geographic') {
    const p = wgs84ToEnu({ lat_deg: y, lon_deg: x, alt_m: origin.alt_m }, origin);
    return [p[0], p[1]];
  }
  return utmToSite(crs, x, y, origin);
}

function utmToSite(crs: Extract<RasterCrs, { kind: 'utm' }>, x: number, y: number, origin: { lat_deg: number; lon_deg: number; alt_m: number }): [number, number] {
  const ll = new Utm(crs.zone, crs.hemisphere, x, y).toLatLon();
  const p = wgs84ToEnu({ lat_deg: ll.lat, lon_deg: ll.lon, alt_m: origin.alt_m }, origin);
  return [p[0], p[1]];
}

const cache = new Map<string, Promise<Terrain>>();

/**
 * The campaign's terrain: flat ground at site.groundLevel_m without site.terrain, else the raster as a site-frame
 * grid. Checks that it covers every instrument and turbine. Cached per file and modification time.
 */
export function loadTerrain(c: Pick<Campaign, 'site' | 'sourceFile' | 'instruments' | 'turbines'>): Promise<Terrain> {
  const ref = c.site.terrain;
  if (!ref) return Promise.resolve(flatTerrain(c.site.groundLevel_m));
  let stamp = '';
  try {
    const st = statSync(ref.file);
    stamp = `${st.size}:${st.mtimeMs}`;
  } catch {
    throw new InputError(ref.file, undefined, 'terrain raster not found (site.terrain.file)');
  }
  const key = JSON.stringify([ref, stamp, c.site.origin_wgs84 ?? null]);
  let p = cache.get(key);
  if (!p) {
    p = (async () => {
      const raster = ref.format === 'geotiff' ? await readGeoTiff(ref.file) : readXyzGrid(ref.file, ref.columns);
      const crs = resolveCrs(ref, raster, c.sourceFile);
      if (crs.kind !== 'site' && !c.site.origin_wgs84) {
        throw new ConfigError(c.sourceFile, `${KEY}`, `the raster is in ${crsName(crs)}: site.origin_wgs84 is needed to place it in the site frame`);
      }
      return rasterToTerrain(raster, crs, ref.heightOffset_m, c.site.origin_wgs84);
    })();
    cache.set(key, p);
    p.catch(() => cache.delete(key));
  }
  return p.then((t) => {
    checkCoverage(t, c);
    return t;
  });
}

/** Every instrument and turbine must stand on the terrain model. */
export function checkCoverage(t: Terrain, c: Pick<Campaign, 'sourceFile' | 'instruments' | 'turbines' | 'site'>): void {
  if (t.flat) return;
  const where = c.site.terrain?.file ?? 'terrain';
  for (const [kind, id, p] of [
    ...c.instruments.map((i) => ['instrument', i.id, i.position] as const),
    ...c.turbines.map((x) => ['turbine', x.id, x.position] as const),
  ]) {
    if (!Number.isFinite(t.heightAt(p[0], p[1]))) {
      const [e0, e1, n0, n1] = t.extent;
      throw new ConfigError(c.sourceFile, KEY, `the terrain raster ${where} does not cover ${kind} "${id}" at east ${p[0].toFixed(1)}, north ${p[1].toFixed(1)} m (it covers east ${e0.toFixed(0)}..${e1.toFixed(0)}, north ${n0.toFixed(0)}..${n1.toFixed(0)} m, or has no data there)`);
    }
  }
}
