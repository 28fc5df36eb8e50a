/**
 * What the simulator writes for a site with several turbines or terrain, beside the samples: each turbine's series
 * (one row a minute: nacelle direction, power, nacelle wind speed, status), the invented terrain raster (GeoTIFF in
 * the coordinate system the campaign states, or an XYZ grid), and the truth (per state and turbine: yaw offset,
 * effective inflow speed, power, and the wake centre at every other turbine downstream of it).
 */
import { join } from 'node:path';
import Utm from 'geodesy/utm.js';
import type { Campaign } from '../campaign/types.ts';
import { crsOfEpsg, siteToRaster } from '../geometry/crs.ts';
import { wgs84ToEnu } from '../geometry/geodetic.ts';
import { toRotor } from '../geometry/frames.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import { ConfigError } from '../errors.ts';
import { gaussian, mulberry32 } from '../math/random.ts';
import { wakeAt } from './flow.ts';
import type { SimSettings } from './settings.ts';
import type { GroundFn, SiteState, SiteTurbineTruth } from './siteFlow.ts';

interface StateTruth { start_s: number; site?: { state: SiteState; turbines: SiteTurbineTruth[] } }

/** One series file per turbine that has one; returns the paths written. */
export function writeSiteSeries(c: Campaign, s: SimSettings, truths: StateTruth[], L: number, rnd: () => number): string[] {
  const files: string[] = [];
  for (const t of c.turbines) {
    if (!t.series) continue;
    const out = mulberry32((s.seed * 131 + t.index * 977) >>> 0);
    const minutes = truths.length * Math.round(L / 60);
    const down = new Set<number>();
    while (down.size < Math.min(s.outageMinutes, minutes)) down.add(Math.floor(out() * minutes));
    const lines = ['time,yaw_deg,power_kw,wind_speed_ms,status'];
    let m = 0;
    for (const wt of truths) {
      const st = wt.site!.state, tt = wt.site!.turbines[t.index];
      for (let k = 0; k < L / 60; k++, m++) {
        const nacelle = (st.direction_deg + st.yaw_deg[t.index] + 0.5 * gaussian(rnd) + 360) % 360;
        const p = Math.max(0, tt.power_kw * (1 + 0.02 * gaussian(out)));
        const ws = tt.effectiveSpeed_ms * (1 + 0.02 * gaussian(out));
        lines.push(`${isoTime(wt.start_s + k * 60 + 30)},${nacelle.toFixed(2)},${p.toFixed(1)},${ws.toFixed(2)},${down.has(m) ? 0 : 1}`);
      }
    }
    writeFileAtomic(t.series.file, lines.join('\n') + '\n');
    files.push(t.series.file);
  }
  return files;
}

/**
 * The invented terrain as the campaign's raster: a GeoTIFF (Float32, pixel-is-area, north-up) in the coordinate
 * system of site.terrain.crs (site-frame metres with a user-defined coordinate system when crs is "site" or absent),
 * or an XYZ grid in the site frame. Heights of a WGS84 or UTM raster are ellipsoidal: site up + the origin's height +
 * the rise of the site plane above the ellipsoid (geometry/crs.ts).
 */
export async function writeTerrainRaster(c: Campaign, s: SimSettings, ground: GroundFn): Promise<void> {
  const ref = c.site.terrain!, t = s.terrain!;
  const [e0, e1, n0, n1] = t.extent_m;
  const d = t.spacing_m;
  if (ref.format === 'xyz') {
    if (ref.crs !== undefined && ref.crs !== 'site') throw new ConfigError(c.sourceFile, 'site.terrain.crs', 'the simulator writes XYZ grids in the site frame only', ref.crs);
    const cols = { x: ref.columns.x ?? 'x', y: ref.columns.y ?? 'y', z: ref.columns.z ?? 'z' };
    let text = csvRow([cols.x, cols.y, cols.z]);
    for (let n = n0; n <= n1 + 1e-9; n += d) for (let e = e0; e <= e1 + 1e-9; e += d) text += csvRow([e, n, +(ground(e, n) - ref.heightOffset_m).toFixed(3)]);
    writeFileAtomic(ref.file, text);
    return;
  }
  const { writeArrayBuffer } = await import('geotiff');
  const code = ref.crs && ref.crs !== 'site' ? Number(ref.crs.split(':')[1]) : undefined;
  const crs = code !== undefined ? crsOfEpsg(code) : { kind: 'site' as const };
  if (!crs) throw new ConfigError(c.sourceFile, 'site.terrain.crs', 'the simulator cannot write this coordinate system', ref.crs);
  const origin = c.site.origin_wgs84;
  let x0: number, y1: number, dx: number, dy: number, nx: number, ny: number;
  let value: (i: number, j: number) => number;
  if (crs.kind === 'site') {
    dx = dy = d; nx = Math.round((e1 - e0) / d) + 1; ny = Math.round((n1 - n0) / d) + 1; x0 = e0; y1 = n1;
    value = (i, j) => ground(e0 + i * d, n1 - j * d) - ref.heightOffset_m;
  } else {
    if (!origin) throw new ConfigError(c.sourceFile, 'site.origin_wgs84', 'needed to write a terrain raster in WGS84 or UTM');
    const toRaster = siteToRaster(crs, origin);
    const a = new Float64Array(3), b = new Float64Array(3);
    toRaster(e0, n0, a); toRaster(e1, n1, b);
    // Pixel size: the site spacing in the raster's units, from the scale along the diagonal.
    const scale = Math.hypot(b[0] - a[0], b[1] - a[1]) / Math.hypot(e1 - e0, n1 - n0);
    dx = dy = d * scale;
    x0 = Math.min(a[0], b[0]); y1 = Math.max(a[1], b[1]);
    nx = Math.ceil(Math.abs(b[0] - a[0]) / dx) + 1; ny = Math.ceil(Math.abs(b[1] - a[1]) / dy) + 1;
    const toSite = (x: number, y: number): [number, number] => {
      if (crs.kind === 'geographic') { const p = wgs84ToEnu({ lat_deg: y, lon_deg: x, alt_m: origin.alt_m }, origin); return [p[0], p[1]]; }
      return utmPointToSite(crs.zone, crs.hemisphere, x, y, origin);
    };
    const tmp = new Float64Array(3);
    value = (i, j) => {
      const [e, n] = toSite(x0 + i * dx, y1 - j * dy);
      toRaster(e, n, tmp);
      return ground(e, n) + tmp[2] - ref.heightOffset_m;
    };
  }
  const values = new Float32Array(nx * ny);
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) values[i + j * nx] = value(i, j);
  // Pixel-is-area: the tie point is the outer corner of the first pixel, half a pixel before its centre.
  const meta: Record<string, unknown> = {
    width: nx, height: ny, ModelPixelScale: [dx, dy, 0], ModelTiepoint: [0, 0, 0, x0 - dx / 2, y1 + dy / 2, 0], GTRasterTypeGeoKey: 1,
  };
  if (crs.kind === 'utm') { meta.ProjectedCSTypeGeoKey = code; meta.GTModelTypeGeoKey = 1; }
  else if (crs.kind === 'geographic') { meta.GeographicTypeGeoKey = 4326; meta.GTModelTypeGeoKey = 2; }
  else { meta.ProjectedCSTypeGeoKey = 32767; meta.GTModelTypeGeoKey = 1; }
  const buf = writeArrayBuffer(values, meta as never);
  writeFileAtomic(ref.file, Buffer.from(buf));
}

function utmPointToSite(zone: number, hemisphere: 'N' | 'S', x: number, y: number, origin: { lat_deg: number; lon_deg: number; alt_m: number }): [number, number] {
  const ll = new Utm(zone, hemisphere, x, y).toLatLon();
  const p = wgs84ToEnu({ lat_deg: ll.lat, lon_deg: ll.lon, alt_m: origin.alt_m }, origin);
  return [p[0], p[1]];
}

/** truth/site_truth.csv: per state and turbine its yaw, inflow and power; the wake centre at each turbine downstream. */
export function writeSiteTruth(c: Campaign, s: SimSettings, states: (StateTruth & { end_s: number; state: SiteState; turbines: SiteTurbineTruth[] })[], dir: string): void {
  let text = csvRow(['start', 'end', 'start_s', 'end_s', 'direction_deg', 'free_speed_ms', 'turbine', 'yaw_offset_deg', 'effective_speed_ms', 'ct', 'power_kw', 'at_turbine', 'x_m', 'wake_centre_y_m', 'wake_amplitude', 'wake_sigma_y_m']);
  for (const st of states) {
    for (const t of st.turbines) {
      const base = [isoTime(st.start_s), isoTime(st.end_s), st.start_s, st.end_s, st.state.direction_deg, st.state.hubSpeed_ms, t.turbine.id, t.params.yaw_deg, t.effectiveSpeed_ms, t.params.ct, t.power_kw];
      const downstream = st.turbines.filter((o) => o !== t).map((o) => ({ o, q: toRotor(t.frame, o.turbine.position) })).filter(({ q }) => q[0] > 0);
      if (downstream.length === 0) text += csvRow([...base, '', '', '', '', '']);
      for (const { o, q } of downstream) {
        const wk = wakeAt(q[0], t.params);
        text += csvRow([...base, o.turbine.id, q[0], wk.yc, wk.amplitude, wk.sigmaY]);
      }
    }
  }
  writeFileAtomic(join(dir, 'site_truth.csv'), text);
  writeFileAtomic(join(dir, 'site_truth_settings.json'), JSON.stringify({ note: 'simulator truth of a site with several turbines: wake centres in each upstream turbine\'s rotor frame (y positive to the left looking downstream)', settings: s }, null, 2) + '\n');
}
