/**
 * How masked cells look: a neutral grey with a hatch that differs by reason, so the reason can be read from the
 * image with the legend. Code 255 is used for cells that are empty without a stated reason.
 */
import { theme } from './theme.ts';

export const NO_VALUE_CODE = 255;

type Hatch = 'none' | 'diag' | 'antidiag' | 'cross' | 'horizontal' | 'vertical' | 'dots';

const HATCH_BY_CODE: Record<number, Hatch> = { 1: 'none', 2: 'diag', 3: 'antidiag', 4: 'cross', 5: 'dots', 6: 'horizontal' };

export function hatchOf(code: number): Hatch {
  return code === NO_VALUE_CODE ? 'none' : (HATCH_BY_CODE[code] ?? 'vertical');
}

export function patternId(prefix: string, code: number): string {
  return `${prefix}-mask-${code}`;
}

/** An SVG <pattern> for one mask code (6-unit tile, user space). */
export function maskPattern(prefix: string, code: number): string {
  const bg = code === NO_VALUE_CODE ? theme.faint : theme.masked;
  const ink = theme.maskedInk;
  const line = (d: string) => `<path d="${d}" stroke="${ink}" stroke-width="0.9" fill="none"/>`;
  let marks = '';
  switch (hatchOf(code)) {
    case 'diag': marks = line('M0,6L6,0M-1.5,1.5L1.5,-1.5M4.5,7.5L7.5,4.5'); break;
    case 'antidiag': marks = line('M0,0L6,6M-1.5,4.5L1.5,7.5M4.5,-1.5L7.5,1.5'); break;
    case 'cross': marks = line('M0,6L6,0M-1.5,1.5L1.5,-1.5M4.5,7.5L7.5,4.5M0,0L6,6M-1.5,4.5L1.5,7.5M4.5,-1.5L7.5,1.5'); break;
    case 'horizontal': marks = line('M0,3L6,3'); break;
    case 'vertical': marks = line('M3,0L3,6'); break;
    case 'dots': marks = `<circle cx="3" cy="3" r="1" fill="${ink}"/>`; break;
    case 'none': break;
  }
  return `<pattern id="${patternId(prefix, code)}" patternUnits="userSpaceOnUse" width="6" height="6"><rect width="6" height="6" fill="${bg}"/>${marks}</pattern>`;
}
