/**
 * The field table: one CSV per plane and window, one row per cell.
 *
 * Columns: plane, window_start, window_end (ISO 8601 UTC), y_m and z_m (cross plane: lateral and height above
 * ground; horizontal plane: y_m and x_m downstream), the same in rotor diameters (y_D, z_D or x_D), u, v, w (m/s,
 * rotor frame), su, sv, sw (standard uncertainties, m/s), dop_u, dop_v, dop_w (error amplification), cond
 * (condition number), min_crossing_deg, samples, instruments, mask_u, mask_v, mask_w (reason names, empty when
 * valid), masked (1 when any component is masked or assumed), direction_deg (window wind direction), y_eff_m and
 * z_eff_m (x_eff_m on a horizontal plane): the effective position of the retrieved u within the cell, metres (see
 * FieldResult.yEff).
 */
import { join } from 'node:path';
import { cellCentre } from '../grid/grid.ts';
import { csvRow, writeFileAtomic } from '../io/atomic.ts';
import { isoTime } from '../io/time.ts';
import { maskReasonName, type FieldResult } from '../retrieval/types.ts';

export function fieldTableName(f: FieldResult, ordinal: number): string {
  if (f.window.kind === 'ensemble') return join('fields', `${f.planeId}_bin${String(ordinal).padStart(3, '0')}.csv`);
  const stamp = isoTime(f.window.start_s).replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  return join('fields', `${f.planeId}_w${String(ordinal).padStart(3, '0')}_${stamp}.csv`);
}

/**
 * Writes one table (temporary file, then rename). Built in memory and written synchronously: a table holds one row
 * per cell (tens of kilobytes for a typical grid), and a synchronous write to the page cache costs far less than
 * the round trips of a stream, during which the ingest would stall (measured 5 ms per table with a stream).
 */
export async function writeFieldTable(f: FieldResult, path: string, diameter_m: number): Promise<void> {
  const second = f.orientation === 'cross' ? 'z' : 'x';
  const parts: string[] = [csvRow([
    'plane', 'window_start', 'window_end', 'y_m', `${second}_m`, 'y_D', `${second}_D`, 'u', 'v', 'w', 'su', 'sv', 'sw',
    'dop_u', 'dop_v', 'dop_w', 'cond', 'min_crossing_deg', 'samples', 'instruments', 'mask_u', 'mask_v', 'mask_w',
    'masked', 'direction_deg', 'y_eff_m', `${second}_eff_m`,
  ])];
  const ws = isoTime(f.window.start_s), we = isoTime(f.window.end_s);
  const n = f.grid.ny * f.grid.nz;
  for (let c = 0; c < n; c++) {
    const [y, z] = cellCentre(f.grid, c);
    const masked = f.maskU[c] !== 0 || f.maskV[c] !== 0 || f.maskW[c] !== 0;
    parts.push(csvRow([
      f.planeId, ws, we, y, z, y / diameter_m, z / diameter_m, f.u[c], f.v[c], f.w[c], f.su[c], f.sv[c], f.sw[c],
      f.dopU[c], f.dopV[c], f.dopW[c], f.cond[c], f.minCrossing_deg[c], f.samples[c], f.instruments[c],
      maskReasonName[f.maskU[c]], maskReasonName[f.maskV[c]], maskReasonName[f.maskW[c]], masked ? 1 : 0, f.direction_deg, f.yEff[c], f.zEff[c],
    ]));
  }
  writeFileAtomic(path, parts.join(''));
}
