/**
 * All images of a run in one call: per plane and window the result images (with the matching wake row), the geometry
 * maps, and the summary plots. For the pipeline's image stage.
 */
import type { Campaign } from '../campaign/types.ts';
import type { OutputRecord } from '../records/manifest.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { WakeAnalysis } from '../wake/types.ts';
import { renderGeometryMaps, renderPlaneImages } from './planeImages.ts';
import { renderSummaryPlots } from './summaryPlots.ts';

export interface RenderRunOptions {
  /** Which windows get geometry maps (amplification of u, v, w and samples per cell): the first window of each
   * plane, every window, or none; default 'first'. The amplification changes between windows only through the
   * wind direction that orients the rotor frame. */
  geometry?: 'first' | 'all' | 'none';
  /** PNG density, dots per inch; default 300. */
  density?: number;
  /** Called after each field's images, with the count done and the total (for progress displays). */
  onField?: (done: number, total: number, field: FieldResult) => void;
}

export async function renderRun(fields: FieldResult[], analysis: WakeAnalysis | undefined, campaign: Campaign, runDir: string, opts: RenderRunOptions = {}): Promise<OutputRecord[]> {
  const out: OutputRecord[] = [];
  const rows = new Map((analysis?.rows ?? []).map((r) => [`${r.planeId}\u0000${r.window.index}`, r]));
  const geometry = opts.geometry ?? 'first';
  const seen = new Set<string>();
  const fig = opts.density ? { density: opts.density } : {};
  const ordered = [...fields].sort((a, b) => a.planeIndex - b.planeIndex || a.window.index - b.window.index);
  if (analysis) out.push(...(await renderSummaryPlots(analysis, campaign, runDir, fig)));
  let done = 0;
  for (const f of ordered) {
    out.push(...(await renderPlaneImages(f, rows.get(`${f.planeId}\u0000${f.window.index}`), campaign, runDir, fig)));
    if (geometry === 'all' || (geometry === 'first' && !seen.has(f.planeId))) out.push(...(await renderGeometryMaps(f, campaign, runDir, fig)));
    seen.add(f.planeId);
    opts.onField?.(++done, ordered.length, f);
  }
  return out;
}
