/**
 * cli/early.ts: the guess that starts the reader thread before the command's modules load. A guess only (results
 * never depend on it); these cases pin down when it is made, so that runs on CSV or spread over cores do not load
 * the HDF5 library for nothing.
 */
import { describe, expect, it } from 'vitest';
import { earlyReaderWanted } from '../src/cli/early.ts';

const files: Record<string, string> = {
  'nc.yaml': 'instruments:\n  - id: a\n    files: [data/a-00.nc, data/a-01.nc]\n',
  'csv.yaml': 'instruments:\n  - id: a\n    files: [data/a.csv]\n',
};
const read = (p: string) => {
  if (!(p in files)) throw new Error('ENOENT');
  return files[p];
};

describe('early start of the reader thread', () => {
  it('for `run` on a campaign naming NetCDF files, in one process', () => {
    expect(earlyReaderWanted(['run', 'nc.yaml', '--quiet'], read, 2)).toBe(true);
    expect(earlyReaderWanted(['run', 'nc.yaml', '--cores', '1'], read, 16)).toBe(true);
  });
  it('not for CSV campaigns, other commands, several processes, or a campaign that cannot be read', () => {
    expect(earlyReaderWanted(['run', 'csv.yaml'], read, 2)).toBe(false);
    expect(earlyReaderWanted(['plan', 'nc.yaml'], read, 2)).toBe(false);
    expect(earlyReaderWanted(['run', 'nc.yaml', '--cores', '2'], read, 2)).toBe(false);
    expect(earlyReaderWanted(['run', 'nc.yaml'], read, 8)).toBe(false); // every core by default from 4 up
    expect(earlyReaderWanted(['run', 'missing.yaml'], read, 2)).toBe(false);
    expect(earlyReaderWanted(['run'], read, 2)).toBe(false);
  });
});
