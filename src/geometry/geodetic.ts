/**
 * WGS84 latitude/longitude/height to the local site frame (east, north, up, metres) about an origin.
 *
 * Geodetic to Earth-centred Earth-fixed coordinates uses the `geodesy` library (WGS84 ellipsoid); the rotation of
 * the ECEF difference into the local tangent plane is the standard ENU rotation
 * (e = -sin lon dx + cos lon dy; n = -sin lat cos lon dx - sin lat sin lon dy + cos lat dz;
 *  u = cos lat cos lon dx + cos lat sin lon dy + sin lat dz).
 */
import LatLon, { Cartesian } from 'geodesy/latlon-ellipsoidal.js';
import type { Vec3 } from '../campaign/types.ts';

export interface Wgs84 {
  lat_deg: number;
  lon_deg: number;
  alt_m: number;
}

export function wgs84ToEnu(p: Wgs84, origin: Wgs84): Vec3 {
  const a = new LatLon(p.lat_deg, p.lon_deg, p.alt_m).toCartesian();
  const o = new LatLon(origin.lat_deg, origin.lon_deg, origin.alt_m).toCartesian();
  const dx = a.x - o.x;
  const dy = a.y - o.y;
  const dz = a.z - o.z;
  const lat = (origin.lat_deg * Math.PI) / 180;
  const lon = (origin.lon_deg * Math.PI) / 180;
  const sl = Math.sin(lat), cl = Math.cos(lat), so = Math.sin(lon), co = Math.cos(lon);
  return [-so * dx + co * dy, -sl * co * dx - sl * so * dy + cl * dz, cl * co * dx + cl * so * dy + sl * dz];
}

/**
 * The inverse: a site-frame point (east, north, up about the origin) to WGS84 latitude, longitude and ellipsoidal
 * height, by the transposed ENU rotation and the library's ECEF-to-geodetic conversion.
 */
export function enuToWgs84(p: Vec3, origin: Wgs84): Wgs84 {
  const o = new LatLon(origin.lat_deg, origin.lon_deg, origin.alt_m).toCartesian();
  const lat = (origin.lat_deg * Math.PI) / 180;
  const lon = (origin.lon_deg * Math.PI) / 180;
  const sl = Math.sin(lat), cl = Math.cos(lat), so = Math.sin(lon), co = Math.cos(lon);
  const [e, n, u] = p;
  const c = new Cartesian(o.x - so * e - sl * co * n + cl * co * u, o.y + co * e - sl * so * n + cl * so * u, o.z + cl * n + sl * u);
  const g = c.toLatLon();
  return { lat_deg: g.lat, lon_deg: g.lon, alt_m: g.height };
}
