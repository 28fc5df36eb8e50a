/**
 * The package as a user gets it: `npm pack` (no scripts, no network), unpacked into a temporary project whose
 * node_modules links each declared dependency to the ones already installed here (so a dependency missing from
 * package.json fails the import), then the library API called from plain JavaScript and type-checked from
 * TypeScript against the shipped declarations. Builds dist/ first if it is stale.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
// @ts-expect-error plain JavaScript without declarations
import { sourceStamp } from '../bin/stamp.js';

const root = resolve('.');

describe('npm pack: the packed library, installed into a fresh project', () => {
  it('loads, runs, retrieves from arrays, analyses and plans through the public API, with working type declarations', async () => {
    const stamp = sourceStamp(join(root, 'src'));
    let built: { files?: number; newest_ms?: number } = {};
    try { built = JSON.parse(readFileSync(join(root, 'dist', 'build.json'), 'utf8')); } catch { /* no build */ }
    if (built.files !== stamp.files || built.newest_ms !== stamp.newest_ms) execFileSync(process.execPath, ['bin/build.js'], { stdio: 'pipe' });

    const tmp = mkdtempSync(join(tmpdir(), 'wakeplane-pack-'));
    const packed = JSON.parse(execFileSync('npm', ['pack', '--ignore-scripts', '--json', '--pack-destination', tmp], { encoding: 'utf8' }));
    const tarball = join(tmp, packed[0].filename);
    const project = join(tmp, 'project'), mods = join(project, 'node_modules');
    mkdirSync(join(mods, 'wakeplane'), { recursive: true });
    execFileSync('tar', ['-xzf', tarball, '-C', join(mods, 'wakeplane'), '--strip-components=1']);
    const pkg = JSON.parse(readFileSync(join(mods, 'wakeplane', 'package.json'), 'utf8'));
    expect(pkg.private).toBeUndefined();
    expect(pkg.license).toBe('MIT');
    for (const dep of Object.keys(pkg.dependencies)) {
      mkdirSync(dirname(join(mods, dep)), { recursive: true });
      symlinkSync(join(root, 'node_modules', dep), join(mods, dep), 'dir');
    }
    writeFileSync(join(project, 'package.json'), JSON.stringify({ name: 'consumer', private: true, type: 'module' }));

    // data for a run: the tiny simulated campaign
    const { dir, file } = writeTinyCampaign({ name: 'packed', plan: { directions_deg: [270] } });
    await simulateCampaign(loadCampaignFile(file));

    // Analytic check: three unit beams (rotor frame) measuring V = (8, -1, 0.5) m/s without noise, 5 samples each
    // in cell 40 of plane 0: the least-squares solution is V itself, to the retrieval's fixed-point quantisation
    // (grid/accumulator.ts: v_r to 2^-20 m/s, beam components to 2^-26: at most 4.8e-7 + 8 * 7.5e-9 m/s per
    // equation, times the error amplification of these beams, below 10): 1e-5 m/s.
    writeFileSync(join(project, 'check.mjs'), `
import { loadCampaign, runCampaign, wakeStage, retrieveFromArrays, analyseField, planCampaign, OUTPUT_TABLES, VERSION } from 'wakeplane';
const c = loadCampaign(${JSON.stringify(file)});
const run = await runCampaign(c, { outRoot: ${JSON.stringify(join(dir, 'out'))}, images: false, stages: [wakeStage()] });
const beams = [[0.9, 0.3, 0.1], [0.8, -0.5, 0.2], [0.7, 0.1, 0.6]].map((b) => { const n = Math.hypot(...b); return b.map((x) => x / n); });
const V = [8, -1, 0.5];
const s = { plane: [], cell: [], instrument: [], radialVelocity: [], beamX: [], beamY: [], beamZ: [] };
beams.forEach((b, i) => { for (let k = 0; k < 5; k++) { s.plane.push(0); s.cell.push(40); s.instrument.push(i); s.radialVelocity.push(b[0] * V[0] + b[1] * V[1] + b[2] * V[2]); s.beamX.push(b[0]); s.beamY.push(b[1]); s.beamZ.push(b[2]); } });
const r = retrieveFromArrays(c, s, { index: 0, start_s: 0, end_s: 600 }, 270);
const f = r.fields[0];
const wake = analyseField(f, c);
const plan = planCampaign(c);
console.log(JSON.stringify({ version: VERSION, balanced: run.manifest.samples.balanced, read: run.manifest.samples.total.read, uvw: [f.u[40], f.v[40], f.w[40]], flag: wake.flag, planes: plan.summary.planes.length, tables: OUTPUT_TABLES.length }));
`);
    const out = spawnSync(process.execPath, ['check.mjs'], { cwd: project, encoding: 'utf8' });
    expect(out.status, out.stderr).toBe(0);
    const x = JSON.parse(out.stdout.trim().split('\n').at(-1)!);
    expect(x.version).toBe(pkg.version);
    expect(x.balanced).toBe(true);
    expect(x.read).toBeGreaterThan(1000);
    x.uvw.forEach((v: number, k: number) => expect(Math.abs(v - [8, -1, 0.5][k])).toBeLessThan(1e-5));
    expect(typeof x.flag).toBe('string'); // one cell retrieved: the analysis flags it rather than failing
    expect(x.planes).toBe(1);
    expect(x.tables).toBeGreaterThan(5);

    // The declarations: a correct call type-checks, a wrong one is caught (so the types are not `any`).
    writeFileSync(join(project, 'check.ts'), `
import { retrieveFromArrays, loadCampaign, type FieldResult, type Campaign } from 'wakeplane';
const c: Campaign = loadCampaign('x.yaml');
const f: FieldResult[] = retrieveFromArrays(c, { plane: [0], cell: [0], instrument: [0], radialVelocity: [1], beamX: [1], beamY: [0], beamZ: [0] }, { index: 0, start_s: 0, end_s: 1 }, 270).fields;
// @ts-expect-error the samples must be arrays
retrieveFromArrays(c, { plane: 0 }, { index: 0, start_s: 0, end_s: 1 }, 270);
export { f };
`);
    writeFileSync(join(project, 'tsconfig.json'), JSON.stringify({ compilerOptions: { module: 'nodenext', moduleResolution: 'nodenext', target: 'es2022', strict: true, noEmit: true, skipLibCheck: true, types: [] }, files: ['check.ts'] }));
    const tsc = spawnSync(process.execPath, [join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', project], { encoding: 'utf8' });
    expect(tsc.status, tsc.stdout + tsc.stderr).toBe(0);
  }, 300_000);
});
