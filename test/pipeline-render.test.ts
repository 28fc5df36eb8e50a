/**
 * `wakeplane render`: figures and report redone from a finished run folder without the samples, and the field-table
 * reader beside its writer. The round trip through our own writer and reader is a regression check, not an outside
 * check (the values it carries are checked elsewhere).
 */
import { existsSync, mkdtempSync, readFileSync, readdirSync, renameSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { fieldTableColumns, readFieldTable } from '../src/pipeline/fieldTable.ts';
import type { RunManifest } from '../src/pipeline/manifest.ts';
import { renderRunFolder } from '../src/pipeline/renderFolder.ts';
import { runCampaign, type RunStage } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import type { FieldResult } from '../src/retrieval/types.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';

const fields: FieldResult[] = [];
/** Keeps a copy of every field as it passes (what the tables should give back). */
const capture: RunStage = {
  name: 'capture',
  async field(f) {
    fields.push(structuredClone(f));
    return [];
  },
};

let runDir = '';
let dataDir = '';
beforeAll(async () => {
  const { dir, file } = writeTinyCampaign({ name: 'render-test', output: { figures: { density: 72 } } });
  await simulateCampaign(loadCampaignFile(file));
  const res = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: true, stages: [capture, ...defaultStages()] });
  runDir = res.runDir;
  dataDir = join(dir, 'data');
}, 60_000);

const manifest = () => JSON.parse(readFileSync(join(runDir, 'manifest.json'), 'utf8')) as RunManifest;
const images = (m: RunManifest) => m.outputs.filter((o) => o.kind === 'image').map((o) => o.path).sort();

describe('field tables read back', () => {
  it('give the fields as written: numbers to the digits written (the dictionary precision), masks and counts exactly', () => {
    const m = manifest();
    const c = loadCampaignFile(join(runDir, '..', '..', 'campaign.yaml'));
    expect(fields.length).toBe(3);
    for (const f of fields) {
      const rec = m.outputs.find((o) => o.kind === 'field-table' && o.window === f.window.index)!;
      const w = m.windows[f.window.index];
      const g = readFieldTable(join(runDir, rec.path), c.planes[0], { index: f.window.index, start_s: w.start_s, end_s: w.end_s });
      // direction: 3 decimals in the dictionary, so within half of 1e-3.
      expect(Math.abs(g.direction_deg - f.direction_deg)).toBeLessThanOrEqual(5e-4 + 1e-12);
      // Every value within half a unit of the last digit the table wrote for it (the precision rule of
      // src/records: rounded to the uncertainty, or to a stated resolution); read from the text itself.
      const text = readFileSync(join(runDir, rec.path), 'utf8').trim().split('\n');
      const head = text[0].split(',');
      const colOf: Record<string, string> = { u: 'u_ms', v: 'v_ms', w: 'w_ms', su: 'u_se_ms', sv: 'v_se_ms', sw: 'w_se_ms', dopU: 'u_amplification', dopV: 'v_amplification', dopW: 'w_amplification', cond: 'condition_number', minCrossing_deg: 'min_crossing_deg', yEff: 'y_eff_m', zEff: 'z_eff_m' };
      for (const k of ['u', 'v', 'w', 'su', 'sv', 'sw', 'dopU', 'dopV', 'dopW', 'cond', 'minCrossing_deg', 'yEff', 'zEff'] as const) {
        const j = head.indexOf(colOf[k]);
        expect(j, colOf[k]).toBeGreaterThanOrEqual(0);
        for (let i = 0; i < f.u.length; i++) {
          const a = f[k][i], b = g[k][i];
          if (!Number.isFinite(a)) { expect(Number.isNaN(b), `${k}[${i}]`).toBe(true); continue; }
          const cell = text[i + 1].split(',')[j];
          const mant = cell.split(/[eE]/)[0], exp = Number(cell.split(/[eE]/)[1] ?? 0);
          const decimals = (mant.split('.')[1] ?? '').length - exp;
          expect(Math.abs(a - b), `${k}[${i}] written as ${cell}`).toBeLessThanOrEqual(0.5 * 10 ** -decimals * (1 + 1e-9));
        }
      }
      expect([...g.samples]).toEqual([...f.samples]);
      expect([...g.instruments]).toEqual([...f.instruments]);
      expect([...g.maskU]).toEqual([...f.maskU]);
      expect([...g.maskV]).toEqual([...f.maskV]);
      expect([...g.maskW]).toEqual([...f.maskW]);
      expect(g.assumptions).toEqual(f.assumptions);
    }
  });

  it('name the file and line of a table that does not fit its plane', () => {
    const m = manifest();
    const c = loadCampaignFile(join(runDir, '..', '..', 'campaign.yaml'));
    const rec = m.outputs.find((o) => o.kind === 'field-table')!;
    const other = { ...c.planes[0], cell_m: [20, 20] as [number, number] };
    expect(() => readFieldTable(join(runDir, rec.path), other)).toThrow(/field table has \d+ rows, plane p5 has \d+ cells/);
    expect(fieldTableColumns('horizontal')).toContain('x_eff_m');
  });
});

describe('wakeplane render', () => {
  it('the run itself drew the summary plots and one multi-panel figure per plane, no single-window images', () => {
    const names = images(manifest());
    expect(names).toContain('images/p5_panels.svg');
    expect(names).toContain('images/summary_deficit.png');
    expect(names.some((p) => /_w\d+_/.test(p))).toBe(false);
    // The CNR limits were estimated (the default): their two figures, SVG and PNG.
    for (const f of ['images/qc_cnr_inconsistent', 'images/qc_cnr_scatter']) for (const e of ['svg', 'png']) expect(names).toContain(`${f}.${e}`);
  });

  it('redraws figures and report from the tables with the sample files gone, on request with single windows', async () => {
    // Without the samples: move the instruments' files away (the turbine and direction series stay).
    for (const f of ['a.csv', 'b.csv', 'c.csv']) renameSync(join(dataDir, f), join(dataDir, `${f}.away`));
    const before = manifest();
    const r = await renderRunFolder(runDir, { windowImages: [1] });
    const after = manifest();
    const names = images(after);
    for (const what of ['u_norm', 'su', 'inflow', 'dopU', 'dopV', 'dopW', 'samples']) expect(names).toContain(`images/p5_w1_${what}.svg`);
    expect(names.some((p) => p.startsWith('images/p5_w0_') || p.startsWith('images/p5_w2_'))).toBe(false);
    for (const p of names) expect(existsSync(join(runDir, p)), p).toBe(true);
    // The tables and the accounting are untouched; the manifest says when the render ran.
    expect(after.samples).toEqual(before.samples);
    expect(after.outputs.filter((o) => o.kind === 'field-table')).toEqual(before.outputs.filter((o) => o.kind === 'field-table'));
    expect(after.rendered?.at).toMatch(/^\d{4}-\d\d-\d\dT/);
    expect(r.images).toBe(names.filter((p) => p.endsWith('.svg')).length);
    const html = readFileSync(join(runDir, 'report.html'), 'utf8');
    expect(html).toContain('src="images/p5_w1_u_norm.svg"');
    // The CNR figures are drawn again from the evidence in the manifest (no sample read), and kept.
    expect(names).toContain('images/qc_cnr_inconsistent.svg');
    expect(html).toContain('src="images/qc_cnr_inconsistent.svg"');
    expect(html).toContain('redone by <code>wakeplane render</code>');
    // Rendering again without single windows removes the files it no longer draws (only images it listed).
    const again = await renderRunFolder(runDir, { windowImages: 'none' });
    expect(again.removed).toBe(14); // the seven figures of window 1, SVG and PNG each
    expect(readdirSync(join(runDir, 'images')).some((n) => n.startsWith('p5_w1_'))).toBe(false);
    expect(readdirSync(join(runDir, 'fields')).filter((n) => n.endsWith('.csv')).length).toBe(3);
    for (const f of ['a.csv', 'b.csv', 'c.csv']) renameSync(join(dataDir, `${f}.away`), join(dataDir, f));
  }, 60_000);

  it('keeps the figures of stages it does not redo (profiles, nacelle, trackers, power gain) as the run drew them', async () => {
    // A run's figure from a stage whose results are not in the field tables (here a profiler's, written beside the
    // others as the geometry stage writes it), and a single-window image the current selection does not draw.
    const m = manifest();
    writeFileSync(join(runDir, 'images', 'profile_speed_up.svg'), '<svg xmlns="http://www.w3.org/2000/svg"/>');
    writeFileSync(join(runDir, 'images', 'p5_w2_u_norm.svg'), '<svg xmlns="http://www.w3.org/2000/svg"/>');
    m.outputs.push({ kind: 'image', path: 'images/profile_speed_up.svg', description: 'profiler up: speed' });
    m.outputs.push({ kind: 'image', path: 'images/p5_w2_u_norm.svg', plane: 'p5', window: 2, description: 'u/u_inf' });
    writeFileSync(join(runDir, 'manifest.json'), JSON.stringify(m, null, 2));
    const r = await renderRunFolder(runDir, { windowImages: 'none' });
    expect(r.kept).toBe(1); // exact: the one figure of another stage
    expect(r.removed).toBe(1); // exact: the one window image no longer selected
    expect(existsSync(join(runDir, 'images', 'profile_speed_up.svg'))).toBe(true);
    expect(existsSync(join(runDir, 'images', 'p5_w2_u_norm.svg'))).toBe(false);
    const after = manifest();
    expect(images(after)).toContain('images/profile_speed_up.svg'); // still listed, so the report shows it
    expect(readFileSync(join(runDir, 'report.html'), 'utf8')).toContain('images/profile_speed_up.svg');
  }, 60_000);

  it('names a folder that is not a finished run, and leaves a folder wakeplane did not mark alone', async () => {
    await expect(renderRunFolder(join(runDir, 'images'))).rejects.toThrow(/manifest\.json: not a finished run folder/);
    // A copy of the run's manifest in a folder of someone else's (no marker, another campaign name in it).
    const other = mkdtempSync(join(tmpdir(), 'wakeplane-foreign-'));
    const m = JSON.parse(readFileSync(join(runDir, 'manifest.json'), 'utf8'));
    m.tool.name = 'something-else';
    writeFileSync(join(other, 'manifest.json'), JSON.stringify(m));
    writeFileSync(join(other, 'report.html'), 'theirs');
    await expect(renderRunFolder(other)).rejects.toThrow(/was not made by wakeplane.*nothing redrawn/);
    expect(readFileSync(join(other, 'report.html'), 'utf8')).toBe('theirs');
  });
});
