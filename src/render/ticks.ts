/**
 * Axis ticks at "nice" numbers (1, 2 or 5 times a power of ten), and their labels.
 */

/** Step of about (hi - lo) / count rounded to 1, 2 or 5 times a power of ten. */
export function niceStep(lo: number, hi: number, count: number): number {
  const span = Math.abs(hi - lo);
  if (!(span > 0) || !Number.isFinite(span)) return 1;
  const raw = span / Math.max(1, count);
  const p = 10 ** Math.floor(Math.log10(raw));
  const f = raw / p;
  const m = f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10;
  return m * p;
}

/** Multiples of the nice step within [lo, hi] (inclusive up to rounding), ascending. */
export function niceTicks(lo: number, hi: number, count = 6): number[] {
  if (!(Number.isFinite(lo) && Number.isFinite(hi))) return [];
  if (hi < lo) [lo, hi] = [hi, lo];
  const step = niceStep(lo, hi, count);
  const eps = step * 1e-9;
  const out: number[] = [];
  for (let k = Math.ceil((lo - eps) / step); k * step <= hi + eps; k++) out.push(cleanZero(Number((k * step).toPrecision(12))));
  return out;
}

/** [lo, hi] widened outward to multiples of the nice step. */
export function niceExtent(lo: number, hi: number, count = 6): [number, number] {
  if (lo === hi) {
    const d = lo === 0 ? 1 : Math.abs(lo) * 0.05;
    lo -= d;
    hi += d;
  }
  const step = niceStep(lo, hi, count);
  return [cleanZero(Math.floor(lo / step + 1e-9) * step), cleanZero(Math.ceil(hi / step - 1e-9) * step)];
}

/** Decimals needed to show multiples of step. */
export function decimalsFor(step: number): number {
  if (!(step > 0) || !Number.isFinite(step)) return 0;
  for (let d = 0; d < 6; d++) {
    const scaled = step * 10 ** d;
    if (Math.abs(scaled - Math.round(scaled)) < 1e-9 * Math.max(1, scaled)) return d;
  }
  return 6;
}

/** Tick label with a typographic minus sign. */
export function formatTick(v: number, step: number): string {
  const s = cleanZero(v).toFixed(decimalsFor(step));
  return s.startsWith('-') ? `\u2212${s.slice(1)}` : s;
}

/** A number for a label: fixed decimals, typographic minus, '–' for NaN. */
export function formatNumber(v: number, decimals = 2): string {
  if (!Number.isFinite(v)) return '\u2013';
  const s = cleanZero(v).toFixed(decimals);
  return s.startsWith('-') && Number(s) !== 0 ? `\u2212${s.slice(1)}` : s.replace(/^-/, '');
}

function cleanZero(v: number): number {
  return Object.is(v, -0) || Math.abs(v) < 1e-12 ? 0 : v;
}
