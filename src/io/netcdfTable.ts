/**
 * NetCDF-4/CF versions of the run's tables: a declared table (records/) written as one variable per column along a
 * row dimension, with the dictionary's CF units, long names (the meanings) and standard names; text columns as
 * strings; ISO time columns left out where the same instant is written in seconds since 1970 (which CF readers
 * decode as times). Also the global attributes every NetCDF output of a run carries.
 */
import type { Campaign } from '../campaign/types.ts';
import { netcdfNames, type Column } from '../records/dictionary.ts';
import type { Cell, TableLayout } from '../records/tableText.ts';
import { UNITS } from '../records/units.ts';
import { VERSION } from '../version.ts';
import type { NcAttr, NcTarget } from './netcdfWrite.ts';

/** Dictionary attributes of a variable: units, long_name (the meaning), standard_name. */
export function dictionaryAttrs(c: Column): Record<string, NcAttr | undefined> {
  return { units: UNITS[c.unit].cf, long_name: c.meaning, standard_name: c.standardName };
}

/** Global attributes every NetCDF output of a run carries (CF 1.8 section 2.6.2). */
export function runAttributes(c: Campaign, campaignSha256: string, title: string): Record<string, NcAttr> {
  return {
    Conventions: 'CF-1.8',
    title,
    history: `${new Date().toISOString()} wakeplane ${process.argv.slice(2).join(' ')}`.trim(),
    source: `wakeplane ${VERSION}: multi-lidar retrieval of the wind in planes behind a turbine`,
    wakeplane_version: VERSION,
    campaign_name: c.name,
    campaign_file: c.sourceFile,
    campaign_sha256: campaignSha256,
    settings: JSON.stringify({ qc: c.qc, windows: c.windows, retrieval: c.retrieval, windDirection: c.windDirection, inflow: c.inflow, wake: c.wake }),
    rotor_diameter_m: c.turbine.rotorDiameter_m,
    hub_height_m: c.turbine.hubHeight_m,
    comment: 'Research measurements with stated uncertainties (lower bounds: samples within a window are correlated); not on their own a basis for turbine control, load or operating decisions.',
  };
}

/** Writes the rows of a declared table along dimension `dim` (a row-number coordinate). */
export function writeTableNetcdf(w: NcTarget, L: TableLayout, rows: readonly Cell[][], dim: string): void {
  w.coordinate(dim, Int32Array.from(rows, (_, i) => i), { long_name: `${L.table.row} (row number)` });
  const names = netcdfNames(L.columns, [dim]);
  L.columns.forEach((c, k) => {
    const name = names[k];
    if (name === null) return;
    if (c.unit === 'text') {
      w.variable(name, [dim], rows.map((r) => (r[k] === undefined || r[k] === null ? '' : String(r[k]))), { long_name: c.meaning });
      return;
    }
    const v = Float64Array.from(rows, (r) => {
      const x = r[k];
      return typeof x === 'number' ? x : typeof x === 'boolean' ? Number(x) : NaN;
    });
    const extra = c.unit === 'unix_s' ? { calendar: 'standard' } : {};
    w.variable(name, [dim], v, { ...dictionaryAttrs(c), _FillValue: new Float64Array([NaN]), ...extra });
  });
}
