/**
 * The wake table and the profiles as NetCDF-4/CF (wake/wake_table.nc, dimension `row`; wake/profiles.nc,
 * dimension `point`), beside their CSV files, with the same columns and the dictionary's attributes; written by
 * the NetCDF output thread.
 */
import { join } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { runAttributes, writeTableNetcdf } from '../io/netcdfTable.ts';
import { ncWorker } from '../io/netcdfWrite.ts';
import type { OutputRecord } from '../records/manifest.ts';
import { L, profilesRows, wakeTableRows } from './output.ts';
import type { WakeAnalysis } from './types.ts';

export async function writeWakeNetcdf(a: WakeAnalysis, c: Campaign, runDir: string, campaignSha256: string): Promise<OutputRecord[]> {
  const files = [
    { kind: 'wake-table-netcdf', path: join('wake', 'wake_table.nc'), layout: L.table, rows: wakeTableRows(a), dim: 'row', what: 'wake table' },
    { kind: 'profiles-netcdf', path: join('wake', 'profiles.nc'), layout: L.profiles, rows: profilesRows(a), dim: 'point', what: 'cuts through the wake centre' },
  ];
  const out: OutputRecord[] = [];
  for (const f of files) {
    const w = ncWorker().create(join(runDir, f.path));
    writeTableNetcdf(w, f.layout, f.rows, f.dim);
    w.global(runAttributes(c, campaignSha256, `wakeplane ${f.what}, campaign ${c.name}`));
    await w.close();
    out.push({ kind: f.kind, path: f.path, description: `${f.what} as NetCDF-4/CF (the CSV's columns)` });
  }
  return out;
}
