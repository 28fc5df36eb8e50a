/**
 * All figures of a set of fields held in memory, in one call (for library use and tests; a run streams its
 * fields through the figure stage instead): the summary plots, one multi-panel figure per plane and the images of
 * the selected windows, on the scales shared by all the fields.
 */
import { FIGURES_DEFAULT, type FiguresSettings, type WindowImages } from '../campaign/figures.ts';
import type { Campaign } from '../campaign/types.ts';
import type { OutputRecord } from '../records/manifest.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { WakeAnalysis } from '../wake/types.ts';
import { RenderQueue } from './renderQueue.ts';
import { FigureCollector, renderRunFigures, turbineViewsOf } from './runFigures.ts';

export interface RenderRunOptions {
  /** Images of single windows (default: the campaign's output.figures.windowImages). */
  windowImages?: WindowImages;
  /** PNG density, dots per inch (default: the campaign's, 300). */
  density?: number;
  /** Figures rendered at the same time (default: the machine's cores). */
  workers?: number;
  /** Called after each figure is written, with the counts so far (for progress displays). */
  onFigure?: (written: number, added: number) => void;
}

export async function renderRun(fields: FieldResult[], analysis: WakeAnalysis | undefined, campaign: Campaign, runDir: string, opts: RenderRunOptions = {}): Promise<OutputRecord[]> {
  const base: FiguresSettings = campaign.output.figures ?? FIGURES_DEFAULT;
  const settings: FiguresSettings = {
    ...base,
    ...(opts.windowImages ? { windowImages: opts.windowImages } : {}),
    ...(opts.density ? { density: opts.density } : {}),
    ...(opts.workers ? { workers: opts.workers } : {}),
  };
  const ordered = [...fields].sort((a, b) => a.window.index - b.window.index || a.planeIndex - b.planeIndex);
  const rows = new Map((analysis?.rows ?? []).map((r) => [`${r.planeId}\u0000${r.window.index}`, r]));
  // Several turbines: every turbine's view of a field, for the wake tracks of the panels.
  const site = turbineViewsOf(analysis?.rows ?? [], (pid, k) => `${pid}\u0000${k}`);
  const collector = new FigureCollector(settings.maxPanels, campaign);
  for (const f of ordered) {
    const k = `${f.planeId}\u0000${f.window.index}`;
    if (f.window.kind === 'ensemble') collector.add(f, undefined);
    else collector.add(f, rows.get(k) ?? site.get(k)?.[0], site.get(k));
  }
  return renderRunFigures({
    campaign,
    settings,
    collector,
    ...(analysis ? { analysis } : {}),
    windowFields: async function* (want) {
      for (const f of ordered) if (want(f.planeId, f.window.index, f.window.kind === 'ensemble')) yield f;
    },
    queue: new RenderQueue(runDir, settings.density, settings.workers, opts.onFigure),
  });
}
