/**
 * Coverage of the uncertainty budget on simulated campaigns (src/sim): the share of true values within two reported
 * combined standard uncertainties, per component, with independent samples and with samples correlated in time (an
 * Ornstein-Uhlenbeck fluctuation with a 1 s integral time scale, shared by the gates of a ray). For a Gaussian error
 * with a correct standard uncertainty the share is 95.4 % (GUM, JCGM 100:2008, G.1.3, Table G.1: k = 2 gives
 * 95.45 %); the target is 90-98 %. The same check on the old scatter-only uncertainty (the _se column) must fail
 * with correlated samples: that shows the check can fail. This is a round trip through our own simulator, not an
 * outside check; the outside checks of the terms are in uncertainty-budget.test.ts.
 */
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { tinyCampaignObject, writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { readCsv } from './helpers/csvTable.ts';


interface Coverage { n: number; budget: number; scatter: number; noDirection: number }
/** Per run: every cell's radial-velocity turbulence and noise variance (m^2/s^2), for the turbulence statistics. */
const variances = new Map<string, { turb: number[]; noise: number[] }>();
const medianOf = (a: number[]) => [...a].sort((x, y) => x - y)[a.length >> 1];

async function coverage(name: string, sim: Record<string, unknown>): Promise<Record<string, Coverage>> {
  const base = tinyCampaignObject();
  const { dir, file } = writeTinyCampaign({
    name,
    simulation: { ...(base.simulation as object), windows: 8, yawOffsets_deg: [0, 10, -10], spikeFraction: 0, ...sim },
  });
  await simulateCampaign(loadCampaignFile(file));
  await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: false });
  const truth = new Map<string, number[]>();
  for (const r of readCsv(join(dir, 'truth', 'field_truth.csv'))) {
    truth.set(`${r.window_start.slice(0, 16)}|${Number(r.y_m)}|${Number(r.z_m)}`, [Number(r.u), Number(r.v), Number(r.w)]);
  }
  const out: Record<string, Coverage> = Object.fromEntries(['u', 'v', 'w'].map((c) => [c, { n: 0, budget: 0, scatter: 0, noDirection: 0 }]));
  const fields = join(dir, 'out', name, 'fields');
  for (const f of readdirSync(fields).filter((x) => x.endsWith('.csv'))) {
    for (const r of readCsv(join(fields, f))) {
      const vv = variances.get(name) ?? { turb: [], noise: [] };
      variances.set(name, vv);
      if (r.vr_turbulence_variance_m2s2 !== '') vv.turb.push(Number(r.vr_turbulence_variance_m2s2));
      if (r.vr_noise_variance_m2s2 !== '') vv.noise.push(Number(r.vr_noise_variance_m2s2));
      const t = truth.get(`${r.window_start.slice(0, 16)}|${Number(r.y_m)}|${Number(r.z_m)}`)!;
      ['u', 'v', 'w'].forEach((c, k) => {
        if (r[`${c}_ms`] === '' || r[`${c}_unc_combined_ms`] === '') return;
        const err = Math.abs(Number(r[`${c}_ms`]) - t[k]);
        out[c].n++;
        if (err <= 2 * Number(r[`${c}_unc_combined_ms`])) out[c].budget++;
        if (err <= 2 * Number(r[`${c}_se_ms`])) out[c].scatter++;
        const comb = Number(r[`${c}_unc_combined_ms`]), dir = Number(r[`${c}_unc_direction_ms`]);
        if (err <= 2 * Math.sqrt(Math.max(0, comb * comb - dir * dir))) out[c].noDirection++;
      });
    }
  }
  return out;
}

const share = (c: Coverage, k: 'budget' | 'scatter' | 'noDirection') => c[k] / c.n;

describe('coverage of the combined standard uncertainty on simulated campaigns', () => {
  let independent: Record<string, Coverage>, correlated: Record<string, Coverage>;
  let independent11: Record<string, Coverage>, correlated11: Record<string, Coverage>, quiet: Record<string, Coverage>;
  beforeAll(async () => {
    // No turbulence and no estimator noise: only the errors of geometry, position, probe and frame are left.
    quiet = await coverage('cov-quiet', { turbulence_ms: 0, noise_ms: 0 });
    independent = await coverage('cov-independent', {});
    correlated = await coverage('cov-correlated', { turbulenceTimeScale_s: 1 });
    // A second simulator seed (the first is the tiny campaign's 7): another draw of flow states and turbulence.
    independent11 = await coverage('cov-independent-11', { seed: 11 });
    correlated11 = await coverage('cov-correlated-11', { seed: 11, turbulenceTimeScale_s: 1 });
  }, 180_000);

  it('seed 11: 90-98 % of true u, v, w within two combined standard uncertainties, independent and correlated', () => {
    for (const [label, cov] of [['independent', independent11], ['correlated', correlated11]] as const) {
      for (const c of ['u', 'v', 'w']) {
        console.log('seed 11', label, c, cov[c].n, share(cov[c], 'budget').toFixed(3));
        // As for seed 7: more than 100 cells (binomial standard error below 2 %), share within the target band.
        expect(cov[c].n, c).toBeGreaterThan(100);
        expect(share(cov[c], 'budget'), `${label} ${c}`).toBeGreaterThanOrEqual(0.9);
        expect(share(cov[c], 'budget'), `${label} ${c}`).toBeLessThanOrEqual(0.98);
      }
    }
  });


  it('noise and turbulence off: the v error is the rotor frame\'s direction error, which the direction term covers', () => {
    for (const c of ['u', 'v', 'w']) console.log('quiet', c, quiet[c].n, share(quiet[c], 'budget').toFixed(3), share(quiet[c], 'noDirection').toFixed(3));
    // The window direction is the mean of a series with 0.4 degree scatter per minute: its error turns the frame,
    // v = -u delta (budget.ts). With the direction term 89.5 % of v lie within two combined uncertainties here, 46 %
    // without it (88-95 % with it on seeds 7, 23, 31). Without noise the errors are biases of a few cells' geometry
    // rather than Gaussian scatter, so the 90-98 % target is not asked of this case; bounds: 85 % with the term (a
    // margin of about two binomial standard errors, 1.3 %, below the lowest seed) and 75 % without (the check fails
    // without the term).
    expect(quiet.v.n).toBeGreaterThan(100);
    expect(share(quiet.v, 'budget')).toBeGreaterThanOrEqual(0.85);
    expect(share(quiet.v, 'noDirection')).toBeLessThan(0.75);
    // w: the per-instrument position term carries the bias a u gradient brings into w (89-92 % on seeds 7, 23, 31):
    // at least 85 % (the earlier effective-position term gave 86 and 91 % on seeds 23 and 7 before the inflation change).
    expect(share(quiet.w, 'budget')).toBeGreaterThanOrEqual(0.85);
  });

  it('independent samples: 90-98 % of true u, v, w within two combined standard uncertainties', () => {
    for (const c of ['u', 'v', 'w']) {
      console.log('independent', c, independent[c].n, share(independent[c], 'budget').toFixed(3), share(independent[c], 'scatter').toFixed(3));
    }
    for (const c of ['u', 'v', 'w']) {
      // Enough cells that the share is known to about +-2 % (binomial standard error sqrt(0.95 * 0.05 / n) < 0.02).
      expect(independent[c].n, c).toBeGreaterThan(100);
      expect(share(independent[c], 'budget'), c).toBeGreaterThanOrEqual(0.9);
      expect(share(independent[c], 'budget'), c).toBeLessThanOrEqual(0.98);
    }
  });

  it('samples correlated in time (1 s integral scale): 90-98 % within two combined standard uncertainties, and the scatter-only uncertainty fails', () => {
    for (const c of ['u', 'v', 'w']) {
      console.log('correlated', c, correlated[c].n, share(correlated[c], 'budget').toFixed(3), share(correlated[c], 'scatter').toFixed(3));
    }
    for (const c of ['u', 'v', 'w']) {
      expect(correlated[c].n, c).toBeGreaterThan(100);
      expect(share(correlated[c], 'budget'), c).toBeGreaterThanOrEqual(0.9);
      expect(share(correlated[c], 'budget'), c).toBeLessThanOrEqual(0.98);
    }
    // The old uncertainty misses the sampling error: its coverage of u falls well below the target.
    expect(share(correlated.u, 'scatter')).toBeLessThan(0.85);
  });

  it('correlated samples: the radial-velocity variance with the noise removed is near the simulated 0.35^2 m^2/s^2', () => {
    const v = variances.get('cov-correlated')!;
    console.log('median turbulence variance', medianOf(v.turb), 'noise variance', medianOf(v.noise));
    // The simulator adds a fluctuation of 0.35 m/s (variance 0.1225) and estimator noise of 0.12 m/s or more (more at
    // low CNR); the cells' variance also holds the flow's differences within a cell. The noise must be separated
    // (median above 0.005) and the turbulence variance within 20 % of 0.1225 (the spread of the per-window fits).
    expect(medianOf(v.noise)).toBeGreaterThan(0.005);
    expect(Math.abs(medianOf(v.turb) / 0.1225 - 1)).toBeLessThan(0.2);
  });
});
