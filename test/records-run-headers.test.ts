/**
 * Every CSV file a whole run writes is declared in the data dictionary (src/records/): its path matches exactly one
 * declared table, and its header row is that table's header list (units in the names, in the declared order). Two
 * small simulated campaigns cover every kind of table: the three-scanner cross plane of the first demo with a
 * horizontal plane, condition bins and the planner; and a copy of the second demo's geometries (VAD and DBS
 * profilers, a four-beam nacelle instrument, a nacelle scanner tracking the wake, a horizontal dual-Doppler plane)
 * with condition bins and the planner's layout search. A table written by hand, a renamed column or a new file
 * without a declaration fails here.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import { parse } from 'yaml';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Campaign } from '../src/campaign/types.ts';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { header, type Table } from '../src/records/dictionary.ts';
import { TABLES } from '../src/records/tables/index.ts';
import { tableLayout } from '../src/records/tableText.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';

const safe = (id: string) => id.replace(/[^A-Za-z0-9_.-]/g, '_');
const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

/** Every file under `dir` whose name ends in .csv, relative to `dir` with forward slashes. */
function csvFiles(dir: string, root = dir): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? csvFiles(join(dir, e.name), root) : e.isFile() && e.name.endsWith('.csv') ? [relative(root, join(dir, e.name)).split('\\').join('/')] : [],
  ).sort();
}

/** The declared tables whose path patterns match `rel`: <instrument> and <plane> stand for the campaign's ids. */
function tablesFor(rel: string, c: Campaign): Table[] {
  const alt = (ids: string[]) => `(?:${ids.map((id) => escape(safe(id))).join('|') || '(?!)'})`;
  const instruments = alt(c.instruments.map((i) => i.id)), planes = alt(c.planes.map((p) => p.id));
  const matches = (pattern: string) => new RegExp(`^${pattern.split(/(<[a-z]+>)/).map((part) =>
    part === '<instrument>' ? instruments : part === '<plane>' ? planes : /^<[a-z]+>$/.test(part) ? '[^/]+' : escape(part)).join('')}$`).test(rel);
  return TABLES.filter((t) => [t.path, ...(t.also ?? [])].some(matches));
}

/** The header lists the table can have in one file: each orientation, per-instrument columns for the ids present. */
function declaredHeaders(t: Table, got: string[], c: Campaign): string[][] {
  const first = t.columns.find((col) => col.perInstrument);
  const ids = first ? c.instruments.map((i) => i.id).filter((id) => got.includes(`${id}_${header(first)}`)).sort((a, b) => got.indexOf(`${a}_${header(first)}`) - got.indexOf(`${b}_${header(first)}`)) : [];
  return [undefined, 'cross' as const, 'horizontal' as const].map((orientation) => tableLayout(t, { orientation, instruments: ids }).headers);
}

/** Checks every CSV file of a run folder; returns the ids of the tables seen. */
function checkRunFolder(runDir: string, c: Campaign): Set<string> {
  const seen = new Set<string>();
  const files = csvFiles(runDir);
  expect(files.length).toBeGreaterThan(5);
  for (const rel of files) {
    const tables = tablesFor(rel, c);
    expect(tables.map((t) => t.id), `${rel}: a CSV file the dictionary does not declare (or declares twice)`).toHaveLength(1);
    const t = tables[0];
    const got = readFileSync(join(runDir, rel), 'utf8').split('\n')[0].split(',');
    const known = new Set(declaredHeaders(t, got, c).flat());
    expect(got.filter((h) => !known.has(h)), `${rel}: headers not declared in table ${t.id}`).toEqual([]);
    // Exact order as declared: the README, dictionary.md and the NetCDF attributes list the columns in this order.
    expect(declaredHeaders(t, got, c).map((h) => h.join(',')), `${rel}: column order differs from table ${t.id}`).toContain(got.join(','));
    seen.add(t.id);
  }
  return seen;
}

describe('every CSV file of a whole run is declared in the data dictionary', () => {
  let planes: { file: string; dir: string }, geometries: { file: string; dir: string };
  beforeAll(async () => {
    planes = writeTinyCampaign({
      planes: [
        { id: 'p5', x_D: 5, y: { min: -180, max: 180 }, z: { min: 10, max: 190 }, cell_m: [30, 30], thickness_m: 24 },
        { id: 'hub', orientation: 'horizontal', z_m: 100, y: { min: -150, max: 150 }, xRange: { min: 360, max: 720 }, cell_m: [40, 40], thickness_m: 30 },
      ],
      plan: { directions_deg: [270], candidates: { c: [[1450, 0], [1400, 250]] }, maxCombinations: 10 },
    });
    // The second demo as it is, with three windows instead of six.
    const demo = parse(readFileSync('scenarios/fernhollow/campaign.yaml', 'utf8')) as Record<string, unknown>;
    geometries = writeTinyCampaign({ ...demo, name: 'geo-headers', output: { writeRejected: true }, simulation: { ...(demo.simulation as object), windows: 3 } });
    await Promise.all([simulateCampaign(loadCampaignFile(planes.file)), simulateCampaign(loadCampaignFile(geometries.file))]);
  }, 180_000);

  it('planes: windows, condition bins, a horizontal plane and the planner', async () => {
    const c = loadCampaignFile(planes.file);
    c.conditions = { bins: [{ variable: 'yaw_offset_deg', edges: [-20, -5, 5, 20] }], minWindows: 1 };
    const { runDir } = await runCampaign(c, { outRoot: join(planes.dir, 'out'), images: false, stages: defaultStages({ plan: true }) });
    const seen = checkRunFolder(runDir, c);
    // The run really wrote these kinds of table (so the check above is not vacuous).
    for (const id of ['field-table', 'wake-table', 'ensembles', 'steering', 'downstream', 'profiles', 'track', 'rejected-rows', 'plan-cells', 'plan-pointing', 'plan-layouts'])
      expect(seen, id).toContain(id);
  }, 180_000);

  it('single-instrument geometries and a dual-Doppler plane (second demo)', async () => {
    const c = loadCampaignFile(geometries.file);
    c.conditions = { bins: [{ variable: 'yaw_offset_deg', edges: [-20, -5, 5, 20] }], minWindows: 1 };
    const { runDir } = await runCampaign(c, { outRoot: join(geometries.dir, 'out'), images: false, stages: defaultStages({ plan: true }) });
    const seen = checkRunFolder(runDir, c);
    for (const id of ['profile', 'nacelle', 'nacelle-gates', 'tracks', 'track-profiles', 'field-table', 'ensembles', 'plan-cells', 'plan-layouts'])
      expect(seen, id).toContain(id);
    // Condition-bin profiles go to their own file with the same columns.
    expect(csvFiles(runDir)).toContain('profiles/vad-up_bins.csv');
  }, 180_000);
});
