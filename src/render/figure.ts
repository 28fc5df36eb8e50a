/**
 * Writes one figure under <runDir>/images/ as SVG and PNG and describes both files as output records.
 */
import { join } from 'node:path';
import type { OutputRecord } from '../records/manifest.ts';
import { writeSvgAndPng } from './write.ts';

/** Figure options: PNG density in dots per inch (default 300, see write.ts). */
export interface FigureOptions {
  density?: number;
}

export async function writeFigure(svg: string, runDir: string, name: string, meta: { plane?: string; window?: number; bin?: number; description: string }, opts: FigureOptions = {}): Promise<OutputRecord[]> {
  const paths = await writeSvgAndPng(svg, join(runDir, 'images', name), opts.density ? { density: opts.density } : {});
  return paths.map((p) => ({
    kind: 'image',
    path: `images/${p.slice(p.lastIndexOf('/') + 1)}`,
    ...(meta.plane !== undefined ? { plane: meta.plane } : {}),
    ...(meta.window !== undefined ? { window: meta.window } : {}),
    ...(meta.bin !== undefined ? { bin: meta.bin } : {}),
    description: meta.description,
  }));
}
