/**
 * The data dictionary: every column of every table wakeplane writes, and every variable of its NetCDF files,
 * declared once with its unit, frame, meaning and precision rule (precision.ts). CSV headers, NetCDF attributes,
 * the dictionary written with each run (dictionary.md, dictionary.json) and the README's column list all come from
 * these declarations, so they cannot drift apart.
 *
 * Naming: a column's `name` is what it is (no author names: published models keep their names in `meaning`); the
 * CSV header is the name followed by the unit's suffix (`u` in m/s -> `u_ms`, `y` in m -> `y_m`), the NetCDF
 * variable is the name with a CF `units` attribute, or the CSV header where an earlier column of the table has the
 * same name (`x` in m and `x_D` in rotor diameters): `netcdfNames`, used by the writer and the dictionary alike.
 */
import type { Precision } from './precision.ts';
import { UNITS, type UnitId } from './units.ts';

/** Frames (README conventions): rotor (x downstream, y left looking downstream, z up), site (east, north, up). */
export type Frame = 'rotor' | 'site' | 'instrument' | 'none';

export interface Column {
  name: string;
  unit: UnitId;
  frame: Frame;
  meaning: string;
  precision: Precision;
  /** CF standard name, where one exists. */
  standardName?: string;
  /** Only in tables of this plane orientation (the field table's second axis is z on cross planes, x on horizontal). */
  only?: 'cross' | 'horizontal';
  /** One column per instrument, headed `<instrument id>_<header>`. */
  perInstrument?: boolean;
}

export interface Table {
  /** Identifier used in code and in dictionary.json. */
  id: string;
  /** Path pattern under the run folder. */
  path: string;
  /** Other path patterns written with the same columns (condition-bin files). */
  also?: string[];
  /** What one row is. */
  row: string;
  columns: Column[];
}

/** CSV header of a column: its name and its unit's suffix. */
export function header(c: Column): string {
  const suffix = UNITS[c.unit].csv;
  return suffix ? `${c.name}_${suffix}` : c.name;
}

/**
 * NetCDF variable name of each column of a table written as NetCDF rows (null: not written, as ISO time text next to
 * its Unix-seconds twin): the column's name, or its CSV header when the name is taken (by `reserved`, e.g. the row
 * dimension, or an earlier column).
 */
export function netcdfNames(columns: readonly Column[], reserved: readonly string[] = []): (string | null)[] {
  const used = new Set(reserved);
  return columns.map((c) => {
    if (c.unit === 'iso') return null;
    const name = used.has(c.name) ? header(c) : c.name;
    used.add(name);
    return name;
  });
}

/** Shorthand for declarations. */
export function col(name: string, unit: UnitId, precision: Precision, meaning: string, extra: Partial<Column> = {}): Column {
  return { name, unit, frame: 'none', meaning, precision, ...extra };
}

export const dec = (decimals: number): Precision => ({ kind: 'decimals', decimals });
export const sig = (digits: number): Precision => ({ kind: 'significant', digits });
/** A standard uncertainty: two significant digits, zeros kept (GUM 7.2.6). */
export const SE: Precision = { kind: 'significant', digits: 2, keepZeros: true };
/** Rounded by the uncertainty in column `by` (its header), never finer than `finest` decimals. */
export const byUnc = (by: string, finest: number): Precision => ({ kind: 'uncertainty', by, finest });
export const INT: Precision = { kind: 'integer' };
export const TEXT: Precision = { kind: 'text' };
export const TIME: Precision = { kind: 'time' };
