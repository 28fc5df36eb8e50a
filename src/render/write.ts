/**
 * Writes a figure as SVG and as PNG. The PNG is rendered by sharp (librsvg) from the same SVG at a print density:
 * figures declare their size in inches, so the default 300 dots per inch gives a 7.5-inch-wide figure 2250 pixels
 * across. Both files are written atomically (temporary file, then rename).
 */
import sharp from 'sharp';
import { writeFileAtomic } from '../io/atomic.ts';

export interface WriteImageOptions {
  /** Rendering density, dots per inch; default 300. */
  density?: number;
}

/** Writes `<pathNoExt>.svg` and `<pathNoExt>.png`; returns the two paths. */
export async function writeSvgAndPng(svg: string, pathNoExt: string, opts: WriteImageOptions = {}): Promise<string[]> {
  const svgPath = `${pathNoExt}.svg`;
  const pngPath = `${pathNoExt}.png`;
  writeFileAtomic(svgPath, svg);
  const png = await svgToPng(svg, opts.density ?? 300);
  writeFileAtomic(pngPath, png);
  return [svgPath, pngPath];
}

/**
 * Renders SVG text to PNG bytes at the given density (dots per inch of the figure's declared size).
 *
 * sharp 0.35 applies its density option twice to documents sized in inches (librsvg's DPI and a density/72 scale),
 * so a requested 300 gives 300^2/72 pixels per inch. The density passed to sharp is therefore chosen from a probe of
 * the rendered width at 72 (where both agree), which keeps the result right if that behaviour changes.
 */
export async function svgToPng(svg: string, density = 300): Promise<Buffer> {
  const input = Buffer.from(svg, 'utf8');
  const at72 = (await sharp(input, { density: 72 }).metadata()).width ?? 0;
  const target = (at72 * density) / 72;
  let d = density;
  const trial = (await sharp(input, { density: d }).metadata()).width ?? 0;
  if (at72 > 0 && Math.abs(trial - target) > 2) d = Math.sqrt(72 * density);
  return sharp(input, { density: d }).flatten({ background: '#ffffff' }).png({ compressionLevel: 6 }).toBuffer();
}
