/**
 * The fields as NetCDF-4/CF: one file per plane, fields/<plane>.nc, growing by one step of its unlimited `window`
 * dimension as windows finish (at most FLUSH_WINDOWS windows are held before a write, and one batch waits in the
 * writer thread's queue at most). Variables and attributes come from the data
 * dictionary (records/tables/fields.ts and netcdf.ts): names, CF units, long names (the meanings) and standard names.
 *
 * Dimensions: window (unlimited; coordinate = window centre, seconds since 1970-01-01 UTC, with window_bounds),
 * z (cross plane: height above ground) or x (horizontal plane: downstream), y (lateral, rotor frame), nv (2).
 * Per window and cell: u, v, w (rotor frame; w is also the site-frame upward wind, upward_air_velocity), their
 * standard uncertainties u_se, v_se, w_se (ancillary variables; w_se with the standard-name modifier
 * `standard_error`), u/v/w_amplification, condition_number, min_crossing, samples, instruments, u/v/w_mask (flag
 * values 0-7 with flag_meanings), y_eff and z_eff/x_eff, the uncertainty budget's terms and the turbulence
 * statistics (records/tables/fields.ts BUDGET_COLUMNS), eastward_wind and northward_wind (site frame, from u and v
 * and the window's direction: e = -u sin(D) + v cos(D), n = -u cos(D) - v sin(D), D the direction the wind comes
 * from), the cell centres east and north, and longitude/latitude when the site is georeferenced. Per window:
 * direction (wind_from_direction), window_index. The site-frame components carry no standard error: it would need
 * the u-v covariance, which the retrieval does not keep.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Campaign, PlaneSpec } from '../campaign/types.ts';
import type { GridSpec } from '../grid/grid.ts';
import { enuToWgs84 } from '../geometry/geodetic.ts';
import { dictionaryAttrs, runAttributes } from '../io/netcdfTable.ts';
import { ncWorker, type NcAttr, type NcTarget, type NcWorker } from '../io/netcdfWrite.ts';
import type { Column } from '../records/dictionary.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { BUDGET_COLUMNS, fieldTable } from '../records/tables/fields.ts';
import { budgetArrays } from './budgetValues.ts';
import { UNITS } from '../records/units.ts';
import { NETCDF_VARIABLES } from '../records/tables/netcdf.ts';
import { maskReasonName, type FieldResult } from '../retrieval/types.ts';

const FLAG_MEANINGS = Object.keys(maskReasonName).sort((a, b) => Number(a) - Number(b)).map((k) => maskReasonName[Number(k)] || 'valid').join(' ');

const declared = new Map<string, Column>();
for (const c of [...fieldTable.columns, ...NETCDF_VARIABLES]) {
  const key = c.unit === 'D' ? `${c.name}_D` : c.name;
  if (!declared.has(key)) declared.set(key, c);
}
function attrs(name: string, extra: Record<string, NcAttr | undefined> = {}): Record<string, NcAttr | undefined> {
  const c = declared.get(name);
  if (!c) throw new Error(`NetCDF variable ${name} is not in the data dictionary`);
  return { ...dictionaryAttrs(c), ...extra };
}

interface PlaneFile {
  w: NcTarget & { close(): Promise<void>; abort(): Promise<void>; sync(): Promise<void> };
  /** The last flush's acknowledgement by the writer thread: the next flush waits for it (at most one in its queue). */
  inFlight: Promise<void> | undefined;
  path: string;
  planeId: string;
  windows: number;
  cells: number;
  /** Values of windows not yet written, per variable (written every FLUSH_WINDOWS windows and at the end). */
  pending: Map<string, TypedArray[]>;
  pendingWindows: number;
  /** Condition bins (ensembles) rather than windows. */
  bins: boolean;
  /** Bins: each one's condition, written as bin_label when the file closes. */
  labels: string[];
}

type TypedArray = Float64Array | Float32Array | Int32Array | Int8Array;

/** What a plane's file is made from: the plane's identity, orientation, level and grid. */
type PlaneOfFile = Pick<FieldResult, 'planeId' | 'orientation' | 'x_m' | 'z_m' | 'grid'>;

/**
 * Windows buffered per plane before a write: one HDF5 resize and write per variable for many windows instead of one
 * per window (measured about 7 ms per window and plane written one by one, most of it per-call overhead). Memory:
 * at most this many grids of ~30 variables per plane.
 */
const FLUSH_WINDOWS = 64;

function concat(parts: TypedArray[]): TypedArray {
  if (parts.length === 1) return parts[0];
  const n = parts.reduce((a, p) => a + p.length, 0);
  const out = new (parts[0].constructor as new (n: number) => TypedArray)(n);
  let at = 0;
  for (const p of parts) { out.set(p, at); at += p.length; }
  return out;
}

const f32 = (a: ArrayLike<number>) => Float32Array.from(a);

export class FieldNetcdf {
  private readonly files = new Map<string, PlaneFile>();
  constructor(
    private readonly c: Campaign,
    private readonly runDir: string,
    private readonly campaignSha256: string,
  ) {
    // the writer thread starts loading the HDF5 library now, while the ingest runs
    this.worker = ncWorker();
  }

  private readonly worker: NcWorker;

  /**
   * Opens the window file of every plane now (call before the ingest): the writer thread defines their dimensions
   * and variables while the samples are read, so the end of the run only appends. A file that gets no window is
   * removed when closed (as if never opened).
   */
  openPlanes(planes: { spec: PlaneSpec; grid: GridSpec }[]): void {
    if (planes.length) mkdirSync(join(this.runDir, 'fields'), { recursive: true });
    for (const p of planes) {
      const key = `${p.spec.id}|window`;
      if (!this.files.has(key)) this.open({ planeId: p.spec.id, orientation: p.spec.orientation, x_m: p.spec.orientation === 'cross' ? p.spec.x_m : NaN, z_m: p.spec.orientation === 'cross' ? NaN : p.spec.z_m, grid: p.grid }, false, key);
    }
  }

  private open(f: PlaneOfFile, bins: boolean, key: string): PlaneFile {
    const dim = bins ? 'bin' : 'window';
    const rel = join('fields', bins ? `${f.planeId}_bins.nc` : `${f.planeId}.nc`);
    const w = this.worker.create(join(this.runDir, rel));
    const g = f.grid, D = this.c.turbine.rotorDiameter_m;
    const second = f.orientation === 'cross' ? 'z' : 'x';
    const ys = Float64Array.from({ length: g.ny }, (_, i) => g.y0 + i * g.dy);
    const ss = Float64Array.from({ length: g.nz }, (_, i) => g.z0 + i * g.dz);
    if (bins) w.coordinate('bin', new Float64Array(0), attrs('bin'), { unlimited: true });
    else {
      w.coordinate('window', new Float64Array(0), attrs('window', { axis: 'T', calendar: 'standard', bounds: 'window_bounds' }), { unlimited: true });
      w.dimension('nv', 2);
    }
    w.coordinate(second, ss, attrs(second, second === 'z' ? { axis: 'Z', positive: 'up', standard_name: 'height' } : { axis: 'X' }));
    w.coordinate('y', ys, attrs('y', { axis: 'Y' }));
    w.variable('y_D', ['y'], ys.map((v) => v / D), attrs('y_D'));
    w.variable(`${second}_D`, [second], ss.map((v) => v / D), attrs(`${second}_D`));
    const grid = [dim, second, 'y'];
    const empty = new Float32Array(0);
    const geo = this.c.site.origin_wgs84 !== undefined;
    const coords = geo ? 'longitude latitude' : 'east north';
    const data = (name: string, extra: Record<string, NcAttr | undefined> = {}, type: 'f' | 'i' | 'b' = 'f') =>
      w.variable(name, grid, type === 'f' ? empty : type === 'i' ? new Int32Array(0) : new Int8Array(0), attrs(name, { ...(type === 'f' ? { _FillValue: new Float32Array([NaN]) } : {}), coordinates: coords, ...extra }));
    if (!bins) {
      w.variable('window_bounds', ['window', 'nv'], new Float64Array(0), { units: UNITS.unix_s.cf, calendar: 'standard' });
      w.variable('window_index', ['window'], new Int32Array(0), attrs('window_index'));
    }
    w.variable('direction', [dim], new Float64Array(0), attrs('direction', { standard_name: 'wind_from_direction' }));
    for (const k of ['u', 'v', 'w']) data(k, { ancillary_variables: `${k}_se ${k}_amplification ${k}_mask` });
    for (const k of ['u', 'v', 'w']) data(`${k}_se`, k === 'w' ? { standard_name: 'upward_air_velocity standard_error' } : {});
    for (const k of ['u', 'v', 'w']) data(`${k}_amplification`);
    data('condition_number');
    data('min_crossing');
    data('samples', {}, 'i');
    data('instruments', {}, 'b');
    for (const k of ['u', 'v', 'w']) data(`${k}_mask`, { flag_values: Int8Array.from(Object.keys(maskReasonName).map(Number).sort((a, b) => a - b)), flag_meanings: FLAG_MEANINGS, long_name: `mask of ${k}: why it is not retrieved (0 = valid)` }, 'b');
    data('y_eff');
    data(`${second}_eff`);
    for (const bc of BUDGET_COLUMNS) data(bc.name);
    data('eastward_wind', { comment: 'no standard error: it needs the u-v covariance, which is not kept' });
    data('northward_wind', { comment: 'no standard error: it needs the u-v covariance, which is not kept' });
    w.variable('east', grid, empty, attrs('east', { _FillValue: new Float32Array([NaN]) }));
    w.variable('north', grid, empty, attrs('north', { _FillValue: new Float32Array([NaN]) }));
    if (geo) {
      w.variable('longitude', grid, new Float64Array(0), attrs('longitude', { units: 'degrees_east' }));
      w.variable('latitude', grid, new Float64Array(0), attrs('latitude', { units: 'degrees_north' }));
    }
    w.global({
      ...runAttributes(this.c, this.campaignSha256, `wakeplane wind field, plane ${f.planeId}, campaign ${this.c.name}`),
      plane_id: f.planeId,
      plane_orientation: f.orientation,
      ...(f.orientation === 'cross' ? { plane_x_m: f.x_m } : { plane_z_m: f.z_m }),
      turbine_position_m: Float64Array.from(this.c.turbine.position),
    });
    const pf: PlaneFile = { w, inFlight: undefined, path: rel, planeId: f.planeId, windows: 0, cells: g.ny * g.nz, pending: new Map(), pendingWindows: 0, bins, labels: [] };
    this.files.set(key, pf);
    return pf;
  }

  /** Appends one field (one plane, one window) to its plane's file. */
  async add(f: FieldResult, ordinal: number): Promise<void> {
    const key = `${f.planeId}|${f.window.kind === 'ensemble' ? 'bin' : 'window'}`;
    const pf = this.files.get(key) ?? this.open(f, f.window.kind === 'ensemble', key);
    const n = pf.cells, g = f.grid;
    const w = { append: (name: string, values: TypedArray) => { const l = pf.pending.get(name); if (l) l.push(values); else pf.pending.set(name, [values]); } };
    const D = (f.direction_deg * Math.PI) / 180, sD = Math.sin(D), cD = Math.cos(D);
    if (pf.bins) {
      w.append('bin', Float64Array.of(ordinal));
      pf.labels.push(f.window.label ?? '');
    }
    else {
      w.append('window', Float64Array.of((f.window.start_s + f.window.end_s) / 2));
      w.append('window_bounds', Float64Array.of(f.window.start_s, f.window.end_s));
      w.append('window_index', Int32Array.of(ordinal));
    }
    w.append('direction', Float64Array.of(f.direction_deg));
    w.append('u', f32(f.u)); w.append('v', f32(f.v)); w.append('w', f32(f.w));
    w.append('u_se', f32(f.su)); w.append('v_se', f32(f.sv)); w.append('w_se', f32(f.sw));
    w.append('u_amplification', f32(f.dopU)); w.append('v_amplification', f32(f.dopV)); w.append('w_amplification', f32(f.dopW));
    w.append('condition_number', f32(f.cond));
    w.append('min_crossing', f32(f.minCrossing_deg));
    w.append('samples', Int32Array.from(f.samples));
    w.append('instruments', Int8Array.from(f.instruments));
    w.append('u_mask', Int8Array.from(f.maskU)); w.append('v_mask', Int8Array.from(f.maskV)); w.append('w_mask', Int8Array.from(f.maskW));
    w.append('y_eff', f32(f.yEff));
    w.append(f.orientation === 'cross' ? 'z_eff' : 'x_eff', f32(f.zEff));
    budgetArrays(f).forEach((a, k) => w.append(BUDGET_COLUMNS[k].name, f32(a)));
    const east = new Float32Array(n), north = new Float32Array(n);
    const ue = new Float32Array(n), un = new Float32Array(n);
    const tb = this.c.turbine.position;
    const origin = this.c.site.origin_wgs84;
    const lon = origin ? new Float64Array(n) : null, lat = origin ? new Float64Array(n) : null;
    for (let k = 0; k < n; k++) {
      const iy = k % g.ny, is = (k - iy) / g.ny;
      const y = g.y0 + iy * g.dy, s = g.z0 + is * g.dz;
      const x = f.orientation === 'cross' ? f.x_m : s;
      // rotor frame to site frame: x along the flow (-sin D, -cos D), y to its left (cos D, -sin D)
      const e = tb[0] - x * sD + y * cD, nn = tb[1] - x * cD - y * sD;
      east[k] = e; north[k] = nn;
      ue[k] = -f.u[k] * sD + f.v[k] * cD;
      un[k] = -f.u[k] * cD - f.v[k] * sD;
      if (origin) {
        const up = tb[2] + (f.orientation === 'cross' ? s : f.z_m);
        const p = enuToWgs84([e, nn, up], origin);
        lon![k] = p.lon_deg; lat![k] = p.lat_deg;
      }
    }
    w.append('eastward_wind', ue); w.append('northward_wind', un);
    w.append('east', east); w.append('north', north);
    if (lon && lat) { w.append('longitude', lon); w.append('latitude', lat); }
    pf.windows++;
    if (++pf.pendingWindows >= FLUSH_WINDOWS) await this.flush(pf);
  }

  /**
   * Hands the buffered windows to the writer thread, once it has written the previous batch: a run that makes
   * windows faster than the thread writes them waits here instead of queueing every window's arrays in memory (4,167
   * windows of 10 s held about 190 MB and kept the run 5 s after its last window). A writer's failure is not thrown
   * here: it surfaces, with the file named, when the file is closed.
   */
  private async flush(pf: PlaneFile): Promise<void> {
    await pf.inFlight;
    for (const [name, parts] of pf.pending) pf.w.append(name, concat(parts));
    pf.pending.clear();
    pf.pendingWindows = 0;
    pf.inFlight = pf.w.sync().catch(() => {});
  }

  /** Closes every file (temporary names renamed into place, once the writer thread is done) and describes them. */
  async close(): Promise<OutputRecord[]> {
    const out: OutputRecord[] = [];
    for (const pf of this.files.values()) {
      if (pf.windows === 0) {
        await pf.w.abort(); // opened early for a plane no window reached
        continue;
      }
      await this.flush(pf);
      // What each bin is (the file's bin numbers alone do not say): its condition, as in wake/ensembles.csv.
      if (pf.bins) pf.w.variable('bin_label', ['bin'], pf.labels, attrs('bin_label'));
      await pf.w.close();
      out.push({ kind: 'field-netcdf', path: pf.path, plane: pf.planeId, description: `retrieved wind fields of plane ${pf.planeId}, ${pf.windows} ${pf.bins ? 'condition bins' : 'windows'}, NetCDF-4/CF` });
    }
    this.files.clear();
    return out;
  }

  async abort(): Promise<void> {
    for (const pf of this.files.values()) await pf.w.abort();
    this.files.clear();
  }
}
