/**
 * The data dictionary: the precision rule against the GUM's own example, every declaration well formed, the
 * documents generated from it in step with the repository, and a field table written through it.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fieldTableCsv } from '../src/pipeline/fieldTable.ts';
import { dictionaryMarkdown, readmeColumns } from '../src/records/describe.ts';
import { header } from '../src/records/dictionary.ts';
import { decimalsForUncertainty, formatDecimals, formatSignificant } from '../src/records/precision.ts';
import { TABLES } from '../src/records/tables/index.ts';
import { tableLayout } from '../src/records/tableText.ts';
import type { FieldResult } from '../src/retrieval/types.ts';

describe('precision rule (JCGM 100:2008, GUM 7.2.6)', () => {
  it('reproduces the GUM example: m = 100.021 47 g with u = 0.35 mg', () => {
    // GUM 7.2.2 example (from memory): m_S = 100,021 47 g with u_c = 0,35 mg. In grams u = 0.00035: two significant
    // digits end at 1e-5 g, so the value keeps five decimals. Exact string comparison: no tolerance.
    const d = decimalsForUncertainty(0.00035, 9);
    expect(d).toBe(5);
    expect(formatDecimals(100.02147, d, true)).toBe('100.02147');
    expect(formatSignificant(0.00035, 2, true)).toBe('0.00035');
  });
  it('hand cases: the place follows the second significant digit of the uncertainty', () => {
    // u = 7.123456 m/s: with 0.0234 the 2nd digit is at 1e-3; with 0.15 at 1e-2; with 1.2 at 1e-1; with 23 at 1
    expect(formatDecimals(7.123456, decimalsForUncertainty(0.0234, 4), true)).toBe('7.123');
    expect(formatDecimals(7.123456, decimalsForUncertainty(0.15, 4), true)).toBe('7.12');
    expect(formatDecimals(7.123456, decimalsForUncertainty(1.2, 4), true)).toBe('7.1');
    expect(formatDecimals(1234.4, decimalsForUncertainty(23, 4), true)).toBe('1234');
    expect(formatDecimals(1234.5, decimalsForUncertainty(230, 4), true)).toBe('1230');
    // 0.0996 is written 0.10: the place follows the written uncertainty (1e-2), not 1e-3
    expect(formatSignificant(0.0996, 2, true)).toBe('0.10');
    expect(decimalsForUncertainty(0.0996, 4)).toBe(2);
    // never finer than the column's resolution; unknown uncertainty -> that resolution
    expect(decimalsForUncertainty(1e-9, 4)).toBe(4);
    expect(decimalsForUncertainty(NaN, 4)).toBe(4);
    // zeros kept for an uncertainty-rounded value, negative zero written as zero
    expect(formatDecimals(7.1, 3, true)).toBe('7.100');
    expect(formatDecimals(-0.00001, 3, true)).toBe('0.000');
    expect(formatDecimals(NaN, 3, true)).toBe('');
  });
});

describe('declarations', () => {
  it('every table: headers unique, uncertainty columns present, units in the names, no author names', () => {
    for (const t of TABLES) {
      for (const orientation of ['cross', 'horizontal'] as const) {
        const L = tableLayout(t, { orientation, instruments: ['n1', 's2'] }); // throws on a missing uncertainty column
        expect(new Set(L.headers).size, `${t.id} ${orientation}`).toBe(L.headers.length);
      }
      for (const c of t.columns) {
        expect(c.meaning.length, `${t.id}.${c.name}`).toBeGreaterThan(5);
        expect(header(c), `${t.id}.${c.name}`).not.toMatch(/jimenez|bastankhah|jensen|katic|porte/i);
        if (['m', 'ms', 'deg', 's', 'D', 'kw', 'm4s2', 'db'].includes(c.unit)) expect(header(c)).toMatch(/_(m|ms|deg|s|D|kw|m4s2|db)$/);
      }
    }
  });
  it('the README column list and docs/dictionary.md are generated from the declarations (npm run dictionary)', () => {
    const readme = readFileSync('README.md', 'utf8');
    expect(readme, 'README.md is stale: run npm run dictionary').toContain(readmeColumns());
    expect(readFileSync('docs/dictionary.md', 'utf8'), 'docs/dictionary.md is stale: run npm run dictionary').toBe(dictionaryMarkdown());
  });
});

describe('a field table written through the dictionary', () => {
  it('rounds each component by its own uncertainty and keeps the values within half a unit of the last digit', () => {
    const n = 4;
    const f = (vals: number[]) => Float64Array.from(vals);
    const field: FieldResult = {
      planeId: 'p', planeIndex: 0, orientation: 'cross', x_m: 600, z_m: NaN, window: { index: 0, start_s: 1.7e9, end_s: 1.7e9 + 600 },
      direction_deg: 270, grid: { ny: 2, nz: 2, y0: -15, z0: 85, dy: 30, dz: 30 },
      u: f([7.123456, 6.987654, NaN, 8.5]), v: f([0.31234, -0.2, NaN, 0]), w: f([0.01234, 0.1, NaN, 0]),
      su: f([0.0234, 0.15, NaN, 1.2]), sv: f([0.05, 0.5, NaN, 0.01]), sw: f([0.2, 0.3, NaN, NaN]),
      dopU: f([1.2345678, 1, NaN, 2]), dopV: f([1, 1, NaN, 1]), dopW: f([2, 2, NaN, 2]), cond: f([3.14159, 2, NaN, 1]),
      minCrossing_deg: f([31.41592, 30, NaN, 30]), yEff: f([1, 2, NaN, 3]), zEff: f([1, 2, NaN, 3]),
      samples: Uint32Array.from([10, 20, 0, 5]), instruments: Uint8Array.from([3, 3, 0, 2]),
      maskU: new Uint8Array(n), maskV: new Uint8Array(n), maskW: Uint8Array.from([0, 0, 1, 6]), assumptions: [],
    };
    const [head, ...rows] = fieldTableCsv(field, 120).trim().split('\n').map((l) => l.split(','));
    const at = (r: string[], name: string) => r[head.indexOf(name)];
    expect(head).toContain('u_ms');
    expect(head).toContain('u_se_ms');
    expect(at(rows[0], 'u_ms')).toBe('7.123'); // u_se 0.0234 -> 0.023
    expect(at(rows[0], 'u_se_ms')).toBe('0.023');
    expect(at(rows[1], 'u_ms')).toBe('6.99'); // u_se 0.15
    expect(at(rows[3], 'u_ms')).toBe('8.5'); // u_se 1.2 -> one decimal
    expect(at(rows[2], 'u_ms')).toBe(''); // NaN: empty
    expect(at(rows[0], 'v_ms')).toBe('0.312'); // v_se 0.05 -> place 1e-3
    expect(at(rows[0], 'u_amplification')).toBe('1.235'); // four significant digits
    expect(at(rows[3], 'w_mask')).toBe('assumed_zero');
  });
});
