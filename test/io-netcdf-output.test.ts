/**
 * The NetCDF-4/CF outputs, read back by two readers outside our code: netCDF-C's ncdump (Debian netcdf-bin) and
 * xarray over netCDF4-python (Debian python3-xarray, python3-netcdf4; script test/reference/read_netcdf_outputs.py).
 * Values are compared with the CSV tables of the same run, within the CSV's rounding. .ci/run installs the packages;
 * locally the tests skip, saying which package is missing.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { netcdfStage, wakeStage } from '../src/pipeline/stages.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { debianPython, hasCommand } from './helpers/python.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { readCsv } from './helpers/csvTable.ts';

const ncdump = hasCommand('ncdump');
const py = debianPython(['xarray', 'netCDF4']);


/** Half a unit of the last digit written: the rounding bound of a CSV value. */
function half(s: string): number {
  const dot = s.indexOf('.');
  return dot < 0 ? 0.5 : 0.5 * 10 ** -(s.length - dot - 1);
}

describe('NetCDF-4/CF outputs', () => {
  let runDir = '';
  beforeAll(async () => {
    const { dir, file } = writeTinyCampaign({ name: 'nc-out', site: { origin_wgs84: { lat_deg: 47.5, lon_deg: -3.2, alt_m: 20 } } });
    await simulateCampaign(loadCampaignFile(file));
    runDir = (await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: false, stages: [wakeStage(), netcdfStage()] })).runDir;
  });

  it.skipIf(!ncdump)(`ncdump: a window variable is chunked by 64 windows, not one chunk per window${ncdump ? '' : ' (skipped: no ncdump; Debian netcdf-bin)'}`, () => {
    // netCDF-C reports the HDF5 chunk shape as the special attribute _ChunkSizes (ncdump -s). One chunk per window made
    // thousands of tiny compressed chunks in a long campaign (4,167 windows of 10 s: the writer 5 s behind the run).
    const r = spawnSync('ncdump', ['-hs', join(runDir, 'fields', 'p5.nc')], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/\bu:_ChunkSizes = 64, \d+, \d+ ;/);
    expect(r.stdout).toMatch(/\bwindow_bounds:_ChunkSizes = 64, 2 ;/);
  });

  it.skipIf(!ncdump)(`ncdump reads the field file: CF conventions, unlimited window, standard names and flags${ncdump ? '' : ' (skipped: no ncdump; Debian netcdf-bin)'}`, () => {
    const r = spawnSync('ncdump', ['-h', join(runDir, 'fields', 'p5.nc')], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const h = r.stdout;
    expect(h).toMatch(/window = UNLIMITED ; \/\/ \(3 currently\)/);
    expect(h).toMatch(/z = 6 ;/);
    expect(h).toMatch(/y = 12 ;/);
    expect(h).toMatch(/:Conventions = "CF-1\.8"/);
    expect(h).toMatch(/:campaign_sha256 = "[0-9a-f]{64}"/);
    expect(h).toMatch(/float u\(window, z, y\)/);
    expect(h).toMatch(/w:standard_name = "upward_air_velocity"/);
    expect(h).toMatch(/w_se:standard_name = "upward_air_velocity standard_error"/);
    expect(h).toMatch(/eastward_wind:standard_name = "eastward_wind"/);
    expect(h).toMatch(/u_mask:flag_meanings = "valid no_data too_few_samples too_few_instruments amplification_above_threshold singular_geometry assumed_zero uncertainty_above_threshold"/);
    // The uncertainty budget and turbulence statistics follow the data dictionary (records/tables/fields.ts).
    expect(h).toMatch(/float u_unc_combined\(window, z, y\)/);
    expect(h).toMatch(/u_unc_sampling:units = "m s-1"/);
    expect(h).toMatch(/u_variance:units = "m2 s-2"/);
    const v = spawnSync('ncdump', ['-v', 'window_index', join(runDir, 'fields', 'p5.nc')], { encoding: 'utf8' });
    expect(v.stdout).toMatch(/window_index = 0, 1, 2 ;/);
    const w = spawnSync('ncdump', ['-h', join(runDir, 'wake', 'wake_table.nc')], { encoding: 'utf8' });
    expect(w.status, w.stderr).toBe(0);
    expect(w.stdout).toMatch(/string flag\(row\)/);
    expect(w.stdout).toMatch(/double yc\(row\)/);
  });

  it.skipIf(!py.python)(`xarray reads the values of the CSV tables, times decoded, site-frame wind and WGS84 positions${py.python ? '' : ` (skipped: ${py.why})`}`, () => {
    const r = spawnSync(py.python!, ['test/reference/read_netcdf_outputs.py', runDir, 'p5'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const x = JSON.parse(r.stdout);
    expect(x.conventions).toBe('CF-1.8');
    expect(x.dims).toEqual({ window: 3, z: 6, y: 12, nv: 2 });
    expect(x.w_standard_name).toBe('upward_air_velocity');
    expect(x.eastward_standard_name).toBe('eastward_wind');
    const files = readdirSync(join(runDir, 'fields')).filter((f) => f.endsWith('.csv')).sort();
    expect(files.length).toBe(3);
    const n = 72;
    let checked = 0, masked = 0;
    files.forEach((f, k) => {
      const rows = readCsv(join(runDir, 'fields', f));
      expect(x.bounds_start[k]).toBe(rows[0].window_start.slice(0, 19)); // CF time decoded by xarray = the CSV's ISO time
      rows.forEach((row, c) => {
        const at = k * n + c;
        expect(x.y[c % 12]).toBe(Number(row.y_m));
        expect(x.z[Math.floor(c / 12)]).toBe(Number(row.z_m));
        for (const [col, v] of [['u_ms', 'u'], ['v_ms', 'v'], ['w_ms', 'w'], ['u_se_ms', 'u_se'], ['w_amplification', 'w_amplification']] as const) {
          if (row[col] === '') { expect(x[v][at], `${f} ${c} ${v}`).toBeNull(); continue; }
          // CSV rounding (half a unit of its last digit) plus float32 storage (6e-8 relative)
          expect(Math.abs(x[v][at] - Number(row[col])), `${f} ${c} ${v}`).toBeLessThanOrEqual(half(row[col]) + 6e-8 * Math.abs(Number(row[col])) + 1e-12);
          checked++;
        }
        expect(x.flag_meanings[x.w_mask[at]]).toBe(row.w_mask === '' ? 'valid' : row.w_mask);
        if (row.w_mask) masked++;
        if (row.u_ms !== '' && row.v_ms !== '') {
          // README conventions: wind from D flows toward D + 180: x = (-sin D, -cos D) in (east, north); y, to its
          // left, = (cos D, -sin D). Bound: both components' CSV rounding through |sin|, |cos| <= 1, plus float32.
          const D = (Number(row.direction_deg) * Math.PI) / 180, u = Number(row.u_ms), v = Number(row.v_ms);
          const tol = half(row.u_ms) + half(row.v_ms) + 1e-6 * (Math.abs(u) + Math.abs(v));
          expect(Math.abs(x.eastward_wind[at] - (-u * Math.sin(D) + v * Math.cos(D)))).toBeLessThanOrEqual(tol);
          expect(Math.abs(x.northward_wind[at] - (-u * Math.cos(D) - v * Math.sin(D)))).toBeLessThanOrEqual(tol);
        }
        // WGS84 position: cell (x = 5 D = 600 m, y) about the turbine at the site origin, to east/north as above, then
        // the local radii of curvature of WGS84 (a = 6378137 m, e^2 = 0.00669437999014; NIMA TR8350.2, from memory):
        // M = a (1 - e^2) / (1 - e^2 sin^2 phi)^1.5, N = a / sqrt(1 - e^2 sin^2 phi); dlat = n / M, dlon = e / (N cos phi).
        // Over < 1 km the flat approximation errs by ~ (d / R)^2 ~ 1e-8 relative: 1e-6 degree (0.1 m) is ample.
        const D = (Number(row.direction_deg) * Math.PI) / 180, yy = Number(row.y_m);
        const e = -600 * Math.sin(D) + yy * Math.cos(D), nn = -600 * Math.cos(D) - yy * Math.sin(D);
        const phi = (47.5 * Math.PI) / 180, a = 6378137, e2 = 0.00669437999014, s2 = 1 - e2 * Math.sin(phi) ** 2;
        const M = (a * (1 - e2)) / s2 ** 1.5, N = a / Math.sqrt(s2);
        expect(Math.abs(x.latitude[at] - (47.5 + ((nn / M) * 180) / Math.PI))).toBeLessThan(1e-6);
        expect(Math.abs(x.longitude[at] - (-3.2 + ((e / (N * Math.cos(phi))) * 180) / Math.PI))).toBeLessThan(1e-6);
      });
    });
    expect(checked).toBeGreaterThan(500);
    expect(masked).toBeGreaterThan(0);
    // the wake table: same rows, times decoded, centres within the CSV rounding
    const wake = readCsv(join(runDir, 'wake', 'wake_table.csv'));
    expect(x.wake_start).toEqual(wake.map((w) => w.start.slice(0, 19)));
    expect(x.wake_flag).toEqual(wake.map((w) => w.flag));
    wake.forEach((w, i) => {
      if (w.yc_m === '') expect(x.wake_yc[i]).toBeNull();
      else expect(Math.abs(x.wake_yc[i] - Number(w.yc_m))).toBeLessThanOrEqual(half(w.yc_m) + 1e-9);
    });
    const prof = readCsv(join(runDir, 'wake', 'profiles.csv'));
    expect(x.profiles_cut).toEqual(prof.map((p) => p.cut));
    prof.forEach((p, i) => {
      if (p.u_ms === '') expect(x.profiles_u[i]).toBeNull();
      else expect(Math.abs(x.profiles_u[i] - Number(p.u_ms))).toBeLessThanOrEqual(half(p.u_ms) + 1e-9);
    });
  });
});
