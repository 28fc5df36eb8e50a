/**
 * A reviewer's held-back cases for the geometries of issue 10, written without our simulator by numpy scripts in
 * test/reference/: heldback_profiles.py (VAD cone and DBS beams, a veering, sheared wind), heldback_nacelle.py (a
 * four-beam nacelle instrument under changing misalignment and shear, an inclinometer, a series gap),
 * heldback_dualdoppler.py (two scanners in a horizontal plane, one looking down from a tower, a VAD cone as inflow
 * reference, and the plan), heldback_tracker.py, heldback_tracker_vertical.py and heldback_tracker_nacelle.py (wake
 * tracking in a horizontal sector through north, a vertical sector under shear, and a rear sweep on a yawed nacelle).
 * The data differ from our simulator's on purpose: irregular gates whose heights never sit on the bin centres, every
 * ray its own angles, azimuths through north, negative elevations, junk rows at another CNR level, rows out of
 * order, renamed columns in another order, Unix, ISO and offset times, windows anchored off the minute, a stuck
 * cone, missing DBS beams. Each check compares a run's (or plan's) tables with the values the script computed from
 * the rows it wrote (textbook formulas named there and beside each check), never with our own output; the bad
 * inputs of the issue (and a few more) must give one clear line or a flagged window, with every sample counted.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';
import { writePlanOutputs } from '../src/plan/writeOutputs.ts';
import { formatPlanSummary } from '../src/pipeline/plan.ts';
import { inflowFromProfile } from '../src/profile/inflow.ts';
import type { ProfilePoint } from '../src/profile/types.ts';
import { REJECT_REASONS } from '../src/qc/reasons.ts';
import { readCsv } from './helpers/csvTable.ts';
import { runCli } from './faults/helpers.ts';
import { debianPython } from './helpers/python.ts';

const py = debianPython(['numpy']);
const unix = (iso: string) => Date.parse(iso) / 1000;

function generate(script: string): { dir: string; expected: any } {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-geo-'));
  const r = spawnSync(py.python!, [`test/reference/${script}`, dir], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(r.stderr);
  return { dir, expected: JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) };
}

async function run(dir: string) {
  return runCampaign(loadCampaignFile(join(dir, 'campaign.yaml')), { outRoot: join(dir, 'out'), images: false, stages: defaultStages() });
}

interface ProfExp {
  window: number; height_m: number; n: number; u?: number; v?: number; w?: number; u_se?: number; v_se?: number; w_se?: number;
  mean_height_m?: number; true_u?: number; true_v?: number; true_w?: number; true_speed?: number; true_dir?: number;
}

describe.skipIf(!py.python)(`held-back profilers: a veering, sheared profile${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, e: { anchor_s: number; window_s: number; junk: Record<string, number>; rows: Record<string, number>; vad: ProfExp[]; dbs: ProfExp[]; inflow: Record<string, { window: number; direction_deg: number; alpha: number; hub_speed_ms: number }> };
  let res: Awaited<ReturnType<typeof run>>;
  beforeAll(async () => {
    ({ dir, expected: e } = generate('heldback_profiles.py'));
    res = await run(dir);
  }, 120_000);

  const rowOf = (rows: Record<string, string>[], x: ProfExp) =>
    rows.find((r) => Math.abs(unix(r.window_start) - (e.anchor_s + (x.window - 1) * e.window_s)) < 1e-3 && Number(r.height_m) === x.height_m);

  it('accounts for every row: the junk rows as low_cnr, the rest accepted or rejected by reason', () => {
    const m = res.manifest.samples;
    expect(m.balanced).toBe(true);
    for (const id of ['cone-7', 'dbs-4']) {
      const a = m.perInstrument[id];
      expect(a.read).toBe(e.rows[id]);
      expect(a.accepted + REJECT_REASONS.reduce((s, r) => s + a.rejected[r], 0)).toBe(a.read);
      // Junk at -29 +/- 1 dB, good rows at -14 +/- 4 dB (clipped at -3): the limit between them rejects the junk and
      // at most 0.5 % of the good rows (4 sigma below their mean lies -30 dB; a share of 0.2 % was seen).
      expect(Math.abs(a.rejected.low_cnr - e.junk[id])).toBeLessThan(0.005 * e.rows[id]);
    }
  });

  it('VAD: per window and height the Browning & Wexler (1968) fit of the script, at the samples\' mean height', () => {
    const rows = readCsv(join(res.runDir, 'profiles', 'cone-7.csv'));
    let checked = 0;
    for (const x of e.vad) {
      const r = rowOf(rows, x)!;
      expect(r, `window ${x.window} height ${x.height_m}`).toBeDefined();
      if (x.window === 3) {
        // The stuck cone (azimuths 30-55 deg only): 3 sectors of 10 deg, too few for the three unknowns and a residual.
        expect(r.flag).toBe('too_few_azimuths');
        expect(r.u_ms).toBe('');
        continue;
      }
      expect(r.flag, `w${x.window} z${x.height_m}: ${r.reason}`).toBe('ok');
      // Against the script's OLS fit of the same rows (numpy lstsq): our fit pools sector means and weights them,
      // so the two estimates of one truth differ by sampling noise: within 4 OLS standard errors + 0.01 m/s.
      for (const c of ['u', 'v', 'w'] as const) {
        expect(Math.abs(Number(r[`${c}_ms`]) - x[c]!), `${c} w${x.window} z${x.height_m}`).toBeLessThan(4 * x[`${c}_se`]! + 0.01);
      }
      // The values belong to the samples' mean height, which the table states (written to 0.001 m; the robust
      // filter drops a few samples, moving the mean by < 0.05 m here: elevation jitter 0.15 deg moves a height by
      // < 0.2 m). Before, only the bin centre was written (up to 3.4 m away), so a reader placed the wind wrongly.
      expect(Math.abs(Number(r.sample_height_m) - x.mean_height_m!), `height w${x.window} z${x.height_m}`).toBeLessThan(0.05);
      // Truth at that height: speed within 4 standard uncertainties + 0.5 %, direction within 4 + 0.3 deg.
      expect(Math.abs(Number(r.speed_ms) - x.true_speed!)).toBeLessThan(4 * Number(r.speed_se_ms) + 0.005 * x.true_speed!);
      const dd = ((Number(r.direction_deg) - x.true_dir! + 540) % 360) - 180;
      expect(Math.abs(dd), `direction w${x.window} z${x.height_m}`).toBeLessThan(4 * Number(r.direction_se_deg) + 0.3);
      checked++;
    }
    expect(checked).toBe(12);
  });

  it('the profile as inflow reference: a power law through the measured heights, as the script fits the truth', () => {
    // The script's truth at each bin's mean sample height, projected on the hub-height direction (the veer of
    // 0.09 deg/m turns the upper winds away from the rotor axis) and fitted by a power law in log-log: cone-7
    // window 2 and dbs-4 window 1. Before, the law was fitted at the bin centres (up to 3.4 m from the measured
    // heights for the cone, 6.3 m for the DBS gates) and the exponent came out 0.009 and 0.014 too small.
    // Tolerance 0.005: the exponent's noise over 5-6 heights with 0.2-0.4 % speed errors spread over
    // ln(195 / 53) = 1.3 is about 0.002 (our fit weights the points by 1 / s^2, the script's does not).
    for (const [id, c] of Object.entries(e.inflow)) {
      const rows = readCsv(join(res.runDir, 'profiles', `${id}.csv`)).filter((r) => Math.abs(unix(r.window_start) - (e.anchor_s + (c.window - 1) * e.window_s)) < 1e-3);
      const points = rows.map((r) => ({
        instrumentId: id, height_m: Number(r.height_m), sampleHeight_m: r.sample_height_m === '' ? NaN : Number(r.sample_height_m), u_ms: Number(r.u_ms), v_ms: Number(r.v_ms),
        sspeed_ms: Number(r.speed_se_ms), direction_deg: Number(r.direction_deg), samples: Number(r.samples), flag: r.flag,
      })) as unknown as ProfilePoint[];
      const inflow = inflowFromProfile(points, c.direction_deg, 100, 'power', id);
      expect(inflow.ok).toBe(true);
      expect(Math.abs(inflow.alpha - c.alpha), id).toBeLessThan(0.005);
      // Hub speed of the fitted law at 100 m: within 0.6 % (speed noise 0.2-0.4 % per height, about 0.15 % after
      // the fit over 5-6 heights: 4 standard uncertainties).
      expect(Math.abs(inflow.hubSpeed_ms / c.hub_speed_ms - 1), id).toBeLessThan(0.006);
    }
  });

  it('plan: heights covered, ring diameters and amplification of each profiler from its declared pattern', () => {
    // Analytic: N evenly spaced azimuths on a cone at elevation phi give sqrt(diag((A^T A)^-1)) = 1 / (cos phi
    // sqrt(N / 2)) for u and v and 1 / (sin phi sqrt N) for w (A^T A diagonal: N cos^2 phi / 2, N cos^2 phi / 2,
    // N sin^2 phi); the DBS set (4 beams 90 deg apart at 62 deg and a vertical one): 1 / (cos 62 sqrt 2) and
    // 1 / sqrt(4 sin^2 62 + 1). Ring diameter 2 r cos phi of the gate in the bin. Rounded to 0.01 in the plan.
    const plan = planCampaign(loadCampaignFile(join(dir, 'campaign.yaml')));
    // A campaign of profilers only: no plane lines in the summary (before: an empty 'resolved' heading and a note on
    // two-beam cells of planes it does not have).
    const text = formatPlanSummary(plan.summary, 'out');
    expect(text).not.toMatch(/resolved|two usable beams/);
    expect(text).toMatch(/profiler cone-7: 6 heights/);
    const D = Math.PI / 180;
    const cases = [
      { id: 'cone-7', el: 74, du: 1 / (Math.cos(74 * D) * Math.sqrt(18)), dw: 1 / (Math.sin(74 * D) * 6), z0: 2.5, gates: [52.3, 77.1, 114.4, 140.3, 174.4, 200.3] },
      { id: 'dbs-4', el: 62, du: 1 / (Math.cos(62 * D) * Math.SQRT2), dw: 1 / Math.sqrt(4 * Math.sin(62 * D) ** 2 + 1), z0: 1, gates: [61, 89, 120, 148, 183] },
    ];
    for (const c of cases) {
      const rows = plan.geometries.find((g) => g.instrumentId === c.id)!.rows as Record<string, number>[];
      for (const r of rows) {
        expect(Math.abs(r.dop_u - c.du)).toBeLessThan(0.006);
        expect(Math.abs(r.dop_w - c.dw)).toBeLessThan(0.006);
        const inBin = c.gates.filter((g) => Math.abs(c.z0 + g * Math.sin(c.el * D) - r.height_m) <= 15);
        expect(r.gates).toBe(inBin.length);
        expect(Math.abs(r.ring_diameter_m - (2 * inBin.reduce((a, g) => a + g, 0) * Math.cos(c.el * D)) / inBin.length)).toBeLessThan(0.006);
      }
    }
  });

  it('DBS: the four-beam formulas (turned set, vertical beam), a missing slanted beam and a missing vertical beam', () => {
    const rows = readCsv(join(res.runDir, 'profiles', 'dbs-4.csv'));
    for (const x of e.dbs) {
      const r = rowOf(rows, x)!;
      expect(r, `window ${x.window} height ${x.height_m}`).toBeDefined();
      if (x.window === 2) {
        // The beam at 190 deg never reported: a per-height flag with the reason, no fit (never a silent value).
        expect(r.flag).toBe('missing_beam');
        expect(r.reason).toMatch(/around azimuth 190/);
        expect(r.u_ms).toBe('');
        continue;
      }
      // Window 3: the vertical beam missing, u, v, w from the slanted beams, flagged; window 1: all five beams.
      expect(r.flag).toBe(x.window === 3 ? 'missing_beam' : 'ok');
      // Against the script's OLS of the same rows (with one beam per azimuth this is the four-beam formula
      // u = (v_E - v_W) / (2 cos el), common practice): within 4 OLS standard errors + 0.01 m/s.
      for (const c of ['u', 'v', 'w'] as const) {
        expect(Math.abs(Number(r[`${c}_ms`]) - x[c]!), `${c} w${x.window} z${x.height_m}`).toBeLessThan(4 * x[`${c}_se`]! + 0.01);
      }
      expect(Math.abs(Number(r.sample_height_m) - x.mean_height_m!)).toBeLessThan(0.05);
    }
  });
});

const pyNc = debianPython(['numpy', 'netCDF4']);

describe.skipIf(!pyNc.python)(`held-back VAD cone from NetCDF-4${pyNc.python ? '' : ` (skipped: ${pyNc.why})`}`, () => {
  it('the same rays as NetCDF-4 (time, range) give byte-identical profiles', async () => {
    // heldback_profiles.py --netcdf writes the cone's rays once more in the scanning-instrument layout (the values
    // as printed to the CSV file). The CSV run is checked against the script's truth above; the NetCDF door must
    // hand the profile target the same samples, so the tables must be equal byte for byte.
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-geo-'));
    const g = spawnSync(pyNc.python!, ['test/reference/heldback_profiles.py', dir, '--netcdf'], { encoding: 'utf8' });
    expect(g.status, g.stderr).toBe(0);
    const a = await run(dir);
    const b = await runCampaign(loadCampaignFile(join(dir, 'campaign-nc.yaml')), { outRoot: join(dir, 'out-nc'), images: false, stages: defaultStages() });
    expect(b.manifest.samples.perInstrument['cone-7']).toEqual(a.manifest.samples.perInstrument['cone-7']);
    expect(readFileSync(join(b.runDir, 'profiles', 'cone-7.csv'), 'utf8')).toBe(readFileSync(join(a.runDir, 'profiles', 'cone-7.csv'), 'utf8'));
  }, 120_000);
});

interface NacExp { window: number; start_s: number; wind_deg: number; nacelle_deg: number; yaw_misalignment_deg: number; hub_speed_ms: number; free_stream_ms: number; alpha: number }

describe.skipIf(!py.python)(`held-back nacelle instrument: changing misalignment and shear${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, e: { anchor_s: number; windows: NacExp[]; junk: number; rows: number; gap_rows: number; gap_junk: number };
  let res: Awaited<ReturnType<typeof run>>;
  beforeAll(async () => {
    ({ dir, expected: e } = generate('heldback_nacelle.py'));
    res = await run(dir);
  }, 120_000);

  it('every row accounted: junk as low_cnr, the rows in the turbine-series gap as no_nacelle_direction', () => {
    const a = res.manifest.samples.perInstrument['fwd-4'];
    expect(res.manifest.samples.balanced).toBe(true);
    expect(a.read).toBe(e.rows);
    // Junk at -31 dB, good rows at -12 +/- 3 dB: exactly the junk below the limit (CNR is checked first, so junk in
    // the gap counts as low_cnr).
    expect(a.rejected.low_cnr).toBe(e.junk);
    expect(a.rejected.no_nacelle_direction).toBe(e.gap_rows - e.gap_junk);
  });

  it('plan: upstream distance, beam heights and pair separation per gate from the declared beams', () => {
    // Analytic, beams (+/-17 deg, -5 / +7 deg) from 96.5 m: upstream = mean r cos(el) cos(az), lowest 96.5 +
    // r sin(-5 deg), highest 96.5 + r sin(7 deg), half separation max r cos(el) sin(17 deg); rounded to 0.01 m.
    const plan = planCampaign(loadCampaignFile(join(dir, 'campaign.yaml')));
    const rows = plan.geometries.find((g) => g.instrumentId === 'fwd-4')!.rows as Record<string, number>[];
    const D = Math.PI / 180, c17 = Math.cos(17 * D), s17 = Math.sin(17 * D);
    expect(rows.map((r) => r.range_m)).toEqual([80, 130, 205, 260, 340]);
    for (const r of rows) {
      const R = r.range_m;
      expect(Math.abs(r.upstream_m - (R * c17 * (Math.cos(5 * D) + Math.cos(7 * D))) / 2)).toBeLessThan(0.006);
      expect(Math.abs(r.lowest_m - (96.5 - R * Math.sin(5 * D)))).toBeLessThan(0.006);
      expect(Math.abs(r.highest_m - (96.5 + R * Math.sin(7 * D)))).toBeLessThan(0.006);
      expect(Math.abs(r.half_separation_m - R * Math.cos(5 * D) * s17)).toBeLessThan(0.006);
    }
  });

  it('yaw misalignment, shear exponent, hub speed at 2.5 D and the free stream against the script\'s flow', () => {
    const rows = readCsv(join(res.runDir, 'nacelle', 'fwd-4.csv'));
    for (const x of e.windows) {
      const r = rows.find((q) => Math.abs(unix(q.window_start) - x.start_s) < 1e-3)!;
      expect(r, `window ${x.window}`).toBeDefined();
      expect(r.flag).toBe(x.window === 4 ? 'nacelle_series_gap' : 'ok');
      // Nacelle direction: circular mean of the series rows in the window (written to 0.001 deg).
      expect(Math.abs(((Number(r.nacelle_deg) - x.nacelle_deg + 540) % 360) - 180)).toBeLessThan(2e-3);
      // Misalignment (README sign: nacelle minus wind, positive clockwise): within 3 standard uncertainties plus
      // 0.25 deg, the bias of the pair method here: the 0.2-deg roll lifts the right beams by r sin(0.2 deg)
      // (0.9 m at 260 m), the shear then makes them faster by alpha dz / z (up to 0.45 %), read as a direction
      // change of eps / (2 tan 17 deg) = 0.4 deg at most on one pair (two-beam formula, IEC 61400-50-3 form [from
      // memory]); seen with roll 0: within 1.2 standard uncertainties.
      expect(Math.abs(Number(r.yaw_misalignment_deg) - x.yaw_misalignment_deg), `window ${x.window}`).toBeLessThan(3 * Number(r.yaw_misalignment_se_deg) + 0.25);
      // Shear exponent from the upper and lower pairs: within 0.005 (noise 0.001-0.002 per window).
      expect(Math.abs(Number(r.alpha) - x.alpha)).toBeLessThan(0.005);
      // Shear-corrected hub speed at 250 m (U_inf times the vortex-sheet ratio there, Medici et al. 2011) and the
      // free stream after the induction correction: within 0.2 % (linear interpolation between gates at 247 and
      // 323 m upstream, noise 0.03 %).
      expect(Math.abs(Number(r.hub_speed_shear_ms) / x.hub_speed_ms - 1)).toBeLessThan(0.002);
      expect(Math.abs(Number(r.free_stream_ms) / x.free_stream_ms - 1)).toBeLessThan(0.002);
    }
  });
});

describe.skipIf(!py.python)(`held-back nacelle instrument with two beams, opened asymmetrically and looking down${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('the speed at 2.5 D and the height it is measured at; the yaw misalignment', async () => {
    // heldback_nacelle.py --two-beams: beams at +25 and -10 deg, 2 deg down, the inclinometer's tilt on top: at 250 m
    // the pair measures 2-5 m below the 95-m hub. Before, the table gave the speed as a hub-height speed and said
    // nothing of where it was measured (1.8 % below the hub speed in window 3, shear exponent 0.32).
    const dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-geo-'));
    const g = spawnSync(py.python!, ['test/reference/heldback_nacelle.py', dir, '--two-beams'], { encoding: 'utf8' });
    expect(g.status, g.stderr).toBe(0);
    const e = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { windows: (NacExp & { speed_height_m: number; speed_at_height_ms: number })[] };
    const res = await run(dir);
    const rows = readCsv(join(res.runDir, 'nacelle', 'fwd-4.csv'));
    for (const x of e.windows) {
      const r = rows.find((q) => Math.abs(unix(q.window_start) - x.start_s) < 1e-3)!;
      // Height: the script's per-gate mean point heights interpolated to 250 m by the gates' mean upstream
      // distance (written to 0.01 m; the robust filter drops a few samples): within 0.05 m.
      expect(Math.abs(Number(r.speed_height_m) - x.speed_height_m), `window ${x.window}`).toBeLessThan(0.05);
      // Speed: the truth at that height and distance, U_inf (z / 95)^alpha r(250 m): within 0.3 % (noise 0.05 %,
      // linear interpolation between gates at 247 and 322 m of a speed that grows by 0.5 % between them).
      expect(Math.abs(Number(r.hub_speed_ms) / x.speed_at_height_ms - 1), `window ${x.window}`).toBeLessThan(0.003);
      // Misalignment, as in the four-beam case: 3 standard uncertainties + 0.25 deg (the roll and shear bias).
      expect(Math.abs(Number(r.yaw_misalignment_deg) - x.yaw_misalignment_deg)).toBeLessThan(3 * Number(r.yaw_misalignment_se_deg) + 0.25);
      expect(r.alpha).toBe('');
    }
  }, 120_000);
});

describe.skipIf(!py.python)(`held-back nacelle case: bad inclinometer inputs${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string;
  beforeAll(() => {
    ({ dir } = generate('heldback_nacelle.py'));
  });

  /** The campaign with its instrument's orientation series edited, written beside the original. */
  function variant(name: string, edit: (o: { file: string; columns: Record<string, string> }) => void): string {
    const c = JSON.parse(readFileSync(join(dir, 'campaign.yaml'), 'utf8'));
    edit(c.instruments[0].orientationSeries);
    const f = join(dir, `${name}.yaml`);
    writeFileSync(f, JSON.stringify(c, null, 1));
    return f;
  }

  it('an inclinometer column mapped to a header the file lacks: one line naming the file, the header and the key, before any output', async () => {
    // Before, the mapped column was read as empty: every sample lost its tilt and was rejected as
    // no_nacelle_direction ("turbine-series gaps"), the run ended with exit 0 and tables of no_data.
    const f = variant('bad-column', (o) => (o.columns.tilt_deg = 'pitch_x'));
    for (const cmd of ['check', 'run']) {
      const r = await runCli([cmd, f, '--out', join(dir, `out-${cmd}`)]);
      expect(r.code, `${cmd}: ${r.stdout}`).toBe(1);
      expect(r.stderr).toContain(join(dir, 'data', 'incl.csv'));
      expect(r.stderr).toMatch(/missing column "pitch_x" \(columns\.tilt_deg\)/);
      expect(existsSync(join(dir, `out-${cmd}`, 'ottersike-heldback'))).toBe(false);
    }
  });

  it('an inclinometer gap: its samples rejected as no_nacelle_direction and the window flagged with the reason', async () => {
    // Rows of the inclinometer series left out over 200 s of window 2 (from anchor + 800 s): the samples between the
    // two rows around the gap (more than maxGap_s = 120 s apart) have no tilt, as between turbine-series rows.
    // Before, they were rejected but the window stayed 'ok' with no reason (only the turbine series was checked),
    // and the run's warning said they came from turbine-series gaps and that their windows were flagged.
    const e = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { anchor_s: number; gap_rows: number; gap_junk: number; windows: NacExp[] };
    const [head, ...rows] = readFileSync(join(dir, 'data', 'incl.csv'), 'utf8').trim().split('\n');
    const t = (l: string) => Number(l.split(',')[0]);
    const kept = rows.filter((l) => !(t(l) > e.anchor_s + 800 && t(l) < e.anchor_s + 1000));
    writeFileSync(join(dir, 'data', 'incl-gap.csv'), [head, ...kept].join('\n') + '\n');
    const lo = Math.max(...kept.map(t).filter((x) => x <= e.anchor_s + 800)), hi = Math.min(...kept.map(t).filter((x) => x >= e.anchor_s + 1000));
    // Samples strictly inside (lo, hi) that pass the CNR limit (junk at -31 dB, good rows above -25 dB: -26 splits them).
    const [sh, ...samples] = readFileSync(join(dir, 'data', 'fwd4.csv'), 'utf8').trim().split('\n');
    const col = (name: string) => sh.split(',').indexOf(name);
    const inGap = samples.filter((l) => { const c = l.split(','); const ts = Number(c[col('time')]); return ts > lo && ts < hi && Number(c[col('cnr_db')]) > -26; }).length;
    expect(inGap).toBeGreaterThan(2000);
    const c = loadCampaignFile(variant('incl-gap', (o) => (o.file = 'data/incl-gap.csv')));
    const res = await runCampaign(c, { outRoot: join(dir, 'out-gap'), images: false, stages: defaultStages() });
    const a = res.manifest.samples.perInstrument['fwd-4'];
    expect(res.manifest.samples.balanced).toBe(true);
    expect(a.rejected.no_nacelle_direction).toBe(e.gap_rows - e.gap_junk + inGap);
    const nac = readCsv(join(res.runDir, 'nacelle', 'fwd-4.csv'));
    const w2 = nac.find((r) => Math.abs(unix(r.window_start) - e.windows[1].start_s) < 1e-3)!;
    expect(w2.flag).toBe('nacelle_series_gap');
    expect(w2.reason).toMatch(/inclinometer/);
    expect(res.manifest.warnings.join('\n')).toMatch(/inclinometer/);
  });

  it('a turbine series sparser than the windows: every window gets the nacelle direction its samples were turned with', async () => {
    // Every 100th row of the turbine series (one per 300 s), windows of 200 s, maxGap_s 400: some windows hold no
    // series row. Their samples are placed with the series interpolated between the rows around them (README), but
    // the window's nacelle direction and yaw misalignment were taken from the rows inside the window only: empty,
    // with the flag 'ok' and no reason. Expected here from the rows: the time average over the window of the
    // direction interpolated linearly (the short way round) between the rows around each instant, evaluated on a
    // 1-s grid (the turbine series is piecewise linear, so the grid average is within 0.01 deg of the integral).
    const [head, ...rows] = readFileSync(join(dir, 'data', 'turbine.csv'), 'utf8').trim().split('\n');
    const sparse = rows.filter((_, k) => k % 100 === 0);
    writeFileSync(join(dir, 'data', 'turbine-sparse.csv'), [head, ...sparse].join('\n') + '\n');
    const T = sparse.map((l) => unix(l.split(',')[0])), Y = sparse.map((l) => Number(l.split(',')[1]));
    const at = (t: number) => {
      const i = T.findIndex((x) => x > t);
      if (i <= 0) return NaN;
      const d = ((Y[i] - Y[i - 1] + 540) % 360) - 180;
      return Y[i - 1] + ((t - T[i - 1]) / (T[i] - T[i - 1])) * d;
    };
    const c = JSON.parse(readFileSync(join(dir, 'campaign.yaml'), 'utf8'));
    c.turbine.series.file = 'data/turbine-sparse.csv';
    c.windows.length_s = 200;
    c.instruments[0].nacelle.maxGap_s = 400;
    writeFileSync(join(dir, 'sparse.yaml'), JSON.stringify(c, null, 1));
    const res = await runCampaign(loadCampaignFile(join(dir, 'sparse.yaml')), { outRoot: join(dir, 'out-sparse'), images: false, stages: defaultStages() });
    const nac = readCsv(join(res.runDir, 'nacelle', 'fwd-4.csv')).filter((r) => Number(r.samples) > 0);
    let withoutRow = 0;
    for (const r of nac) {
      const s = unix(r.window_start), e = unix(r.window_end);
      const inside = T.filter((t) => t >= s && t < e).length;
      expect(r.nacelle_deg, `window ${r.window}`).not.toBe('');
      expect(r.yaw_misalignment_deg, `window ${r.window}`).not.toBe('');
      if (inside > 0) continue;
      withoutRow++;
      let sn = 0, cs = 0;
      for (let t = s + 0.5; t < e; t += 1) { const v = (at(t) * Math.PI) / 180; sn += Math.sin(v); cs += Math.cos(v); }
      const want = ((Math.atan2(sn, cs) * 180) / Math.PI + 360) % 360;
      expect(Math.abs(((Number(r.nacelle_deg) - want + 540) % 360) - 180), `window ${r.window}`).toBeLessThan(0.01);
    }
    expect(withoutRow).toBeGreaterThanOrEqual(2);
  });

  it('a missing inclinometer file: check fails as run does', async () => {
    // Before, check said nothing (exit 0) and run stopped on it.
    const f = variant('no-file', (o) => (o.file = 'data/absent.csv'));
    const r = await runCli(['check', f]);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain(join(dir, 'data', 'absent.csv'));
    expect(r.stderr).toMatch(/not found/);
  });
});

interface DdCell { window: number; x_m: number; y_m: number; u: number; v: number; u_amp: number; v_amp: number; crossing_deg: number; crossing_mean_deg: number }
interface PlanCell { x_m: number; y_m: number; u_amp: number; v_amp: number; crossing_deg: number; elevations_deg: number[]; usable: boolean; trusted: boolean }

describe.skipIf(!py.python)(`held-back two instruments: dual-Doppler in a horizontal plane, run and plan${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, e: { window_starts: number[]; cells: DdCell[]; plan_cells: PlanCell[]; junk: Record<string, number>; rows: Record<string, number>; inflow: { alpha: number; hub_speed_ms: number }; outside: Record<string, number> };
  beforeAll(() => {
    ({ dir, expected: e } = generate('heldback_dualdoppler.py'));
  });

  it('u and v of every unmasked cell against the cell\'s true wind (w = 0), every row accounted for', async () => {
    const res = await run(dir);
    expect(res.manifest.samples.balanced).toBe(true);
    for (const id of ['dd-a', 'dd-b']) {
      const a = res.manifest.samples.perInstrument[id];
      expect(a.read).toBe(e.rows[id]);
      // Junk at -33 +/- 1 dB, good rows -15 +/- 4 dB (clipped at -2): the junk and at most 0.5 % of the good rows.
      expect(Math.abs(a.rejected.low_cnr - e.junk[id])).toBeLessThan(0.005 * e.rows[id]);
      // Good rows beyond the plane's extent or slab, as the script places them: exactly, but for the good rows the
      // CNR limit took first (low_cnr above the junk count).
      expect(Math.abs(a.rejected.outside_planes - e.outside[id]), id).toBeLessThanOrEqual(Math.max(0, a.rejected.low_cnr - e.junk[id]));
    }
    const rows = readdirSync(join(res.runDir, 'fields')).filter((f) => f.endsWith('.csv')).flatMap((f) => readCsv(join(res.runDir, 'fields', f)));
    let checked = 0, masked = 0;
    for (const c of e.cells) {
      const r = rows.find((q) => Math.abs(unix(q.window_start) - e.window_starts[c.window - 1]) < 1e-3 && Number(q.x_m) === c.x_m && Number(q.y_m) === c.y_m)!;
      expect(r, `cell ${c.x_m} ${c.y_m} window ${c.window}`).toBeDefined();
      // The mask follows the amplification of the cell's mean beams (threshold 3): the script's values at the cell
      // centre differ from those of the samples' mean beams, so only clear cases are checked (outside 2.5..3.5).
      if (c.u_amp < 2.5 && c.v_amp < 2.5) expect(r.u_mask, `cell ${c.x_m} ${c.y_m}`).toBe('');
      if (c.u_amp > 3.5) expect(r.u_mask).toBe('amplification_above_threshold');
      if (r.u_mask !== '') { masked++; continue; }
      // Truth: the mean over the cell's samples of the true rotor-frame wind (smooth: within 0.05 m/s of what the
      // instruments' sample means see); within 4 standard uncertainties + 0.05 m/s.
      expect(Math.abs(Number(r.u_ms) - c.u), `u ${c.x_m} ${c.y_m} w${c.window}`).toBeLessThan(4 * Number(r.u_se_ms) + 0.05);
      expect(Math.abs(Number(r.v_ms) - c.v), `v ${c.x_m} ${c.y_m} w${c.window}`).toBeLessThan(4 * Number(r.v_se_ms) + 0.05);
      expect(r.w_ms).toBe('');
      // Crossing of the two mean beams in the plane of u and v (the script's mean unit beams over the cell's good
      // samples; the robust filter drops a few): within 0.5 deg. Before, the 3-D angle (up to 10 deg more here).
      expect(Math.abs(Number(r.min_crossing_deg) - c.crossing_mean_deg), `crossing ${c.x_m} ${c.y_m}`).toBeLessThan(0.5);
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
    expect(masked).toBeGreaterThan(20);
    // The plane's inflow from the upstream VAD cone (campaign inflow: profile): the script's truth projected on the
    // rotor axis is 8.5 (z / 90)^0.15 cos(2 deg), so exponent 0.15 and hub speed 8.4948 m/s. Exponent within 0.012
    // (about 3 standard uncertainties: 0.25 % speed noise per height over ln(139 / 45) = 1.1), hub speed within 0.5 %.
    // The law is exact in the truth, so its RMS residual is the speeds' noise: standard uncertainties 0.02-0.03 m/s
    // per height, about 0.02 m/s expected for 5 points about a 2-parameter law (sqrt(3/5) of it): below 0.03 m/s. Fitted at the bin centres (up to 6.7 m from the gates' heights here) the residual
    // was 0.046-0.054 m/s and the exponent 0.141-0.149.
    const wake = readCsv(join(res.runDir, 'wake', 'wake_table.csv'));
    expect(wake).toHaveLength(3);
    for (const r of wake) {
      expect(r.inflow_source).toBe('profile');
      expect(Math.abs(Number(r.inflow_alpha) - e.inflow.alpha), r.start).toBeLessThan(0.012);
      expect(Math.abs(Number(r.inflow_hub_speed_ms) / e.inflow.hub_speed_ms - 1), r.start).toBeLessThan(0.005);
      expect(Number(r.inflow_rmse_ms), r.start).toBeLessThan(0.03);
    }
  }, 120_000);

  it('plan: amplification, crossing in the plane of u and v, and trust of each cell as the README\'s rules give', async () => {
    const c = loadCampaignFile(join(dir, 'campaign.yaml'));
    const plan = planCampaign(c);
    const out = join(dir, 'plan-out');
    await writePlanOutputs(plan, c, out, { images: false });
    const rows = readCsv(join(out, 'plan', 'cells_hh.csv'));
    expect(rows).toHaveLength(e.plan_cells.length);
    for (const p of e.plan_cells) {
      const r = rows.find((q) => Number(q.x_m) === p.x_m && Number(q.y_m) === p.y_m)!;
      p.elevations_deg.forEach((el, k) => expect(Math.abs(Number(r[`${['dd-b', 'dd-a'][k]}_elevation_deg`]) - el)).toBeLessThan(1e-3)); // written to 0.001 deg
      if (!p.usable) { expect(r.category).toBe('elevation'); expect(r.trusted).toBe('0'); continue; }
      // Two-beam amplification sqrt(diag((A^T A)^-1)) with w = 0 (the script's numpy inverse): 4 significant digits.
      expect(Math.abs(Number(r.u_amplification) / p.u_amp - 1)).toBeLessThan(1e-3);
      expect(Math.abs(Number(r.v_amplification) / p.v_amp - 1)).toBeLessThan(1e-3);
      // With w = 0 the two beams resolve u and v: their crossing is that of the horizontal projections (written to
      // 0.01 deg). Before, the 3-D angle was used (the tower scanner looks down, the ground one up, which adds up to
      // 10 degrees), and a cell crossing at 28.5 deg passed plan.minCrossing_deg = 30.
      expect(Math.abs(Number(r.min_crossing_deg) - p.crossing_deg), `${p.x_m} ${p.y_m}`).toBeLessThan(0.01);
      // Trusted (u and v pass on a two-scanner plane): the column and the category agree with the rules. Before,
      // the column asked for w too and said 0 in every cell while the category and the summary said trusted.
      expect(r.category === 'trusted', `${p.x_m} ${p.y_m}: ${r.category}`).toBe(p.trusted);
      expect(r.trusted, `${p.x_m} ${p.y_m}`).toBe(p.trusted ? '1' : '0');
    }
    // Shares: the rotor shadow band (|y| <= 50 m: the 40 cells with centres at +/-15 and +/-45 m) and the plane.
    const band = e.plan_cells.filter((p) => Math.abs(p.y_m) < 50);
    const s = plan.summary.planes[0];
    expect(s.components).toBe('uv');
    expect(s.rotor.all).toBeCloseTo(band.filter((p) => p.trusted).length / band.length, 12);
    expect(s.plane.all).toBeCloseTo(e.plan_cells.filter((p) => p.trusted).length / e.plan_cells.length, 12);
  });
});

interface TrkBin { window: number; start_s: number; x_m: number; mean_x_m: number; centre_m: number; width_m: number; amplitude: number; direction_error_deg: number }

describe.skipIf(!py.python)(`held-back wake tracker: a sector through north, the wake wider than the edges assume${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, e: { bins: TrkBin[]; junk: number; rows: number };
  let res: Awaited<ReturnType<typeof run>>;
  beforeAll(async () => {
    ({ dir, expected: e } = generate('heldback_tracker.py'));
    res = await run(dir);
  }, 120_000);

  it('accounts for every row', () => {
    const a = res.manifest.samples.perInstrument['trk-q'];
    expect(res.manifest.samples.balanced).toBe(true);
    expect(a.read).toBe(e.rows);
    // Junk at -30 +/- 0.8 dB, good rows -13 +/- 3 dB: the junk and at most 0.5 % of the rows.
    expect(Math.abs(a.rejected.low_cnr - e.junk)).toBeLessThan(0.005 * e.rows);
  });

  it('centre and width per downstream bin against the script\'s Gaussian wake, within the stated bias and noise', () => {
    const rows = readCsv(join(res.runDir, 'tracks', 'trk-q.csv')).filter((r) => r.scan === '-1');
    for (const b of e.bins) {
      const r = rows.find((q) => Math.abs(unix(q.window_start) - b.start_s) < 1e-3 && Number(q.x_m) === b.x_m)!;
      expect(r, `window ${b.window} x ${b.x_m}`).toBeDefined();
      expect(r.flag, r.reason).toBe('ok');
      // Centre: truth at the bin's mean x (linear in x, so the bin average); within 3 standard errors + 1 m (the
      // 15-m across bins, a 100-m x bin over which the wake widens by 6 m), plus, in window 2 where the flow is
      // 3 deg off the assumed direction, the direction bias the run states for a 3-deg move.
      const bias = b.direction_error_deg > 0 ? Number(r.direction_bias_centre_m) : 0;
      expect(Math.abs(Number(r.centre_m) - b.centre_m), `centre w${b.window} x${b.x_m}`).toBeLessThan(3 * Number(r.centre_se_m) + 1 + bias);
      // Width: the sector spans +/-150 m, only 2.6 widths at 500 m, so the outer bins the free stream is taken
      // from still hold 3-6 % of deficit. The run must not hand that on as a narrower wake: within 3 standard
      // errors + 2 % (15-m bins widen a Gaussian of 46-58 m by sqrt(1 + 15^2 / (12 s^2)) - 1 < 0.5 %; the x-bin
      // average of a linearly growing width adds < 0.5 %), plus the stated direction bias of the width in window 2.
      // Before, the width came out 6-15 % narrow (up to 4.4 standard errors).
      const wb = b.direction_error_deg > 0 ? Number(r.direction_bias_width_m) : 0;
      expect(Math.abs(Number(r.width_m) - b.width_m), `width w${b.window} x${b.x_m}`).toBeLessThan(3 * Number(r.width_se_m) + 0.02 * b.width_m + wb);
      // Amplitude (deficit against the free stream): within 0.012 (noise about 0.005; the same edge effect lowered
      // it by up to 0.019 before).
      expect(Math.abs(Number(r.amplitude) - b.amplitude), `amplitude w${b.window} x${b.x_m}`).toBeLessThan(0.012);
    }
  });

  it('plan: per downstream bin the span, beam-to-flow angle and direction sensitivity over the tracker\'s bins', () => {
    // The script's rows from the declared sweep and the README's tracker bins. Before, every gate of the sweep
    // counted, also those beyond the across bins the analysis uses: the span -364 .. +206 m at 300 m and 40 deg
    // at every distance, where the tracked bins see at most 36, 29 and 23 deg, and the sensitivity was rounded
    // to 0.01 (0.0127 .. 0.0074 here).
    const c = loadCampaignFile(join(dir, 'campaign.yaml'));
    const plan = planCampaign(c);
    const g = plan.geometries.find((x) => x.instrumentId === 'trk-q')!;
    const want = (e as unknown as { plan: { x_m: number; across_min_m: number; across_max_m: number; max_beam_angle_deg: number; rays: number; speed_error_per_deg: number }[] }).plan;
    expect(g.rows).toHaveLength(want.length);
    want.forEach((w, k) => {
      const r = g.rows[k] as Record<string, number>;
      expect(r.x_m).toBe(w.x_m);
      // Rounded to 0.01 m and 0.01 deg in the plan; the sensitivity to 1e-4.
      expect(Math.abs(r.across_min_m - w.across_min_m)).toBeLessThan(0.006);
      expect(Math.abs(r.across_max_m - w.across_max_m)).toBeLessThan(0.006);
      expect(r.rays).toBe(w.rays);
      expect(Math.abs(r.max_beam_angle_deg - w.max_beam_angle_deg)).toBeLessThan(0.006);
      expect(Math.abs(r.speed_error_per_deg - w.speed_error_per_deg)).toBeLessThan(6e-5);
    });
  });
});

describe.skipIf(!py.python)(`held-back wake tracker: a vertical sector under shear, no inflow reference${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('the centre height and width from the sector alone, the shear not read as a deficit', async () => {
    const { dir, expected: e } = generate('heldback_tracker_vertical.py') as { dir: string; expected: { start_s: number; bins: { x_m: number; centre_m: number; width_m: number; amplitude: number }[]; junk: number; rows: number } };
    const res = await run(dir);
    const a = res.manifest.samples.perInstrument['trk-v'];
    expect(res.manifest.samples.balanced).toBe(true);
    expect(a.read).toBe(e.rows);
    expect(Math.abs(a.rejected.low_cnr - e.junk)).toBeLessThan(0.005 * e.rows); // junk at -29 dB, good rows -12 +/- 3 dB
    const rows = readCsv(join(res.runDir, 'tracks', 'trk-v.csv')).filter((r) => r.scan === '-1');
    for (const b of e.bins) {
      const r = rows.find((q) => Number(q.x_m) === b.x_m)!;
      expect(r.flag, r.reason).toBe('ok');
      // Before, the free stream was one mean of the bottom bins (about 26 % slower, 20-40 m) and the top bins
      // (150-170 m): the shear became a deficit falling with height and the centre came out at 14-44 m. Now a power
      // law in height through them. Centre within 3 standard errors + 1.5 m: with the exact free stream the fit
      // still lands 0.1-0.5 m low (the range-height sweep samples each height bin over a different part of the
      // 100-m x bin) and the edge bins, themselves 8-13 % in the wake, tilt the law a little.
      expect(Math.abs(Number(r.centre_m) - b.centre_m), `centre x${b.x_m}`).toBeLessThan(3 * Number(r.centre_se_m) + 1.5);
      // Width within 3 standard errors + 5 %, amplitude within 0.02 (the edges in the wake, as above).
      expect(Math.abs(Number(r.width_m) - b.width_m), `width x${b.x_m}`).toBeLessThan(3 * Number(r.width_se_m) + 0.05 * b.width_m);
      expect(Math.abs(Number(r.amplitude) - b.amplitude), `amplitude x${b.x_m}`).toBeLessThan(0.02);
      expect(r.free_stream_source).toMatch(/power law/);
    }
  }, 120_000);
});

describe.skipIf(!py.python)(`held-back wake tracker on the nacelle: a rear sweep turning with a yawed nacelle${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  it('centre and width in the window\'s rotor frame; no centroid where the sweep cuts the half-peak region', async () => {
    const { dir, expected: e } = generate('heldback_tracker_nacelle.py') as { dir: string; expected: { bins: { window: number; start_s: number; x_m: number; centre_m: number; width_m: number; across_max_m: number }[]; junk: number; rows: number } };
    const res = await run(dir);
    const a = res.manifest.samples.perInstrument.rear;
    expect(res.manifest.samples.balanced).toBe(true);
    expect(a.read).toBe(e.rows);
    expect(Math.abs(a.rejected.low_cnr - e.junk)).toBeLessThan(0.005 * e.rows); // junk at -30 dB, good rows -11 +/- 3 dB
    const rows = readCsv(join(res.runDir, 'tracks', 'rear.csv')).filter((r) => r.scan === '-1');
    for (const b of e.bins) {
      const r = rows.find((q) => Math.abs(unix(q.window_start) - b.start_s) < 1e-3 && Number(q.x_m) === b.x_m)!;
      expect(r.flag, `w${b.window} x${b.x_m}: ${r.reason}`).toBe('ok');
      // The beams turned with the nacelle (yaw +12 deg in window 2) and placed in the window's rotor frame: centre
      // within 3 standard errors + 1 m, width within 3 standard errors + 2 % (15-m bins, 100-m x bins).
      expect(Math.abs(Number(r.centre_m) - b.centre_m), `centre w${b.window} x${b.x_m}`).toBeLessThan(3 * Number(r.centre_se_m) + 1);
      expect(Math.abs(Number(r.width_m) - b.width_m), `width w${b.window} x${b.x_m}`).toBeLessThan(3 * Number(r.width_se_m) + 0.02 * b.width_m);
      // The centroid of the bins above half the peak is shape-independent only when that region lies inside the
      // data: in window 2 at 200 m the yawed sweep stops at y = 30 m (the script's last gate), inside the half-peak
      // region 13.9 +/- 1.18 * 39.8 m, and the centroid came out at 2.6 m (11 m off) with nothing said. It must then
      // be left empty; elsewhere within 4 m (a threshold at half the peak on 15-m bins: common practice, not derived).
      const halfPeakTop = b.centre_m + 1.1774 * b.width_m;
      if (b.across_max_m < halfPeakTop) expect(r.centroid_m, `centroid w${b.window} x${b.x_m}`).toBe('');
      else expect(Math.abs(Number(r.centroid_m) - b.centre_m), `centroid w${b.window} x${b.x_m}`).toBeLessThan(4);
    }
  }, 120_000);
});
