/**
 * The fault suite's fixtures: one small simulated campaign (three instruments, one plane, two 300 s windows; a run
 * takes well under a second), copied afresh for every fault so that each test damages its own files; the command
 * run in this process with its output captured (exit code included); field tables read back for comparisons.
 */
import { cpSync, existsSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse, stringify } from 'yaml';
import { loadCampaignFile } from '../../src/campaign/load.ts';
import { main } from '../../src/cli/main.ts';
import { simulateCampaign } from '../../src/sim/simulate.ts';
import { tinyCampaignObject } from '../helpers/tinyCampaign.ts';
import { fieldTableColumns } from '../../src/pipeline/fieldTable.ts';
import { BUDGET_COLUMNS } from '../../src/records/tables/fields.ts';

export const HEADER = 'time,instrument,azimuth_deg,elevation_deg,range_m,radial_velocity_ms,cnr_db';

/** The campaign of the fault suite: the tiny test campaign, made smaller. */
export function faultCampaignObject(overrides: Record<string, unknown> = {}): Record<string, any> {
  return tinyCampaignObject({
    name: 'faulty',
    planes: [{ id: 'p5', x_D: 5, y: { min: -180, max: 180 }, z: { min: 10, max: 190 }, cell_m: [60, 60], thickness_m: 40 }],
    windows: { kind: 'fixed', length_s: 300 },
    simulation: {
      seed: 3, start: '2026-03-01T12:00:00Z', windows: 2, hubSpeed_ms: 8, yawOffsets_deg: [0, 15], rayRate_hz: 2, dwell_s: 1,
      gatesBefore: 1, gatesAfter: 1, wakeLateralOffset_m: 10,
    },
    output: { dir: 'out', images: false },
    ...overrides,
  });
}

let base: string | undefined;

/** The clean simulated campaign (simulated once per test file), as a folder to copy. */
export async function cleanBase(): Promise<string> {
  if (base) return base;
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-faults-base-'));
  writeFileSync(join(dir, 'campaign.yaml'), stringify(faultCampaignObject()));
  await simulateCampaign(loadCampaignFile(join(dir, 'campaign.yaml')));
  base = dir;
  return dir;
}

/** A fresh copy of the clean campaign; `edit` changes the campaign object before it is written. */
export async function freshCampaign(edit?: (c: Record<string, any>) => void): Promise<{ dir: string; file: string }> {
  const from = await cleanBase();
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-fault-'));
  cpSync(join(from, 'data'), join(dir, 'data'), { recursive: true });
  const c = parse(readFileSync(join(from, 'campaign.yaml'), 'utf8'));
  edit?.(c);
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(c));
  return { dir, file };
}

/** The lines of a data file (without the final empty one). */
export function dataLines(path: string): string[] {
  return readFileSync(path, 'utf8').replace(/\n$/, '').split('\n');
}

export function writeLines(path: string, lines: string[]): void {
  writeFileSync(path, lines.join('\n') + '\n');
}

export interface CliResult {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the command in this process (no signal handlers), capturing stdout, stderr and the exit code. */
export async function runCli(args: string[], cwd?: string): Promise<CliResult> {
  const out: string[] = [], err: string[] = [];
  const wOut = process.stdout.write, wErr = process.stderr.write;
  const log = console.log, error = console.error; // yargs prints its help through the console
  const oldCwd = process.cwd();
  const oldCode = process.exitCode;
  process.exitCode = 0;
  process.stdout.write = ((s: string | Uint8Array) => (out.push(String(s)), true)) as typeof process.stdout.write;
  process.stderr.write = ((s: string | Uint8Array) => (err.push(String(s)), true)) as typeof process.stderr.write;
  console.log = (...a: unknown[]) => void out.push(a.join(' ') + '\n');
  console.error = (...a: unknown[]) => void err.push(a.join(' ') + '\n');
  try {
    if (cwd) process.chdir(cwd);
    await main(args, { signals: false });
  } finally {
    process.stdout.write = wOut;
    process.stderr.write = wErr;
    console.log = log;
    console.error = error;
    process.chdir(oldCwd);
  }
  const code = Number(process.exitCode ?? 0);
  process.exitCode = oldCode;
  // Progress lines of a slow moment ("wakeplane: [00:00:10] checking inputs", cli/progress.ts, every 10 s on a pipe)
  // depend on the machine's load, not on the command: left out, so that messages are compared exactly.
  const stderr = err.join('').replace(/^wakeplane: \[\d{2}:\d{2}:\d{2}\] [^\n]*\n/gm, '');
  return { code, stdout: out.join(''), stderr };
}

/** Every field table of a run folder, keyed by plane and window start: its text. */
export function fieldTables(runDir: string): Map<string, string> {
  const out = new Map<string, string>();
  const dir = join(runDir, 'fields');
  if (!existsSync(dir)) return out;
  for (const f of readdirSync(dir)) {
    if (!f.endsWith('.csv')) continue; // the NetCDF files hold every window of a plane
    const text = readFileSync(join(dir, f), 'utf8');
    const first = text.split('\n')[1]?.split(',') ?? [];
    out.set(`${first[0]}|${first[1]}`, text);
  }
  return out;
}

/**
 * Field tables without the uncertainty budget's and turbulence statistics' columns (the last BUDGET_COLUMNS of each
 * row): for comparisons where the samples are the same but arrive in another order, since the budget's lag and
 * burst sums follow the order of each key's samples (grid/accumulator.ts), while every other column is a sum that
 * does not depend on it.
 */
export function withoutBudget(tables: Map<string, string>): Map<string, string> {
  const keep = fieldTableColumns('cross').length - BUDGET_COLUMNS.length;
  return new Map([...tables].map(([k, text]) => [k, text.split('\n').map((l) => (l ? l.split(',').slice(0, keep).join(',') : l)).join('\n')]));
}

/** The files and folders under `dir` (recursively), with their contents, for "nothing was changed" checks. */
export function snapshot(dir: string): Map<string, string> {
  const out = new Map<string, string>();
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) { out.set(p + '/', ''); walk(p); }
      else out.set(p, readFileSync(p).toString('base64'));
    }
  };
  if (existsSync(dir)) walk(dir);
  return out;
}

export function manifestOf(runDir: string): any {
  return JSON.parse(readFileSync(join(runDir, 'manifest.json'), 'utf8'));
}
