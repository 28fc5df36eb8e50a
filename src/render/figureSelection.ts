/**
 * Which windows (or condition bins) get images of their own: "none", "all", every n-th ({every: n}: 0, n, 2n, ...)
 * or a list of numbers. The command line writes the same as text: none | all | every:N | 0,3,7, and for condition
 * bins the same after "bins:" (bins:all, bins:0,2).
 */
import type { WindowImages } from '../campaign/figures.ts';
import { OptionError } from '../errors.ts';

/** True when window `index` is selected. */
export function windowSelected(spec: WindowImages, index: number): boolean {
  if (spec === 'none') return false;
  if (spec === 'all') return true;
  if (Array.isArray(spec)) return spec.includes(index);
  return index % spec.every === 0;
}

/** Parses the command-line form; throws OptionError naming `option` with the accepted forms. */
export function parseWindowImages(text: string, option = 'window-images'): WindowImages {
  const t = text.trim().toLowerCase();
  if (t === 'none' || t === 'all') return t;
  const every = /^every:(\d+)$/.exec(t);
  if (every) {
    const n = Number(every[1]);
    if (n >= 1) return { every: n };
  }
  if (/^\d+(\s*,\s*\d+)*$/.test(t)) return [...new Set(t.split(',').map((x) => Number(x.trim())))];
  throw new OptionError(option, `expected none, all, every:N (N >= 1) or a list of window numbers such as 0,3,7 (got ${JSON.stringify(text)})`);
}

/** The selection in words, for notes and the report. */
export function describeWindowImages(spec: WindowImages): string {
  if (spec === 'none') return 'none';
  if (spec === 'all') return 'every window';
  if (Array.isArray(spec)) return `window${spec.length === 1 ? '' : 's'} ${spec.join(', ')}`;
  return spec.every === 1 ? 'every window' : `every ${spec.every}th window (0, ${spec.every}, ${2 * spec.every}, ...)`;
}

/** Parses the values of --window-images (the option may be given more than once): windows, and bins after "bins:". */
export function parseImageSelection(values: string | string[], option = 'window-images'): { windowImages?: WindowImages; binImages?: WindowImages } {
  const out: { windowImages?: WindowImages; binImages?: WindowImages } = {};
  for (const v of Array.isArray(values) ? values : [values]) {
    const m = /^\s*bins:(.*)$/i.exec(v);
    if (m) out.binImages = parseWindowImages(m[1], option);
    else out.windowImages = parseWindowImages(v, option);
  }
  return out;
}

/** The numbers a list selection names that are not among `present` (a run's windows or bins); [] for other forms. */
export function missingSelected(spec: WindowImages, present: Iterable<number>): number[] {
  if (!Array.isArray(spec)) return [];
  const have = new Set(present);
  return spec.filter((k) => !have.has(k));
}

/**
 * "windows 7, 9 are not in this run (it has windows 0–11)": what a selection asked for in vain, or '' when nothing.
 * `unit` is "window" or "condition bin".
 */
export function missingSelectedText(spec: WindowImages, present: number[], unit: string): string {
  const miss = missingSelected(spec, present);
  if (!miss.length) return '';
  const sorted = [...new Set(present)].sort((a, b) => a - b);
  const contiguous = sorted.length > 2 && sorted[sorted.length - 1] - sorted[0] === sorted.length - 1;
  const has = !sorted.length ? `no ${unit}s` : contiguous ? `${unit}s ${sorted[0]}\u2013${sorted[sorted.length - 1]}` : `${unit}${sorted.length === 1 ? '' : 's'} ${sorted.join(', ')}`;
  return `${unit}${miss.length === 1 ? '' : 's'} ${miss.join(', ')} ${miss.length === 1 ? 'is' : 'are'} not in this run (it has ${has})`;
}
