/**
 * Shared wording for figure titles, axis labels, quantities and file names, used by the run's figures and the
 * planner's alike: one phrasing of each axis ("quantity, meaning (unit)"), degrees as "°", and sub/superscript
 * markup (richText.ts) for symbols such as u_{∞} and z_{hub}.
 */
import type { PlaneSpec } from '../campaign/types.ts';
import type { FieldResult, WindowInfo } from '../retrieval/types.ts';
import { qty } from './numbers.ts';
import { formatNumber } from './ticks.ts';

/** Quantity labels with units, for colour bars and plot axes. */
export const QUANTITY = {
  uNorm: 'u/u_{∞} (–)',
  u: 'u, streamwise (m/s)',
  su: 'standard uncertainty of u (m/s)',
  samples: 'accepted samples per cell',
  amplification: (c: string) => `error amplification of ${c} (–)`,
  speed: 'horizontal wind speed (m/s)',
  height: 'z, height above ground (m)',
  downstream: 'x/D, downstream distance (–)',
  deficit: 'deficit 1 \u2212 u/u_{∞} (–)',
  yaw: 'γ, yaw offset (°)',
} as const;

/** Names and units of the condition variables (campaign conditions.bins[].variable) in figure wording. */
const CONDITION_WORDING: Record<string, { name: string; unit: string }> = {
  hub_speed_ms: { name: 'hub wind speed', unit: '\u00a0m/s' },
  wind_direction_deg: { name: 'wind from', unit: '°' },
  turbulence_intensity: { name: 'turbulence intensity', unit: '' },
  yaw_offset_deg: { name: 'yaw offset', unit: '°' },
};

/**
 * A condition bin's key as people read it: "yaw_offset_deg in [-15, -5)" becomes "yaw offset −15° to −5°",
 * "turbine.power_kw in [500, 1000)" becomes "power_kw (turbine) 500 to 1000"; parts joined by " · ". Figures only:
 * tables and the manifest keep the key, which states the half-open interval exactly.
 */
export function conditionBinText(key: string): string {
  return key.split('; ').map((part) => {
    const m = /^(\S+) in \[([^,]+), ([^)]+)\)$/.exec(part);
    if (!m) return part;
    const [, variable, lo, hi] = m;
    const dot = variable.indexOf('.');
    const known = CONDITION_WORDING[variable];
    const name = known?.name ?? (dot > 0 ? `${variable.slice(dot + 1)} (${variable.slice(0, dot)})` : variable);
    const unit = known?.unit ?? (variable.endsWith('_deg') ? '°' : '');
    const num = (v: string) => v.replace(/^-/, '\u2212');
    return unit === '°' ? `${name} ${num(lo)}° to ${num(hi)}°` : `${name} ${num(lo)} to ${num(hi)}${unit}`;
  }).join(' \u00b7 ');
}

/** "2026-06-01 12:00–12:10 UTC" (the end date is repeated only when it differs; seconds when a time has them). */
export function windowLabel(w: WindowInfo): string {
  if (w.kind === 'ensemble') return `${w.label ? conditionBinText(w.label) : `bin ${w.index}`} (${w.members?.length ?? 0}\u00a0windows)`;
  const sec = needsSeconds(w);
  const a = isoMinute(w.start_s, sec), b = isoMinute(w.end_s, sec);
  if (!a) return `window ${w.index}`;
  const same = a.slice(0, 10) === b.slice(0, 10);
  return `${a}\u2013${same ? b.slice(11) : b} UTC`;
}

/** "12:00–12:10" (times only; with dates when the window spans midnight; seconds when needed), for panel labels. */
export function windowTimes(w: WindowInfo): string {
  if (w.kind === 'ensemble') return w.label ? conditionBinText(w.label) : `bin ${w.index}`;
  const sec = needsSeconds(w);
  const a = isoMinute(w.start_s, sec), b = isoMinute(w.end_s, sec);
  if (!a) return '';
  return a.slice(0, 10) === b.slice(0, 10) ? `${a.slice(11)}\u2013${b.slice(11)}` : `${a}\u2013${b}`;
}

/** "2026-06-01 12:00" (or with ":SS" when `seconds`), UTC; '' for NaN. */
export function isoMinute(s: number, seconds = false): string {
  if (!Number.isFinite(s)) return '';
  return new Date(Math.round(s * 1000)).toISOString().slice(0, seconds ? 19 : 16).replace('T', ' ');
}

function needsSeconds(w: WindowInfo): boolean {
  return [w.start_s, w.end_s].some((t) => Number.isFinite(t) && Math.round(t) % 60 !== 0);
}

/** "x = 5.0 D (600 m)" for a cross plane, "horizontal plane at z = 90 m" for a horizontal one. */
export function planePosition(f: Pick<FieldResult, 'orientation' | 'x_m' | 'z_m'>, diameter_m: number): string {
  if (f.orientation === 'cross') return `x\u00a0=\u00a0${qty(f.x_m / diameter_m, 'D', 1)} (${qty(f.x_m, 'm', 0)})`;
  return `horizontal plane at z\u00a0=\u00a0${qty(f.z_m, 'm', 0)}`;
}

/** "wind from 270°". */
export function windFrom(deg: number): string {
  return `wind from\u00a0${formatNumber(deg, 0)}\u00b0`;
}

/** File stem of a plane image: <plane>_w<window>_<what>, or <plane>_bin<bin>_<what> for a condition-bin ensemble. */
export function imageName(planeId: string, window: number, what: string, ensemble = false): string {
  return `${planeId}_${ensemble ? 'bin' : 'w'}${window}_${what}`;
}

/** Axis labels of plane maps (results and planner), one phrasing for both. */
export function axisLabels(orientation: PlaneSpec['orientation']): { yLabel: string; zLabel: string; zLabelD?: string; note: string } {
  return orientation === 'cross'
    ? { yLabel: 'y, lateral, positive to the left (m)', zLabel: QUANTITY.height, note: 'Seen looking downstream: +y is on the left.' }
    : { yLabel: 'y, lateral, positive to the left (m)', zLabel: 'x, downstream of the rotor (m)', zLabelD: 'x/D', note: 'Seen from above with the flow going up the page: +y is on the left.' };
}

/** "window 3", or "condition bin 2" for an ensemble. */
export function whichField(w: WindowInfo): string {
  return w.kind === 'ensemble' ? `condition bin ${w.index}` : `window ${w.index}`;
}
