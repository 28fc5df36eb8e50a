/**
 * `wakeplane render <run folder>`: redoes the figures and the report of a finished run from its own outputs,
 * without reading any sample again. The campaign comes from the manifest (the settings the run used), the fields
 * from the field tables (read back one at a time), the wake analysis is recomputed from those fields and the
 * series files (pure and quick), and the planner's maps are redrawn when the run had them. Only a complete run
 * folder that wakeplane marked for the manifest's campaign is touched (pipeline/outputFolder.ts). The field tables, wake
 * tables and accounting stay as they are; images and report.html are replaced, images of single windows, condition
 * bins or the planner that the new selection no longer draws are removed (only files the manifest lists as this
 * run's images), figures of stages the render does not redo (profiles, nacelle instruments, trackers, the power gain:
 * their results are not in the field tables) are kept as the run drew them, and manifest.json lists the new outputs
 * with the time of the render.
 */
import { existsSync, readFileSync, rmSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import type { WindowImages } from '../campaign/figures.ts';
import { ID_MAX, ID_PATTERN, ID_RULE } from '../campaign/schema.ts';
import type { Campaign } from '../campaign/types.ts';
import { InputError, OptionError, OutputError } from '../errors.ts';
import { missingSelectedText } from '../render/figureSelection.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { noteOnInterrupt } from '../io/cleanup.ts';
import type { OutputRecord, RunManifest } from './manifest.ts';
import { markRendering, replaceRefusal } from './outputFolder.ts';
import type { RunProgress, StageContext } from './run.ts';
import { fieldsFromTables, imageStage, planStage, reportStage, wakeStage } from './stages.ts';
import { budgetStage } from './budgetStage.ts';

export interface RenderOptions {
  /** Override output.figures.windowImages and binImages. */
  windowImages?: WindowImages;
  binImages?: WindowImages;
  progress?: RunProgress;
}

export interface RenderResult {
  runDir: string;
  manifest: RunManifest;
  images: number;
  removed: number;
  /** Figure files of stages the render does not redo, kept as the run drew them (listed in the manifest still). */
  kept: number;
  seconds: number;
}

/** The campaign a run used, from its manifest (JSON turned NaN into null: planes get theirs back). */
export function campaignFromManifest(m: RunManifest, file: string): Campaign {
  const c = m.settings as Campaign | undefined;
  if (!c || typeof c !== 'object' || !Array.isArray(c.planes) || !c.turbine) throw new InputError(file, undefined, 'the manifest carries no campaign settings to render from');
  // Ids name the figure files: a hand-edited manifest must not lead a render outside the run folder.
  for (const key of ['planes', 'turbines', 'instruments'] as const) {
    ((c as unknown as Record<string, { id?: unknown }[] | undefined>)[key] ?? []).forEach((x, i) => {
      if (typeof x?.id !== 'string' || !ID_PATTERN.test(x.id) || x.id.length > ID_MAX) throw new InputError(file, undefined, `settings.${key}[${i}].id: ${ID_RULE}, at most ${ID_MAX} characters (got ${JSON.stringify(x?.id)}); nothing redrawn`);
    });
  }
  const num = (v: unknown) => (typeof v === 'number' ? v : NaN);
  return { ...c, planes: c.planes.map((p) => ({ ...p, x_m: num(p.x_m), z_m: num(p.z_m) })) };
}

const REDRAWN = new Set(['image', 'report', 'manifest']);

export async function renderRunFolder(folder: string, opts: RenderOptions = {}): Promise<RenderResult> {
  const t0 = performance.now();
  const runDir = resolve(folder);
  const manifestPath = join(runDir, 'manifest.json');
  if (!existsSync(manifestPath)) throw new InputError(manifestPath, undefined, 'not a finished run folder (no manifest.json)');
  let m: RunManifest;
  try {
    m = JSON.parse(readFileSync(manifestPath, 'utf8')) as RunManifest;
  } catch (e) {
    throw new InputError(manifestPath, undefined, `cannot read the manifest: ${(e as Error).message}`);
  }
  // Only a complete run folder wakeplane marked for this campaign is rewritten (outputFolder.ts).
  const refusal = replaceRefusal(runDir, 'run', m.campaign?.name ?? '');
  if (refusal) {
    const advice = refusal.includes('which wakeplane did not write') ? '. Move it out of the folder and render again' : '';
    throw new OutputError(runDir, refusal.replace(/; left alone.*$/, '; left alone, nothing redrawn') + advice);
  }
  const campaign = campaignFromManifest(m, manifestPath);
  // Images asked for windows or bins the run does not have: an error before anything is redrawn.
  const missing = [
    opts.windowImages ? missingSelectedText(opts.windowImages, (m.windows ?? []).map((w) => w.index), 'window') : '',
    opts.binImages ? missingSelectedText(opts.binImages, (m.ensembles ?? []).filter((e) => !e.empty).map((e) => e.bin), 'condition bin') : '',
  ].filter(Boolean);
  if (missing.length) throw new OptionError('window-images', `${missing.join('; ')}; nothing redrawn`);
  // Every field table the manifest lists must be there before anything is redrawn (a deleted or moved table would
  // otherwise stop the render half way, with some figures replaced).
  for (const o of m.outputs ?? []) {
    if (o.kind !== 'field-table' || !o.path.endsWith('.csv')) continue;
    const table = join(runDir, o.path);
    if (!existsSync(table)) throw new InputError(table, undefined, 'field table listed in the manifest is missing; nothing redrawn');
  }
  const progress = opts.progress;
  markRendering(runDir, true);
  const shown = relative(process.cwd(), runDir) || runDir;
  const unnote = noteOnInterrupt(`${shown} was part redrawn (its manifest and report.html are still the earlier ones); run \`wakeplane render ${shown}\` again`);
  try {
    const oldImages = m.outputs.filter((o) => o.kind === 'image');
    const hadPlan = m.outputs.some((o) => o.path.startsWith('plan/'));
    const kept: OutputRecord[] = m.outputs.filter((o) => !REDRAWN.has(o.kind) && !(hadPlan && o.path.startsWith('plan/')));
    const manifest: RunManifest = { ...m, outputs: kept, timings_s: { ...m.timings_s }, warnings: [...m.warnings] };
    const ctx: StageContext = { campaign, runDir, images: true, manifest, shared: {} };

    // The wake analysis again from the field tables, without writing its tables, then the figures.
    const wake = wakeStage({ write: false });
    const budget = budgetStage();
    const images = imageStage({ ...(opts.windowImages ? { windowImages: opts.windowImages } : {}), ...(opts.binImages ? { binImages: opts.binImages } : {}) });
    progress?.stage('reading field tables');
    let t: number;
    for await (const f of fieldsFromTables(campaign, runDir, manifest, () => true)) {
      await wake.field!(f, ctx);
      await budget.field!(f, ctx);
      await images.field!(f, ctx);
      progress?.file('fields', 1);
    }
    await wake.finish!(ctx);
    progress?.stage('images');
    t = performance.now();
    // The budget's figures and report section again from the tables' budget columns (runs without them have none).
    const recs = [...(await budget.finish!(ctx)), ...(await images.finish!(ctx))];
    manifest.outputs.push(...recs);
    manifest.timings_s.images = (performance.now() - t) / 1000;
    // The figures of the data-driven CNR limit, from the evidence the manifest keeps (a run without images has none yet).
    if (manifest.cnrLimits) {
      const { renderCnrLimitFigures } = await import('../render/cnrLimitFigure.ts');
      const cnrFigures = await renderCnrLimitFigures(manifest.cnrLimits.perInstrument, runDir);
      recs.push(...cnrFigures);
      manifest.outputs.push(...cnrFigures);
    }
    if (hadPlan) {
      progress?.stage('planner');
      t = performance.now();
      manifest.outputs.push(...(await planStage().finish!(ctx)));
      manifest.timings_s.planner = (performance.now() - t) / 1000;
    }
    const fresh = new Set(manifest.outputs.map((o) => o.path));
    let removed = 0, keptAsDrawn = 0;
    for (const o of oldImages) {
      if (fresh.has(o.path)) continue;
      // Drawn or not by the selection (single windows, bins) or by the planner redrawn: gone when not drawn now.
      const bySelection = o.window !== undefined || o.bin !== undefined || (hadPlan && o.path.startsWith('plan/'));
      if (bySelection) {
        if (!/^(images|plan)\/[^/]+\.(svg|png)$/.test(o.path)) continue;
        rmSync(join(runDir, o.path), { force: true });
        removed++;
      } else if (existsSync(join(runDir, o.path))) {
        // A figure of a stage this render does not redo (its results are not in the field tables): kept, still listed.
        manifest.outputs.push(o);
        keptAsDrawn++;
      }
    }
    // The analysis again may state a warning the run already recorded: keep each once.
    manifest.warnings = [...new Set(manifest.warnings)];
    manifest.rendered = { at: new Date().toISOString(), seconds: (performance.now() - t0) / 1000 };
    progress?.stage('report');
    manifest.outputs.push(...(await reportStage().finish!(ctx)));
    manifest.outputs.push({ kind: 'manifest', path: 'manifest.json', description: 'this run: inputs, settings, sample accounting, timings' });
    writeFileAtomic(manifestPath, JSON.stringify(manifest, null, 2) + '\n');
    markRendering(runDir, false);
    progress?.done();
    return { runDir, manifest, images: recs.filter((r) => r.path.endsWith('.svg')).length, removed, kept: keptAsDrawn, seconds: manifest.rendered.seconds };
  } finally {
    unnote();
  }
}
