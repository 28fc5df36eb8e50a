/**
 * A reviewer's held-back NetCDF case: three instruments' sample files written outside our code
 * (test/reference/heldback_netcdf.py: python3-netcdf4 and xarray), each in its own conventions (standard names and
 * degrees with time in seconds since 2000 and shared gates; mapped names, radians, km, days since a date, the
 * "toward" sign, missing_value, per-ray ranges, odd chunks; xarray's int64 microseconds, packed int16 velocity
 * with NaN holes), with the same samples, decoded by hand in the script, as plain CSV and as .csv.gz. A run from
 * the NetCDF files must account for every masked sample as missing_value and otherwise match the CSV run exactly;
 * our NetCDF output, read back with xarray, must match our CSV field tables.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { netcdfStage, wakeStage } from '../src/pipeline/stages.ts';
import { debianPython } from './helpers/python.ts';

const py = debianPython(['netCDF4', 'numpy', 'pandas', 'xarray']);
// Read on the main thread: starting the reader thread from the sources costs seconds under vitest, and the thread
// gives the same samples as the direct path (io-netcdf.test.ts checks that).
process.env.WAKEPLANE_READER_THREAD = '0';
type Expected = Record<'west' | 'east' | 'back', { masked: number; samples: number; csv: number }>;

describe.skipIf(!py.python)(`held-back NetCDF files written by python3-netcdf4 and xarray${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
  let dir: string, expected: Expected;
  let csvRun: Awaited<ReturnType<typeof runCampaign>>;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'wakeplane-heldback-nc-'));
    const r = spawnSync(py.python!, ['test/reference/heldback_netcdf.py', dir, '--minutes', '6'], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(r.stderr);
    expected = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as Expected;
    csvRun = await runCampaign(loadCampaignFile(join(dir, 'campaign-csv.yaml')), { outRoot: join(dir, 'out-csv'), images: false });
  });

  it('every masked sample is a missing_value rejection; all else and the field tables equal the CSV run', async () => {
    const nc = await runCampaign(loadCampaignFile(join(dir, 'campaign-nc.yaml')), { outRoot: join(dir, 'out-nc'), images: false, stages: [wakeStage(), netcdfStage()] });
    expect(nc.manifest.samples.balanced).toBe(true);
    for (const id of ['west', 'east', 'back'] as const) {
      const a = csvRun.manifest.samples.perInstrument[id], b = nc.manifest.samples.perInstrument[id];
      // Counts from the script: samples in the file, masked ones (fill values, missing_value, NaN, a masked azimuth).
      expect(b.read, id).toBe(expected[id].samples);
      expect(a.read, id).toBe(expected[id].csv);
      expect(b.rejected.missing_value, id).toBe(expected[id].masked);
      expect(b.accepted, id).toBe(a.accepted);
      expect({ ...b.rejected, missing_value: 0 }, id).toEqual(a.rejected);
    }
    // The script's CSV holds the decoded values the reader must produce (same floating-point operations: time *
    // unit + epoch, radians * 180/pi, km * 1000, -stored, stored * 0.01 - 20); xarray's microsecond times differ
    // from the CSV's by < 1e-6 s, far from any window edge. The written tables are therefore identical.
    const names = readdirSync(join(csvRun.runDir, 'fields')).filter((n) => n.endsWith('.csv'));
    expect(names.length).toBe(2);
    for (const n of names) expect(readFileSync(join(nc.runDir, 'fields', n), 'utf8'), n).toBe(readFileSync(join(csvRun.runDir, 'fields', n), 'utf8'));
    // Our NetCDF output read back by xarray against our CSV tables, variable by variable (the script's rule: half a
    // unit of the CSV's last digit plus float32 rounding; masks by flag meaning).
    const r = spawnSync(py.python!, ['test/reference/compare_field_netcdf.py', nc.runDir, 'x5'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const cmp = JSON.parse(r.stdout) as { wake_table: { missing: string[]; extra: string[]; named: number }; windows_nc: number; windows_csv: number; compared: string[]; cells: number; mismatches: unknown[]; mismatch_count: number };
    expect(cmp.windows_nc).toBe(2);
    expect(cmp.windows_csv).toBe(2);
    expect(cmp.compared).toEqual(expect.arrayContaining(['u', 'v', 'w', 'u_se', 'u_mask', 'samples', 'u_unc_combined']));
    expect(cmp.mismatches).toEqual([]);
    // The dictionary names every variable of wake/wake_table.nc (regression: x_D, disagreement_D were named "x",
    // "disagreement" like their metre twins, so a program could not find them by the dictionary).
    expect(cmp.wake_table.missing).toEqual([]);
    expect(cmp.wake_table.extra).toEqual([]);
    expect(cmp.wake_table.named).toBeGreaterThan(60);
  });

  it('a .csv.gz file reads as its plain CSV', async () => {
    const gz = await runCampaign(loadCampaignFile(join(dir, 'campaign-gz.yaml')), { outRoot: join(dir, 'out-gz'), images: false });
    expect(gz.manifest.samples.perInstrument.back).toEqual(csvRun.manifest.samples.perInstrument.back);
    expect(gz.manifest.samples.perInstrument.east).toEqual(csvRun.manifest.samples.perInstrument.east);
  });

  it('a file with no rays, and one whose every sample is masked: one line in NetCDF terms (rays, variable, ray, gate)', async () => {
    // Regression: the messages spoke of "a header and no data lines" and of "line NaN".
    const code = [
      'import sys, numpy as np, netCDF4',
      'for path, n in ((sys.argv[1], 0), (sys.argv[2], 4)):',
      '  with netCDF4.Dataset(path, "w") as d:',
      '    d.createDimension("time", None); d.createDimension("range", 3)',
      '    t = d.createVariable("time", "f8", ("time",)); t.units = "seconds since 2026-05-09 10:07:43"; t[:] = np.arange(n, dtype="f8")',
      '    r = d.createVariable("range", "f8", ("range",)); r.units = "m"; r[:] = [500.0, 515.0, 530.0]',
      '    for a in ("azimuth", "elevation"):',
      '      x = d.createVariable(a, "f8", ("time",)); x.units = "degree"; x[:] = np.zeros(n)',
      '    v = d.createVariable("radial_velocity", "f4", ("time", "range"), fill_value=-999.0); v.units = "m s-1"',
      '    if n: v[:] = np.ma.masked_all((n, 3))',
    ].join('\n');
    const empty = join(dir, 'data', 'empty.nc'), masked = join(dir, 'data', 'masked.nc');
    const r = spawnSync(py.python!, ['-c', code, empty, masked], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    for (const [f, re] of [
      [empty, /empty\.nc: no usable rows: the file has no rays \(its time dimension is empty\)/],
      [masked, /masked\.nc: no usable samples: none of its 12 samples could be read \(missing_value 12; the first, variable "radial_velocity" at ray 0, gate 0: radial velocity: missing value -999\)/],
    ] as const) {
      const c = loadCampaignFile(join(dir, 'campaign-nc.yaml'));
      c.instruments[0].files = [f];
      const err = await runCampaign(c, { outRoot: join(dir, 'out-bad'), images: false }).then(() => null, (e: unknown) => e);
      expect((err as Error).message).toMatch(re);
      expect((err as Error).message).not.toContain('\n');
    }
  });
});

