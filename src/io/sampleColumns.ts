/**
 * The header of a sample file: which column holds which quantity, and the scale and offset that turn each stored
 * value into its SI unit (campaign key `instruments[].columns`). Resolved once per file, before any data row.
 */
import type { ColumnMap } from '../campaign/schema.ts';
import { InputError } from '../errors.ts';
import { excerpt } from './excerpt.ts';
import { splitCsvLine } from './series.ts';

/** Quantities a sample file holds, in the order rows are checked. */
export const ROLE_KEYS = ['time', 'instrument', 'azimuth_deg', 'elevation_deg', 'range_m', 'radial_velocity_ms', 'cnr_db'] as const;
export type RoleKey = (typeof ROLE_KEYS)[number];
export const R_IGNORE = -1, R_TIME = 0, R_INST = 1, R_AZ = 2, R_EL = 3, R_RANGE = 4, R_VR = 5, R_CNR = 6;

export interface ColumnLayout {
  file: string;
  /** Header names as read (trimmed, BOM removed). */
  header: string[];
  /** Role of each column (R_IGNORE for columns not used). */
  roleOf: Int8Array;
  /** Column of each role, -1 when absent (only instrument and cnr_db may be absent). */
  colOf: Int32Array;
  /** Columns up to the last used one: a row needs at least this many fields. */
  needed: number;
  /** Per role: SI value = stored * scale + offset. The 'toward' sign is folded into the radial velocity's pair. */
  scale: Float64Array;
  offset: Float64Array;
}

function describe(columns: ColumnMap, key: RoleKey): string {
  const ref = columns[key];
  return ref === undefined ? `columns.${key} not set, default header name` : `columns.${key} = ${JSON.stringify(ref)}`;
}

/**
 * Resolves the header line (already decoded, without line break) against the column map.
 * @throws InputError(file, 1, ...) naming a missing required column and its mapping, or a column used twice.
 */
export function resolveColumns(
  file: string,
  headerLine: string,
  columns: ColumnMap,
  sign: 'away' | 'toward',
  ownerKnown: boolean,
): ColumnLayout {
  const line = headerLine.replace(/^\uFEFF/, '');
  // eslint-disable-next-line no-control-regex
  if (/[\x00-\x08\x0e-\x1f\uFFFD]/.test(line)) {
    throw new InputError(file, 1, `the first line is not a CSV header: it holds control or undecodable bytes (starts ${excerpt(line, 24)}); is this a data file?`);
  }
  const header = splitCsvLine(line).map((h) => h.trim());
  const colOf = new Int32Array(ROLE_KEYS.length).fill(-1);
  const scale = new Float64Array(ROLE_KEYS.length).fill(1);
  const offset = new Float64Array(ROLE_KEYS.length);
  const roleOf = new Int8Array(header.length).fill(R_IGNORE);
  ROLE_KEYS.forEach((key, r) => {
    const ref = columns[key];
    const name = ref === undefined ? key : typeof ref === 'string' ? ref : ref.name;
    if (ref !== undefined && typeof ref !== 'string') {
      scale[r] = ref.scale ?? 1;
      offset[r] = ref.offset ?? 0;
    }
    const c = header.indexOf(name);
    const optional = r === R_CNR || (r === R_INST && ownerKnown);
    if (c < 0) {
      if (optional) return;
      throw new InputError(
        file,
        1,
        `missing required column "${name}" for ${key} (${describe(columns, key)})` +
          (r === R_INST ? ' and the file has no owning instrument' : '') +
          `; the header has: ${excerpt(header.join(','), 100)}`,
      );
    }
    if (roleOf[c] !== R_IGNORE) {
      throw new InputError(file, 1, `column ${excerpt(name, 40)} is mapped twice: ${ROLE_KEYS[roleOf[c]]} and ${key}`);
    }
    roleOf[c] = r;
    colOf[r] = c;
  });
  if (sign === 'toward') {
    scale[R_VR] = -scale[R_VR];
    offset[R_VR] = -offset[R_VR];
  }
  let needed = 0;
  for (let c = 0; c < roleOf.length; c++) if (roleOf[c] !== R_IGNORE) needed = c + 1;
  return { file, header, roleOf, colOf, needed, scale, offset };
}
