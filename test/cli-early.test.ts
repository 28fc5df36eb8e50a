/**
 * cli/early.ts: the guess that starts the reader thread before the command's modules load. A guess only (results
 * never depend on it); these cases pin down when it is made, so that runs on CSV or spread over cores do not load
 * the HDF5 library for nothing.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { earlyReaderWanted, earlyWriterWanted } from '../src/cli/early.ts';

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

describe('early start of the NetCDF output thread', () => {
  const texts: Record<string, string> = {
    'default.yaml': 'instruments:\n  - id: a\n    files: [data/a.csv]\noutput:\n  dir: out\n',
    'off.yaml': 'instruments:\n  - id: a\n    files: [data/a.csv]\noutput:\n  dir: out\n  netcdf: false\n',
    'off.json': '{"instruments": [{"id": "a", "files": ["data/a.csv"]}], "output": {"dir": "out", "netcdf": false}}',
    'no.yaml': 'output:\n  netcdf: no\n',
  };
  const readText = (p: string) => {
    if (!(p in texts)) throw new Error('ENOENT');
    return texts[p];
  };
  it('for `run` in one process on a campaign that keeps the default NetCDF outputs', () => {
    expect(earlyWriterWanted(['run', 'default.yaml'], readText, 2)).toBe(true);
    expect(earlyWriterWanted(['run', 'default.yaml', '--cores', '1'], readText, 16)).toBe(true);
  });
  it('not when the campaign turns NetCDF off (YAML or JSON), for other commands, several processes, or an unreadable campaign', () => {
    expect(earlyWriterWanted(['run', 'off.yaml'], readText, 2)).toBe(false);
    expect(earlyWriterWanted(['run', 'off.json'], readText, 2)).toBe(false);
    expect(earlyWriterWanted(['run', 'no.yaml'], readText, 2)).toBe(false);
    expect(earlyWriterWanted(['check', 'default.yaml'], readText, 2)).toBe(false);
    expect(earlyWriterWanted(['run', 'default.yaml', '--cores', '2'], readText, 2)).toBe(false);
    expect(earlyWriterWanted(['run', 'missing.yaml'], readText, 2)).toBe(false);
  });
});

describe('the output thread started early leaves nothing behind', () => {
  it('a run that stops at once on a bad campaign leaves no warm-up folder in the temporary directory', () => {
    // The thread's warm-up files go into a folder of the system's temporary directory; a process that ends while
    // they are written (here: a campaign that is not valid YAML, refused in well under a second) must remove it.
    const ROOT = join(import.meta.dirname, '..');
    const tmp = mkdtempSync(join(tmpdir(), 'wp-early-'));
    try {
      const campaign = join(tmp, 'campaign.yaml');
      writeFileSync(campaign, 'name: [unclosed\n'); // readable (the early start happens), not valid
      const r = spawnSync(process.execPath, ['bin/wakeplane.js', 'run', campaign, '--cores', '1'], { cwd: ROOT, env: { ...process.env, TMPDIR: tmp }, encoding: 'utf8' });
      expect(r.status).toBe(1); // refused: a configuration error
      expect(r.stderr).toMatch(/campaign\.yaml/); // the message names the file
      expect(readdirSync(tmp).filter((n) => n.startsWith('wakeplane-nc-'))).toEqual([]); // exact: nothing of ours left
    } finally {
      rmSync(tmp, { recursive: true, force: true });
    }
  }, 30_000);
});
