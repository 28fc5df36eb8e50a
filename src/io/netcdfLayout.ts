/**
 * Which NetCDF-4 variables hold which quantity, and how each stored value becomes SI: resolved once per file, before
 * any sample is read, with a one-line InputError naming the file and the variable for anything wrong.
 *
 * Layout (the one scanning instruments and archives use): radial velocity on (ray, gate) = (time, range); time,
 * azimuth and elevation on the ray dimension (azimuth or elevation may also be scalars, for a fixed angle); range
 * on the gate dimension, or on (ray, gate) when it varies per ray; CNR, optional, on (ray, gate). Variables are found
 * by the campaign's mapping (instruments[].columns.<key>: a variable name or path, or {name, units}), else by CF
 * standard name (time; radial_velocity_of_scatterers_away_from_instrument / ..._toward_instrument), else by the
 * names time, azimuth, elevation, range, radial_velocity, cnr.
 *
 * Values: CF packing first (stored * scale_factor + add_offset), then the `units` attribute (cfUnits.ts; the
 * mapping's `units` replaces a missing or wrong attribute), then the mapping's scale and offset (normally left out).
 * Missing values: _FillValue (or NetCDF's default fill of the type when the attribute is absent), missing_value,
 * valid_min / valid_max / valid_range and NaN, compared on the stored values as CF says. Sign: the radial velocity's
 * standard name decides; without one, instruments[].radialVelocitySign.
 */
import type { ColumnMap } from '../campaign/schema.ts';
import { InputError } from '../errors.ts';
import { unitsToSi, type Quantity } from './cfUnits.ts';
import { hdf5Message, type H5Module } from './hdf5.ts';

type H5File = InstanceType<H5Module['File']>;
type H5Dataset = InstanceType<H5Module['Dataset']>;

export const AWAY = 'radial_velocity_of_scatterers_away_from_instrument';
export const TOWARD = 'radial_velocity_of_scatterers_toward_instrument';

/** One resolved variable: SI = (stored * pack + packOffset) * scale + offset, folded into `scale`, `offset`. */
export interface NcVariable {
  key: string;
  name: string;
  ds: H5Dataset;
  shape: number[];
  scale: number;
  offset: number;
  /** Stored values meaning "missing" (compared exactly), and the valid interval of stored values. */
  fills: number[];
  validMin: number;
  validMax: number;
}

export interface NetcdfLayout {
  file: string;
  rays: number;
  gates: number;
  time: NcVariable;
  azimuth: NcVariable;
  elevation: NcVariable;
  range: NcVariable;
  radialVelocity: NcVariable;
  cnr: NcVariable | null;
  /** Rays per chunk of the radial velocity (1 when not chunked). */
  chunkRays: number;
}

const ROLES = [
  { key: 'time', q: 'time', names: ['time'], standard: ['time'] },
  { key: 'azimuth_deg', q: 'angle', names: ['azimuth'], standard: ['sensor_azimuth_angle'] },
  { key: 'elevation_deg', q: 'angle', names: ['elevation'], standard: [] },
  { key: 'range_m', q: 'length', names: ['range'], standard: [] },
  { key: 'radial_velocity_ms', q: 'speed', names: ['radial_velocity'], standard: [AWAY, TOWARD] },
  { key: 'cnr_db', q: 'ratio_db', names: ['cnr'], standard: [] },
] as const;

/** NetCDF's default fill values by HDF5 class/size (netcdf.h NC_FILL_*), used when _FillValue is absent. */
function defaultFill(ds: H5Dataset): number[] {
  const m = ds.metadata;
  if (m.type === 1) return [m.size === 4 ? 9.969209968386869e36 : 9.969209968386869e36]; // H5T_FLOAT
  if (m.type === 0) {
    const signed = m.signed;
    if (m.size === 1) return [signed ? -127 : 255];
    if (m.size === 2) return [signed ? -32767 : 65535];
    if (m.size === 4) return [signed ? -2147483647 : 4294967295];
  }
  return [];
}

function attr(ds: H5Dataset, name: string): unknown {
  try {
    if (!Object.prototype.hasOwnProperty.call(ds.attrs, name)) return undefined;
    const v = ds.get_attribute(name, false);
    return v;
  } catch {
    return undefined;
  }
}

function attrText(ds: H5Dataset, name: string): string | undefined {
  const v = attr(ds, name);
  if (typeof v === 'string') return v.replace(/\0+$/, '');
  if (Array.isArray(v) && typeof v[0] === 'string') return v.join('');
  return undefined;
}

function attrNumbers(ds: H5Dataset, name: string): number[] | undefined {
  const v = attr(ds, name);
  if (v === undefined || v === null) return undefined;
  if (typeof v === 'number' || typeof v === 'bigint') return [Number(v)];
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number | bigint>, Number);
  if (Array.isArray(v)) return v.map(Number);
  return undefined;
}

/** The root's entries for a message; groups marked, with the path form that reaches their variables. */
function contents(f: H5File): string {
  const keys = [...new Set(f.keys().map(ncName))];
  const groups = keys.filter((k) => { try { return (f.get(k) as { type?: string } | null)?.type === 'Group'; } catch { return false; } });
  const list = keys.map((k) => (groups.includes(k) ? `${k}/ (a group)` : k)).join(', ');
  return groups.length ? `${list}; variables in a group are named by path, e.g. "${groups[0]}/time"` : list;
}

function isDataset(e: unknown): e is H5Dataset {
  return !!e && (e as { type?: string }).type === 'Dataset';
}

/**
 * netCDF-C stores a variable that has a dimension's name without being its coordinate (range(time, range): ranges
 * per ray on a dimension also called range) as the HDF5 dataset "_nc4_non_coord_<name>", and the dimension itself as
 * a data-less dataset "<name>". Paths are mapped back to the NetCDF names, and such a variable wins over the
 * dimension of its name.
 */
const NON_COORD = '_nc4_non_coord_';
const ncName = (path: string) => path.replace(/^\//, '').replace(new RegExp(`(^|/)${NON_COORD}`), '$1');
const nonCoordPath = (name: string) => name.replace(/(^|\/)([^/]*)$/, `$1${NON_COORD}$2`);

function getDataset(f: H5File, path: string): H5Dataset | null {
  for (const p of [nonCoordPath(path), path]) {
    let e: unknown;
    try { e = f.get(p); } catch { e = null; }
    if (isDataset(e)) return e;
  }
  return null;
}

function find(f: H5File, file: string, key: string, ref: ColumnMap[keyof ColumnMap], names: readonly string[], standard: readonly string[]): H5Dataset | null {
  const mapped = ref === undefined ? undefined : typeof ref === 'string' ? ref : ref.name;
  if (mapped !== undefined) {
    const e = getDataset(f, mapped);
    if (!e) throw new InputError(file, undefined, `variable "${mapped}" (columns.${key}) not found in the file; it has: ${contents(f)}`);
    return e;
  }
  const datasets: H5Dataset[] = [];
  for (const k of f.keys()) {
    const e = f.get(k);
    if (isDataset(e)) datasets.push(e);
  }
  if (standard.length) {
    const hit = datasets.find((d) => standard.includes(attrText(d, 'standard_name') ?? ''));
    if (hit) return hit;
  }
  for (const n of names) {
    const hit = getDataset(f, n);
    if (hit) return hit;
  }
  return null;
}

function resolveVariable(f: H5File, file: string, role: (typeof ROLES)[number], columns: ColumnMap, optional: boolean): NcVariable | null {
  const ref = columns[role.key];
  const ds = find(f, file, role.key, ref, role.names, role.standard);
  const name0 = ds ? ncName(ds.path) : role.names[0];
  if (!ds) {
    if (optional) return null;
    throw new InputError(file, undefined, `variable "${name0}" for ${role.key} not found (set instruments[].columns.${role.key} to its name); the file has: ${contents(f)}`);
  }
  const name = name0;
  const m = ds.metadata;
  if (m.type !== 0 && m.type !== 1) throw new InputError(file, undefined, `variable "${name}": not numeric`);
  const override = typeof ref === 'object' && ref !== null ? ref : undefined;
  const units = override?.units ?? attrText(ds, 'units');
  if (units === undefined) throw new InputError(file, undefined, `variable "${name}": no units attribute (give them as instruments[].columns.${role.key}: {name: "${name}", units: "..."})`);
  const si = unitsToSi(units, role.q as Quantity, attrText(ds, 'calendar'));
  if (typeof si === 'string') throw new InputError(file, undefined, `variable "${name}": ${si}`);
  const pack = attrNumbers(ds, 'scale_factor')?.[0] ?? 1;
  const packOffset = attrNumbers(ds, 'add_offset')?.[0] ?? 0;
  const userScale = override?.scale ?? 1, userOffset = override?.offset ?? 0;
  // SI = ((stored * pack + packOffset) * si.scale + si.offset) * userScale + userOffset
  const scale = pack * si.scale * userScale;
  const offset = (packOffset * si.scale + si.offset) * userScale + userOffset;
  const fills = attrNumbers(ds, '_FillValue') ?? defaultFill(ds);
  fills.push(...(attrNumbers(ds, 'missing_value') ?? []));
  const range = attrNumbers(ds, 'valid_range');
  const validMin = range?.[0] ?? attrNumbers(ds, 'valid_min')?.[0] ?? -Infinity;
  const validMax = range?.[1] ?? attrNumbers(ds, 'valid_max')?.[0] ?? Infinity;
  return { key: role.key, name, ds, shape: ds.shape ?? [], scale, offset, fills, validMin, validMax };
}

const dims = (v: NcVariable) => (v.shape.length ? `[${v.shape.join(' x ')}]` : 'a scalar');

/**
 * Seconds between neighbouring values a 32-bit float time can hold at the file's own times (its first and last ray):
 * 2^(floor(log2 |stored|) - 23) stored units (IEEE 754 binary32: 24-bit significand). Time in single precision as
 * seconds since 1970 resolves 128 s, so rays a second apart collapse onto a few stamps; 0 for other types.
 */
function float32TimeStep(t: NcVariable, rays: number): number {
  const m = t.ds.metadata;
  if (m.type !== 1 || m.size !== 4 || rays === 0) return 0;
  let big = 0;
  for (const i of [0, rays - 1]) {
    let v = NaN;
    try { v = Number((t.ds.slice([[i, i + 1]]) as ArrayLike<number> | null)?.[0]); } catch { /* unreadable here: the reader says so */ }
    if (Number.isFinite(v) && !t.fills.includes(v)) big = Math.max(big, Math.abs(v));
  }
  return big > 0 ? 2 ** (Math.floor(Math.log2(big)) - 23) * Math.abs(t.scale) : 0;
}

/**
 * Resolves the layout of an open file.
 * @throws InputError(file, undefined, 'variable "x": ...') for a missing variable, wrong dimensions or unknown units.
 */
export function resolveNetcdf(f: H5File, file: string, columns: ColumnMap, sign: 'away' | 'toward'): { layout: NetcdfLayout; sign: 1 | -1 } {
  try {
    const [time, azimuth, elevation, range, vr, cnr] = ROLES.map((r) => resolveVariable(f, file, r, columns, r.key === 'cnr_db'));
    const v = vr!;
    if (v.shape.length !== 2) throw new InputError(file, undefined, `variable "${v.name}": radial velocity must be on (time, range), has ${dims(v)}`);
    const [rays, gates] = v.shape;
    const onRays = (x: NcVariable, scalarOk: boolean) => {
      const ok = (x.shape.length === 1 && x.shape[0] === rays) || (scalarOk && (x.shape.length === 0 || (x.shape.length === 1 && x.shape[0] === 1)));
      if (!ok) throw new InputError(file, undefined, `variable "${x.name}": must be on the ray dimension of "${v.name}" (${rays} rays)${scalarOk ? ' or a scalar' : ''}, has ${dims(x)}`);
    };
    // Stored the other way round, (range, time): say so of the radial velocity rather than blame the time.
    if (time!.shape.length === 1 && time!.shape[0] === gates && gates !== rays) {
      throw new InputError(file, undefined, `variable "${v.name}": must be on (time, range), but its first dimension has ${rays} and its second ${gates}, the length of "${time!.name}": stored as (range, time)?`);
    }
    onRays(time!, false);
    // Time that cannot tell rays apart would put them in the wrong windows without a trace: refuse it (1 s: rays
    // come a fraction of a second to a few seconds apart; windows are minutes long).
    const step = float32TimeStep(time!, rays);
    if (step > 1) throw new InputError(file, undefined, `variable "${time!.name}": stored as 32-bit floats, which resolve only ${step >= 10 ? Math.round(step) : step.toPrecision(2)} s at these times; store it as double (or with a reference date near the data)`);
    onRays(azimuth!, true);
    onRays(elevation!, true);
    const r = range!;
    const rOk = (r.shape.length === 1 && r.shape[0] === gates) || (r.shape.length === 2 && r.shape[0] === rays && r.shape[1] === gates);
    if (!rOk) throw new InputError(file, undefined, `variable "${r.name}": must be on the range dimension of "${v.name}" (${gates} gates) or on (time, range), has ${dims(r)}`);
    if (cnr && (cnr.shape.length !== 2 || cnr.shape[0] !== rays || cnr.shape[1] !== gates)) {
      throw new InputError(file, undefined, `variable "${cnr.name}": must be on (time, range) like "${v.name}" [${rays} x ${gates}], has ${dims(cnr)}`);
    }
    const sn = attrText(v.ds, 'standard_name');
    let s: 1 | -1 = sign === 'toward' ? -1 : 1;
    if (sn === AWAY) s = 1;
    else if (sn === TOWARD) s = -1;
    else if (sn !== undefined && sn !== '') throw new InputError(file, undefined, `variable "${v.name}": standard_name "${sn}" is not a radial velocity (${AWAY} or ${TOWARD})`);
    const chunkRays = v.ds.metadata.chunks?.[0] ?? 1;
    return { layout: { file, rays, gates, time: time!, azimuth: azimuth!, elevation: elevation!, range: r, radialVelocity: v, cnr, chunkRays }, sign: s };
  } catch (e) {
    if (e instanceof InputError) throw e;
    throw new InputError(file, undefined, `cannot read the NetCDF structure: ${hdf5Message(e)}`);
  }
}
