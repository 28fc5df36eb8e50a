/**
 * A reviewer's second held-back wake case, written without our simulator (numpy and scipy alone:
 * test/reference/heldback_wake2.py): one turbine (D = 130 m, hub 95 m) with the wind from 200 deg, strong shear
 * (power law, alpha 0.28) and veer (6 deg per 100 m), a thrust-coefficient curve against hub speed, cross planes at
 * 3.35 D and 5.8 D and a horizontal plane at hub height crossing both, yaw offsets -18, 0, +18 deg at six hub speeds,
 * a seventh window with nearly silent scanners, ISO times with +05:30 and -03:00 offsets, and 5 % junk rows at a CNR
 * level of their own. The references: the script's truths, scipy.optimize.curve_fit of the 2-D Gaussian on the exact
 * cell means, the segment-method REWS (IEC 61400-12-1:2017) on a dense lattice of the exact field, the momentum
 * integral of the exact field on a 1-m lattice, Student-t quantiles (scipy.stats.t.ppf), the Jimenez et al. (2010)
 * deflection by scipy.integrate.quad, the Bastankhah & Porte-Agel (2014) and Jensen / Katic top-hat formulas, and
 * scipy's curve_fit of the top-hat k. Two fast checks without python: the momentum balance of an exact model wake with
 * a hole in its core, and an inflow series with veer (projection on the window direction).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { readCsv } from './helpers/csvTable.ts';
import { debianPython } from './helpers/python.ts';

interface Fit { amplitude: number; yc_m: number; zc_m: number; sigma_y_m: number; sigma_z_m: number }
interface View {
  window: number; plane: string; x_m: number; yaw_offset_deg: number; U_ms: number; ct: number; starved: boolean;
  yc_m: number; zc_m: number; fit: Fit; rews_axis: Record<string, number>; rews_centre: Record<string, number>;
  momentum_I: number[]; momentum_J: number;
}
interface Bin { plane: string; gamma_centre_deg: number; n: number; yc_m: number; t975: number }
interface Expected {
  D_m: number; alpha: number; yc0_m: number; yc_per_deg_m: number; horizontal_x_m: [number, number]; momentum_alphas: number[]; ct_curve: [number, number][]; rows_written: number; junk_rows: number; views: View[]; bins: Bin[];
  jimenez_ct_grid: number[]; jimenez_m: Record<string, Record<string, number[]>>;
}

const py = debianPython(['numpy', 'scipy']);
let dir = '';
let e: Expected;
let rows: Record<string, string>[];
let steering: Record<string, string>[];
let fits: { steering: { ct: number }; topHat: { k: number; kSource: string } };
let downstream: Record<string, string>[];
let track: Record<string, string>[];
let ensembles: Record<string, string>[];
let manifest: Awaited<ReturnType<typeof runCampaign>>['manifest'];

describe.skipIf(!py.python)(`held-back wake analysis 2 (wind from 200 deg, shear and veer, Ct curve, +-18 deg yaw)${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-wake2-'));
    const r = spawnSync(py.python!, ['test/reference/heldback_wake2.py', dir], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(r.stderr);
    e = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as Expected;
    const c = loadCampaignFile(join(dir, 'campaign.yaml'));
    const run = await runCampaign(c, { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
    manifest = run.manifest;
    rows = readCsv(join(run.runDir, 'wake', 'wake_table.csv'));
    steering = readCsv(join(run.runDir, 'wake', 'steering.csv'));
    downstream = readCsv(join(run.runDir, 'wake', 'downstream.csv'));
    track = readCsv(join(run.runDir, 'wake', 'track.csv'));
    ensembles = readCsv(join(run.runDir, 'wake', 'ensembles.csv'));
    fits = JSON.parse(readFileSync(join(run.runDir, 'wake', 'model_fits.json'), 'utf8'));
  }, 60_000);
  afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

  const view = (r: Record<string, string>) => e.views.find((v) => v.plane === r.plane && v.window === Number(r.window))!;
  const ok = () => rows.filter((r) => r.orientation === 'cross' && !view(r).starved);

  it('accounts for every row; the junk population at its own CNR level never reaches a cell', () => {
    expect(manifest.samples.balanced).toBe(true);
    const t = manifest.samples.total;
    expect(t.read).toBe(e.rows_written);
    // Junk rows are 5 % (CNR -34 .. -29 dB, the good ones -18 .. -8 dB): all of them rejected as low CNR or outliers,
    // so the rejected count is at least the junk count (exact count from the script).
    expect(t.read - t.accepted).toBeGreaterThanOrEqual(e.junk_rows);
  });

  it('the starved window is a flagged row with a reason and no numbers, on both planes', () => {
    const s = rows.filter((r) => r.orientation === 'cross' && view(r).starved);
    expect(s).toHaveLength(2);
    for (const r of s) {
      expect(r.flag).toBe('too_few_cells');
      expect(r.reason.length).toBeGreaterThan(0);
      for (const k of ['amplitude', 'yc_m', 'rews_axis_ms', 'momentum_deficit_m4s2', 'hub_deficit']) expect(r[k], k).toBe('');
    }
  });

  it('yaw offset (sign end to end), Gaussian fit, Ct from the curve at the hub speed', () => {
    expect(ok()).toHaveLength(12);
    for (const r of ok()) {
      const v = view(r), n = (k: string) => Number(r[k]);
      expect(r.flag, `${r.plane} w${r.window}: ${r.reason}`).toBe('ok');
      // Nacelle minus wind direction from the turbine series (written to 0.01 deg, ISO times with -03:00).
      expect(Math.abs(n('yaw_offset_deg') - v.yaw_offset_deg)).toBeLessThan(0.02);
      // Power-law fit on u_inf(z) = S(z) cos(veer): the veer bends ln u_inf by at most 1.8 % over the plane, so alpha
      // within 0.02 and hub speed within 1.5 % (as the first held-back case; common practice, not derived).
      expect(Math.abs(n('inflow_alpha') - e.alpha)).toBeLessThan(0.02);
      expect(Math.abs(n('inflow_hub_speed_ms') / v.U_ms - 1)).toBeLessThan(0.015);
      // Gaussian parameters against curve_fit on the exact cell means: 3 standard errors plus margins for the
      // inflow error (0.02 in amplitude) and effective cell positions (2 m), as in the first held-back case.
      expect(Math.abs(n('amplitude') - v.fit.amplitude)).toBeLessThan(3 * n('amplitude_se') + 0.02);
      expect(Math.abs(n('yc_m') - v.fit.yc_m)).toBeLessThan(3 * n('yc_se_m') + 2);
      expect(Math.abs(n('zc_m') - v.fit.zc_m)).toBeLessThan(3 * n('zc_se_m') + 2);
      // README: a positive yaw offset pushes the wake to +y (truth: 6 m + 2.4 m/deg x tanh(x/3D)).
      if (v.yaw_offset_deg > 0) expect(n('yc_m')).toBeGreaterThan(30);
      if (v.yaw_offset_deg < 0) expect(n('yc_m')).toBeLessThan(-20);
      // Ct: the curve (linear interpolation, np.interp) at the row's own hub speed; against the value at the true
      // speed, within the curve's steepest slope (0.107 per m/s) times the hub-speed error, plus 0.001 (rounding).
      expect(Math.abs(n('ct') - v.ct)).toBeLessThan(0.107 * Math.abs(n('inflow_hub_speed_ms') - v.U_ms) + 0.001);
    }
  });

  it('rotor-equivalent wind speed (IEC 61400-12-1:2017 segment method) on the axis and on the wake centre', () => {
    for (const r of ok()) {
      const v = view(r), n = (k: string) => Number(r[k]);
      const N = r.rews_segments;
      // 30-m cells average u over 30 m where the lattice samples it at 1 m (the u profile is concave: the cells'
      // means fall below the point values by about (30^2/24) u'' ~ 0.3 %), and each segment's mean rests on 4 to 6
      // cells whose combined uncertainty (the run's u_unc_combined) is about 0.3 m/s: ~0.13 m/s, 1.5 % at 8 m/s on
      // the cube root's scale. 2 % on the axis; on the centre 2.5 % (the fitted centre is within 2 m of the truth).
      expect(Math.abs(n('rews_axis_ms') / v.rews_axis[N] - 1), `${r.plane} w${r.window}`).toBeLessThan(0.02);
      expect(Math.abs(n('rews_centre_ms') / v.rews_centre[N] - 1), `${r.plane} w${r.window}`).toBeLessThan(0.025);
      // A share of the disk area: never above 1 (to the 4 decimals written).
      expect(n('rews_axis_coverage'), `${r.plane} w${r.window} axis coverage`).toBeLessThanOrEqual(1);
      expect(n('rews_centre_coverage'), `${r.plane} w${r.window} centre coverage`).toBeLessThanOrEqual(1);
    }
  });

  it('momentum deficit: the whole plane against the exact field\'s integral with the run\'s own inflow law', () => {
    const al = e.momentum_alphas;
    for (const r of ok()) {
      const v = view(r), n = (k: string) => Number(r[k]);
      // Reference: integral of u (u_inf - u) dA over the plane on a 1-m lattice of the exact field, with u_inf the
      // run's fitted power law (its error is checked above; here the integration and the masked cells are checked):
      // u_ref z_ref^-a I(a) - J, I linear between grid points 0.005 apart in a (relative error < 1e-4: (0.005^2 / 8)
      // (ln z)^2, ln z < 5.7).
      const a = n('inflow_alpha');
      const j = Math.min(al.length - 2, Math.max(0, Math.floor((a - al[0]) / 0.005)));
      const I = v.momentum_I[j] + ((a - al[j]) / (al[j + 1] - al[j])) * (v.momentum_I[j + 1] - v.momentum_I[j]);
      const m = n('inflow_uref_ms') * n('inflow_zref_m') ** -a * I - v.momentum_J;
      // Tolerance 12 %: M is a difference of nearly equal terms over the whole plane (210,600 m^2 at ~8 m/s), so the
      // retrieval's errors weigh heavily: noise of ~0.1 m/s per cell over 234 cells of 900 m^2 times (u_inf - 2u)
      // ~ 8 m/s gives 1 sigma ~ 11,000 m^4/s^2 (3.5 %), and a bias of u of 0.016 m/s over the plane (seen here: the
      // slab of 24 m along a wake that changes along x, veer) 27,000 (8 %). Common practice, not derived.
      expect(Math.abs(n('momentum_deficit_m4s2') / m - 1), `${r.plane} w${r.window}: ${n('momentum_deficit_m4s2')} vs ${m.toFixed(0)}`).toBeLessThan(0.12);
    }
  });

  it('downstream models at each plane\'s own Ct (the windows pooled there), and the top-hat k as scipy fits it', () => {
    // The pooled windows at each plane are the 0-deg ones (8.1 and 10.3 m/s: Ct 0.776 and 0.601 from the curve), so
    // the plane's Ct (the ct column) is not the campaign-level Ct at the median hub speed of all ok rows (~0.73).
    expect(downstream).toHaveLength(2);
    const k = fits.topHat.k;
    for (const d of downstream) {
      const n = (c: string) => Number(d[c]);
      const ct = n('ct');
      // Bastankhah & Porte-Agel (2014, eq. 23 [from memory]) amplitude 1 - sqrt(1 - Ct / (8 (sigma/D)^2)) at the
      // row's model width; Jensen (1983) / Katic et al. (1986) top-hat deficit (1 - sqrt(1 - Ct)) / (1 + 2 k x/D)^2.
      // Tolerance 5e-4: the csv writes 4 decimals of ct, sigma and the results (derivatives below 1).
      const amp = 1 - Math.sqrt(1 - ct / (8 * n('model_sigma_D') ** 2));
      expect(Math.abs(n('model_amplitude') - amp), `${d.plane} model_amplitude at its Ct ${ct}`).toBeLessThan(5e-4);
      const top = (1 - Math.sqrt(1 - ct)) / (1 + 2 * k * n('x_D')) ** 2;
      expect(Math.abs(n('model_tophat_deficit') - top), `${d.plane} model_tophat_deficit at its Ct ${ct}`).toBeLessThan(5e-4);
    }
    // k: least squares of the top-hat deficit through the planes' centreline deficits, each at its plane's Ct, by
    // scipy.optimize.curve_fit (2 planes, 1 parameter). Tolerance 1e-3 on k (the csv's 4 decimals of the inputs).
    expect(fits.topHat.kSource).toBe('fit');
    const args = JSON.stringify(downstream.map((d) => [Number(d.x_D), Number(d.centre_deficit), Number(d.ct)]));
    const code = 'import json,sys,numpy as np\nfrom scipy.optimize import curve_fit\nd=np.array(json.loads(sys.argv[1]))\n' +
      'f=lambda X,k: (1-np.sqrt(1-X[1]))/(1+2*k*X[0])**2\nprint(curve_fit(f,(d[:,0],d[:,2]),d[:,1],p0=[0.05])[0][0])';
    const r = spawnSync(py.python!, ['-c', code, args], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    expect(Math.abs(k - Number(r.stdout)), `k ${k} vs scipy ${r.stdout}`).toBeLessThan(1e-3);
  });

  it('horizontal plane crossing both cross planes: the run warns of the overlap; the lateral track follows yc(x)', () => {
    // The hub-height plane (x 260 .. 920 m, z 95 +- 10 m) crosses the slabs of p335 (x 435.5 +- 12 m) and p580
    // (754 +- 12 m): a sample there goes to one plane only (the first listed), so the horizontal plane's rows at
    // x = 425, 455 and 755 m were left with almost no samples and no centre, without a word.
    const w = manifest.warnings.filter((m) => m.includes('overlap') && m.includes('hub'));
    expect(w.length, manifest.warnings.join('\n')).toBe(2);
    expect(w.some((m) => m.includes('p335'))).toBe(true);
    expect(w.some((m) => m.includes('p580'))).toBe(true);
    // Lateral track (1-D Gaussian per 30-m row): the truth yc(x) = 6 m + 2.4 m/deg gamma tanh(x / 3D) (the
    // script's flow; at hub height the deficit across y is a Gaussian on it). Each row rests on ~8 samples in each of
    // ~20 cells; tolerance 3 standard errors of the row's centre + 5 m (the row's 30-m extent along a centre line
    // that moves by up to 2 m across it, plus cells 30 m wide; common practice), for 80 % of the rows with a
    // centre at least, and at least 14 of the 22 rows per window with a centre (rows away from the overlaps).
    const D = e.D_m, gam = [-18, 0, 18, -18, 0, 18];
    for (let win = 0; win < 6; win++) {
      const tr = track.filter((t) => t.plane === 'hub' && Number(t.window) === win && t.yc_m !== '');
      expect(tr.length, `window ${win}`).toBeGreaterThanOrEqual(14);
      const good = tr.filter((t) => {
        const yt = e.yc0_m + e.yc_per_deg_m * gam[win] * Math.tanh(Number(t.x_m) / (3 * D));
        return Math.abs(Number(t.yc_m) - yt) < 3 * Number(t.yc_se_m) + 5;
      });
      expect(good.length / tr.length, `window ${win}`).toBeGreaterThanOrEqual(0.8);
    }
  });

  it('condition bins by yaw offset pool windows of different speeds: the run says so; the ensemble centres', () => {
    // Each bin pools windows at 7.4 and 9.6, 8.1 and 10.3, 8.8 and 11.0 m/s: a cell's u mixes two flows of different
    // speed in proportion to its samples from each, which distorts the ensemble's wake (on this case the fit's R^2
    // fell to 0.64 and a centre moved 10 m), and nothing said so. One warning per bin whose hub speeds spread by
    // more than 10 % (common practice, not derived).
    const w = manifest.warnings.filter((m) => m.includes('condition bin') && m.includes('hub speeds'));
    expect(w.length, manifest.warnings.join('\n')).toBe(3);
    // The ensemble centres against the truth (both pooled windows share it): 3 standard errors + 3 m, wider than a
    // window's because of that mixing (common practice).
    const D = e.D_m;
    const cross = ensembles.filter((r) => r.orientation === 'cross');
    expect(cross).toHaveLength(6);
    for (const r of cross) {
      expect(r.flag, `${r.bin} ${r.plane}: ${r.reason}`).toBe('ok');
      const g = Math.round(Number(r.yaw_offset_deg));
      const yt = e.yc0_m + e.yc_per_deg_m * g * Math.tanh(Number(r.x_m) / (3 * D));
      expect(Math.abs(Number(r.yc_m) - yt), `${r.bin} ${r.plane}`).toBeLessThan(3 * Number(r.yc_se_m) + 3);
    }
  });

  it('steering bins: Student-t intervals, deflection sign and the Jimenez et al. (2010) model at the bin\'s Ct', () => {
    const grid = e.jimenez_ct_grid;
    expect(steering).toHaveLength(6);
    for (const b of steering) {
      // The bin's Ct: the mean of its ok rows' ct in the wake table (each at its window's hub speed: the -18 deg
      // windows ran at 7.4 and 9.6 m/s, the +18 deg ones at 8.8 and 11.0 m/s, so the bins' Ct differ by ~0.1).
      const inBin = ok().filter((r) => r.plane === b.plane && Math.abs(Number(r.yaw_offset_deg) - Number(b.gamma_centre_deg)) < 5);
      const ct = inBin.reduce((s, r) => s + Number(r.ct), 0) / inBin.length;
      expect(Math.abs(Number(b.ct) - ct), `${b.plane} ${b.gamma_centre_deg} ct '${b.ct}'`).toBeLessThan(1e-4);
      const j = Math.min(grid.length - 2, Math.max(0, Math.floor((ct - grid[0]) / 0.01)));
      const ref = e.bins.find((q) => q.plane === b.plane && q.gamma_centre_deg === Number(b.gamma_centre_deg))!;
      expect(ref, `${b.plane} ${b.gamma_centre_deg}`).toBeTruthy();
      expect(Number(b.n)).toBe(ref.n);
      // The bin's mean centre against the truth: 3 m (each fitted centre within ~2 m, common practice).
      expect(Math.abs(Number(b.yc_m) - ref.yc_m)).toBeLessThan(3);
      // 95 % half-width t_{0.975, n-1} sd / sqrt(n) with scipy's t quantile (12.706 for n = 2): relative 2 % (the
      // csv rounds sd to two significant digits).
      expect(Math.abs(Number(b.ci95_m) / ((ref.t975 * Number(b.sd_m)) / Math.sqrt(ref.n)) - 1)).toBeLessThan(0.06);
      // Deflection relative to the 0 bin: the sign of the yaw offset (README).
      const g = Number(b.gamma_centre_deg);
      if (g !== 0) expect(Math.sign(Number(b.deflection_m))).toBe(Math.sign(g));
      // Jimenez deflection by quad at the bin mean offset (exactly -18, 0, 18 here) and the bin's Ct, linear in Ct
      // between grid points 0.01 apart (xi0 linear in Ct, tan xi ~ xi: error < 1e-4 m); 0.01 m for the csv's two
      // decimals.
      const row = e.jimenez_m[b.plane][String(Math.round(Number(b.gamma_mean_deg)))];
      const t = (ct - grid[j]) / (grid[j + 1] - grid[j]);
      const jim = row[j] + t * (row[j + 1] - row[j]);
      expect(Math.abs(Number(b.model_tophat_deflection_m) - jim), `${b.plane} ${g}`).toBeLessThan(0.011);
    }
  });
});

describe('momentum deficit with a hole in the wake core', () => {
  it('masked core cells are filled with the fitted Gaussian: the ratio stays 1 (Bastankhah & Porte-Agel 2014 momentum balance)', async () => {
    const { analyseWake } = await import('../src/wake/analyse.ts');
    const { D, syntheticCampaign, syntheticField } = await import('./wake-synthetic.ts');
    // The wake of the Gaussian model at x/D = 6 (k* = 0.022, Ct = 0.8) in a uniform 8 m/s: the plane's integral of
    // u (U - u) equals (pi/8) Ct D^2 U^2 (Bastankhah & Porte-Agel 2014, eq. 2-5 [from memory]); the plane holds the
    // wake to > 4 sigma (tail < 1e-4). A hole of 3 x 3 cells of 10 m at the centre (a retrieval mask) carries
    // 9 x 100 m^2 x 8^2 C (1 - C) ~ 14,000 of ~ 290,000 m^4/s^2, 4.9 %: left out, the ratio fell to 0.952. The fit on
    // the exact remaining cells returns the truth, so with the hole filled by it the ratio is 1 within 1e-3 (as
    // without a hole: the midpoint rule's error on a 10-m grid is far smaller).
    const s = (0.022 * 6 + 0.2 * Math.sqrt((0.5 * (1 + Math.sqrt(0.2))) / Math.sqrt(0.2))) * D;
    const C = 1 - Math.sqrt(1 - 0.8 / (8 * (s / D) ** 2));
    const c = syntheticCampaign({ inflow: { kind: 'fixed', speed_ms: 8, height_m: 100, law: 'power', alpha: 0, z0_m: 0.03 } });
    const grid = { ny: 61, nz: 40, y0: -300, z0: 5, dy: 10, dz: 10 };
    const hole = (iy: number, iz: number) => Math.abs(iy - 30) <= 1 && Math.abs(iz - 19.5) <= 1.5 && iz !== 21;
    const r = analyseWake([syntheticField({ grid, wake: { A: C, yc: 0, zc: 200, sy: s, sz: s }, inflow: () => 8, mask: hole })], c, {}).rows[0];
    expect(r.flag).toBe('ok');
    expect(Math.abs(r.momentumRatio - 1), `ratio ${r.momentumRatio}`).toBeLessThan(1e-3);
    // The row says so: how many cells were filled and their share.
    expect(r.reason).toMatch(/9 masked cells filled with the fitted Gaussian/);
  });
});

describe('inflow series with veer: the speeds projected on the window direction', () => {
  it('a mast reporting speed and direction per height: u_inf(z) = S(z) cos(direction(z) - window direction)', async () => {
    const { inflowFromSeries } = await import('../src/wake/inflow.ts');
    // The deficit compares the rotor-frame u (the wind's component along the window direction) with u_inf, so the
    // reference must be that component too: S cos(delta) (a projection; plain trigonometry). The held-back case's
    // veer of 6 deg per 100 m above a 95-m hub turns the wind by 9.9 deg at 260 m: S cos(delta) is 1.5 % below S
    // there, a spurious 1.5 % deficit at the plane's top if S were taken. Rows every 10 s at 9 heights, one window.
    const heights = [20, 50, 80, 110, 140, 170, 200, 230, 260];
    const n = 30 * heights.length;
    const time = new Float64Array(n), height = new Float64Array(n), speed = new Float64Array(n), dir = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const z = heights[i % heights.length];
      time[i] = 1000 + 10 * Math.floor(i / heights.length);
      height[i] = z; speed[i] = 8 * (z / 95) ** 0.28; dir[i] = 200 + (6 * (z - 95)) / 100;
    }
    const p = inflowFromSeries({ file: 'mast.csv', time, values: { height_m: height, speed_ms: speed, direction_deg: dir } }, 1000, 1300, 95, 'power', 200);
    // Tolerance 1e-9 m/s: arithmetic only (a mean of identical rows).
    heights.forEach((z, k) => {
      const want = 8 * (z / 95) ** 0.28 * Math.cos(((6 * (z - 95)) / 100) * (Math.PI / 180));
      expect(Math.abs(p.speeds_ms[k] - want), `${z} m`).toBeLessThan(1e-9);
    });
  });
});
