/**
 * The data dictionary as documents: Markdown for people (dictionary.md in every run folder, docs/dictionary.md in
 * the repository) and JSON for programs (dictionary.json), plus the compact column list of the README. All are
 * generated from the declarations; a test keeps the committed copies in step.
 */
import { header, netcdfNames, type Column, type Table } from './dictionary.ts';
import type { Precision } from './precision.ts';
import { UNITS } from './units.ts';
import { TABLES } from './tables/index.ts';
import { NETCDF_VARIABLES } from './tables/netcdf.ts';

export function precisionText(p: Precision): string {
  switch (p.kind) {
    case 'decimals': return p.decimals > 0 ? `${p.decimals} decimals` : 'integer';
    case 'significant': return `${p.digits} significant digits`;
    case 'uncertainty': return `to the 2nd significant digit of ${p.by} (at most ${p.finest} decimals)`;
    case 'integer': return 'integer';
    case 'time': return 'ISO 8601, ms';
    default: return 'text';
  }
}

const cell = (s: string) => s.replace(/\|/g, '\\|');

function headerOf(c: Column): string {
  return c.perInstrument ? `<id>_${header(c)}` : header(c);
}

/** The table's path patterns, each in backquotes. */
const paths = (t: Table) => [t.path, ...(t.also ?? [])].map((p) => `\`${p}\``).join(', ');

function tableMarkdown(t: Table): string {
  const lines = [`### ${paths(t)}`, '', `One row: ${t.row}.`, '', '| column | unit | frame | precision | meaning |', '|---|---|---|---|---|'];
  for (const c of t.columns) {
    const only = c.only ? ` (${c.only} planes only)` : '';
    const sn = c.standardName ? ` CF standard name \`${c.standardName}\`.` : '';
    lines.push(`| \`${headerOf(c)}\` | ${UNITS[c.unit].text} | ${c.frame === 'none' ? '' : c.frame} | ${precisionText(c.precision)} | ${cell(c.meaning)}${only}${sn} |`);
  }
  return lines.join('\n');
}

export const PRECISION_RULE =
  'Numbers are written with the precision their uncertainty supports: a value with a standard uncertainty in the same row ' +
  'is rounded to the decimal place of the second significant digit of that uncertainty, which is itself written with two ' +
  'significant digits (JCGM 100:2008, GUM 7.2.6); other values at a resolution stated per column. Empty = not computed. ' +
  'NetCDF files keep full binary precision.';

export function dictionaryMarkdown(): string {
  const parts = [
    '# wakeplane data dictionary', '',
    'Every column of every table and every NetCDF variable a run writes. Frames: rotor (x downstream, y to the left looking ' +
      'downstream, z up from the tower base), site (east, north, up). CSV headers carry the unit after the name where there is one.', '',
    PRECISION_RULE, '',
    ...TABLES.flatMap((t) => [tableMarkdown(t), '']),
    `### NetCDF variables beyond the field table (\`fields/<plane>.nc\`)`, '',
    '| variable | units | standard name | meaning |', '|---|---|---|---|',
    ...NETCDF_VARIABLES.map((v) => `| \`${v.name}\` | ${UNITS[v.unit].cf ?? ''} | ${v.standardName ?? ''} | ${cell(v.meaning)} |`),
    '',
  ];
  return parts.join('\n');
}

export function dictionaryJson(): string {
  const j = {
    precisionRule: PRECISION_RULE,
    tables: TABLES.map((t) => ({ t, nc: netcdfNames(t.columns) })).map(({ t, nc }) => ({
      id: t.id, path: t.path, also: t.also ?? [], row: t.row,
      columns: t.columns.map((c, k) => ({
        header: headerOf(c), name: c.name, unit: UNITS[c.unit].text, cfUnits: UNITS[c.unit].cf ?? null, frame: c.frame,
        meaning: c.meaning, precision: precisionText(c.precision), standardName: c.standardName ?? null, only: c.only ?? null,
        // the variable's name where the table is also written as NetCDF rows (wake/*.nc); unique within the table
        netcdfVariable: nc[k],
      })),
    })),
    netcdf: NETCDF_VARIABLES.map((v) => ({ name: v.name, units: UNITS[v.unit].cf ?? null, standardName: v.standardName ?? null, meaning: v.meaning })),
  };
  return JSON.stringify(j, null, 2) + '\n';
}

/** The README's compact list: each file with its headers. */
export function readmeColumns(): string {
  return TABLES.map((t) => `- ${paths(t)}: ${t.columns.map((c) => `\`${headerOf(c)}\`${c.only ? ` (${c.only})` : ''}`).join(', ')}`).join('\n');
}
