/**
 * Writes a figure as SVG and as PNG. The PNG is rendered by sharp (librsvg) from the same SVG at a print density:
 * figures declare their size in inches, so the default 300 dots per inch gives a 7.5-inch-wide figure 2250 pixels
 * across. Both files are written atomically (temporary file, then rename).
 */
import sharp from 'sharp';
import { writeFileAtomic } from '../io/atomic.ts';

// Figures are rendered one at a time and never reused: sharp's operation cache would only hold memory.
sharp.cache(false);

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
 * so a requested 300 gives 300^2/72 pixels per inch. Which behaviour the installed sharp has is probed once with a
 * one-inch document, and the density passed to sharp is chosen from that, so the result stays right if it changes.
 */
export async function svgToPng(svg: string, density = 300): Promise<Buffer> {
  const squared = await densityIsSquared();
  const d = squared ? Math.sqrt(72 * density) : density;
  // The file states the density asked for (its pHYs chunk): sharp would otherwise write the density it was given,
  // sqrt(72 x 300) = 147 dpi where the density is applied twice, and a 300-dpi figure would read as 147 dpi.
  return sharp(Buffer.from(svg, 'utf8'), { density: d }).flatten({ background: '#ffffff' }).withMetadata({ density }).png({ compressionLevel: 6 }).toBuffer();
}

let squaredProbe: Promise<boolean> | undefined;

/** True when sharp renders a 1-inch SVG at density 144 as 288 pixels (density applied twice) rather than 144. */
function densityIsSquared(): Promise<boolean> {
  squaredProbe ??= sharp(Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="1in" height="1in" viewBox="0 0 10 10"/>'), { density: 144 })
    .metadata()
    .then((m) => Math.abs((m.width ?? 144) - 288) < 2);
  return squaredProbe;
}
