import { readFileSync } from 'node:fs';
import { splitCsvLine } from '../../src/io/series.ts';

/** A CSV file written by a run, as rows of column name -> cell text (quoted cells unquoted, RFC 4180). */
export function readCsv(path: string): Record<string, string>[] {
  const [head, ...rows] = readFileSync(path, 'utf8').trim().split('\n');
  const cols = splitCsvLine(head);
  return rows.map((r) => {
    const cells = splitCsvLine(r);
    return Object.fromEntries(cols.map((c, k) => [c, cells[k]]));
  });
}
