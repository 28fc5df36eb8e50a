/**
 * Coordinate systems a terrain raster may come in, and the way from the site frame into each:
 * - "site": east, north (metres) of the site frame itself;
 * - EPSG:4326: WGS84 longitude, latitude (degrees);
 * - EPSG:326zz / EPSG:327zz: WGS84 / UTM zone zz, north / south (easting, northing, metres).
 * The last two need the site origin in WGS84 (site.origin_wgs84).
 *
 * Site frame to WGS84 is the inverse of geodetic.ts: ECEF = ECEF(origin) + R^T (e, n, u) with the local
 * east-north-up rotation R, then ECEF to latitude, longitude and ellipsoidal height with the `geodesy` library
 * (WGS84). UTM easting and northing from latitude and longitude use the same library (Karney's series, accurate to
 * nanometres within the zone). `heightOfPlane` is the ellipsoidal height of the site point (e, n, 0): the tangent
 * plane rises above the ellipsoid away from the origin by about (e^2 + n^2) / (2 R_earth), 0.3 m at 2 km, and a
 * raster's height H at (e, n) becomes the site-frame up coordinate H - heightOfPlane.
 */
import LatLon, { Cartesian } from 'geodesy/latlon-ellipsoidal.js';
import { LatLon as LatLonUtm } from 'geodesy/utm.js';
import type { Wgs84 } from './geodetic.ts';

export type RasterCrs = { kind: 'site' } | { kind: 'geographic' } | { kind: 'utm'; zone: number; hemisphere: 'N' | 'S' };

/** The coordinate system of an EPSG code, or undefined when wakeplane cannot convert it. */
export function crsOfEpsg(code: number): RasterCrs | undefined {
  if (code === 4326) return { kind: 'geographic' };
  if (code >= 32601 && code <= 32660) return { kind: 'utm', zone: code - 32600, hemisphere: 'N' };
  if (code >= 32701 && code <= 32760) return { kind: 'utm', zone: code - 32700, hemisphere: 'S' };
  return undefined;
}

export function crsName(c: RasterCrs): string {
  return c.kind === 'site' ? 'site' : c.kind === 'geographic' ? 'EPSG:4326' : `EPSG:${c.hemisphere === 'N' ? 326 : 327}${String(c.zone).padStart(2, '0')}`;
}

/** WGS84 latitude, longitude and ellipsoidal height of a site-frame point (east, north, up metres). */
export function enuToWgs84(e: number, n: number, u: number, origin: Wgs84): Wgs84 {
  const o = new LatLon(origin.lat_deg, origin.lon_deg, origin.alt_m).toCartesian();
  const lat = (origin.lat_deg * Math.PI) / 180, lon = (origin.lon_deg * Math.PI) / 180;
  const sl = Math.sin(lat), cl = Math.cos(lat), so = Math.sin(lon), co = Math.cos(lon);
  // R^T (e, n, u): the columns of the ENU rotation.
  const dx = -so * e - sl * co * n + cl * co * u;
  const dy = co * e - sl * so * n + cl * so * u;
  const dz = cl * n + sl * u;
  const p = new Cartesian(o.x + dx, o.y + dy, o.z + dz).toLatLon();
  return { lat_deg: p.lat, lon_deg: p.lon, alt_m: p.height };
}

/**
 * A function from site-frame (east, north) to the raster's coordinates, writing [x, y, heightOfPlane] into out
 * (heightOfPlane: see the file docblock; 0 for the site frame itself).
 */
export function siteToRaster(crs: RasterCrs, origin?: Wgs84): (e: number, n: number, out: Float64Array) => void {
  if (crs.kind === 'site') return (e, n, out) => { out[0] = e; out[1] = n; out[2] = 0; };
  if (!origin) throw new RangeError('a raster in WGS84 or UTM coordinates needs the site origin in WGS84');
  if (crs.kind === 'geographic') {
    return (e, n, out) => {
      const p = enuToWgs84(e, n, 0, origin);
      out[0] = p.lon_deg; out[1] = p.lat_deg; out[2] = p.alt_m;
    };
  }
  return (e, n, out) => {
    const p = enuToWgs84(e, n, 0, origin);
    const utm = new LatLonUtm(p.lat_deg, p.lon_deg).toUtm(crs.zone);
    // A southern-hemisphere zone keeps its false northing even for points just north of the equator.
    out[0] = utm.easting; out[1] = crs.hemisphere === 'S' && utm.hemisphere === 'N' ? utm.northing + 10_000_000 : utm.northing;
    out[2] = p.alt_m;
  };
}
