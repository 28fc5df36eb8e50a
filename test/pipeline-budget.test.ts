/**
 * The uncertainty budget through a whole run on the small simulated campaign: the field-table columns, the manifest
 * summary, the report section and figures, the mask on the combined uncertainty, and a run with the budget off.
 * Round trips through our own code (the terms' outside checks are in uncertainty-budget.test.ts).
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { renderRunFolder } from '../src/pipeline/renderFolder.ts';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { readCsv } from './helpers/csvTable.ts';

const fieldRows = (run: string) => readdirSync(join(run, 'fields')).filter((f) => f.endsWith('.csv')).flatMap((f) => readCsv(join(run, 'fields', f)));

describe('the uncertainty budget in a run', () => {
  let dir: string, file: string;
  beforeAll(async () => {
    ({ dir, file } = writeTinyCampaign({ name: 'budget-run' }));
    await simulateCampaign(loadCampaignFile(file));
  }, 60_000);

  it('writes the terms, the manifest summary, the report section and the figures', async () => {
    const { manifest } = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: true, stages: defaultStages() });
    const run = join(dir, 'out', 'budget-run');
    const rows = fieldRows(run).filter((r) => r.u_ms !== '');
    expect(rows.length).toBeGreaterThan(50);
    let same = 0;
    for (const r of rows) {
      // The noise term is the old scatter uncertainty, lowered where the passes show the mean varies less than s^2 / n
      // says (inflation below 1, sampling.ts): never above it (5 % for the two significant digits written), never
      // zero; the combined one is at least as large as every term (root-sum-square).
      expect(Number(r.u_unc_noise_ms)).toBeLessThanOrEqual(Number(r.u_se_ms) * 1.05 + 1e-9);
      expect(Number(r.u_unc_noise_ms)).toBeGreaterThan(0);
      if (r.u_unc_noise_ms === r.u_se_ms) same++;
      const comb = Number(r.u_unc_combined_ms);
      for (const t of ['noise', 'sampling', 'pointing', 'probe', 'timing', 'position', 'direction']) expect(Number(r[`u_unc_${t}_ms`])).toBeLessThanOrEqual(comb * 1.05 + 1e-9);
    }
    // Where every instrument's inflation is 1 or more the two are the same number (a third of the cells here).
    expect(same).toBeGreaterThan(0);
    const u = manifest.uncertainty!;
    expect(u.terms).toEqual(['noise', 'sampling', 'pointing', 'probe', 'timing', 'position', 'direction', 'combined']);
    const p = u.planes[0];
    expect(p.plane).toBe('p5');
    // Hub height 100 m on the rotor axis: the cell of y in [0, 30), z in [100, 130) on this 30 m grid (centre 15, 115).
    expect([p.chosenCell.y_m, p.chosenCell.second_m]).toEqual([15, 115]);
    expect(p.chosenCell.components.u.combined).toBeGreaterThan(0);
    const html = readFileSync(join(run, 'report.html'), 'utf8');
    expect(html).toMatch(/<h2>Uncertainty budget<\/h2>/);
    const bars = readFileSync(join(run, 'images', 'uncertainty_budget_p5.svg'), 'utf8');
    // One bar per component and term with a value: u and v (w is masked or assumed in part) times 7 at least.
    expect((bars.match(/<rect [^>]*><title>/g) ?? []).length).toBeGreaterThanOrEqual(14);
    expect(manifest.outputs.some((o) => o.path === 'images/uncertainty_u_p5.png')).toBe(true);
    expect(manifest.outputs.some((o) => o.path === 'images/turbulence_intensity_p5.png')).toBe(true);
    // `wakeplane render` redraws them from the field tables' budget columns: the same summary, figures and section.
    const r = await renderRunFolder(run);
    expect(r.manifest.uncertainty!.planes[0].chosenCell.y_m).toBe(15);
    // Read back from tables written at two significant digits: the chosen cell's combined u within 5 %.
    expect(Math.abs(r.manifest.uncertainty!.planes[0].chosenCell.components.u.combined / p.chosenCell.components.u.combined - 1)).toBeLessThan(0.05);
    expect(existsSync(join(run, 'images', 'uncertainty_budget_p5.svg'))).toBe(true);
    expect(readFileSync(join(run, 'report.html'), 'utf8')).toMatch(/<h2>Uncertainty budget<\/h2>/);
  }, 120_000);

  it('masks a component whose combined uncertainty exceeds uncertainty.maxCombined_ms, and the budget can be switched off', async () => {
    const c = loadCampaignFile(file);
    c.uncertainty = { budget: true, maxCombined_ms: 0.12 };
    const on = await runCampaign({ ...c, name: 'budget-mask' }, { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
    expect(on.manifest.uncertainty).toBeDefined();
    const masked = fieldRows(join(dir, 'out', 'budget-mask'));
    const byMask = masked.filter((r) => r.u_mask === 'uncertainty_above_threshold');
    expect(byMask.length).toBeGreaterThan(0);
    for (const r of byMask) {
      expect(r.u_ms).toBe('');
      expect(Number(r.u_unc_combined_ms)).toBeGreaterThanOrEqual(0.12); // the reason stays visible (two digits written)
    }
    for (const r of masked) if (r.u_ms !== '') expect(Number(r.u_unc_combined_ms)).toBeLessThanOrEqual(0.12);
    c.uncertainty = { budget: false };
    const { manifest } = await runCampaign({ ...c, name: 'budget-off' }, { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
    expect(manifest.uncertainty).toBeUndefined();
    const off = fieldRows(join(dir, 'out', 'budget-off'));
    expect(off.some((r) => r.u_ms !== '')).toBe(true);
    for (const r of off) expect(r.u_unc_combined_ms).toBe('');
  }, 120_000);
});
