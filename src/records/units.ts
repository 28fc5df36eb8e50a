/**
 * The units output columns and variables are stated in: how each appears in a CSV header (suffix), in a NetCDF
 * `units` attribute (UDUNITS spelling, as CF requires) and in prose. Values are SI inside wakeplane; these are
 * only names for what is written.
 */
export interface UnitSpec {
  /** Suffix of a CSV header, '' for none (text, counts, dimensionless ratios). */
  csv: string;
  /** CF/UDUNITS `units` attribute; undefined for text columns (no `units` attribute). */
  cf: string | undefined;
  /** How the README and the dictionary print it. */
  text: string;
}

export const UNITS = {
  m: { csv: 'm', cf: 'm', text: 'm' },
  ms: { csv: 'ms', cf: 'm s-1', text: 'm/s' },
  deg: { csv: 'deg', cf: 'degree', text: 'degree' },
  s: { csv: 's', cf: 's', text: 's' },
  unix_s: { csv: 's', cf: 'seconds since 1970-01-01 00:00:00', text: 's since 1970-01-01 UTC' },
  D: { csv: 'D', cf: '1', text: 'rotor diameters' },
  kw: { csv: 'kw', cf: 'kW', text: 'kW' },
  m4s2: { csv: 'm4s2', cf: 'm4 s-2', text: 'm⁴/s²' },
  m2s2: { csv: 'm2s2', cf: 'm2 s-2', text: 'm²/s²' },
  db: { csv: 'db', cf: 'dB', text: 'dB' },
  one: { csv: '', cf: '1', text: '1 (dimensionless)' },
  count: { csv: '', cf: '1', text: 'count' },
  text: { csv: '', cf: undefined, text: 'text' },
  iso: { csv: '', cf: undefined, text: 'ISO 8601 UTC' },
} as const satisfies Record<string, UnitSpec>;

export type UnitId = keyof typeof UNITS;
