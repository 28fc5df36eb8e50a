/**
 * Figures of the uncertainty budget: a grouped bar chart of the budget terms per component at one cell (standard
 * uncertainties, m/s, one bar per component and term, the combined one last), and the map of a component's combined
 * standard uncertainty on a plane (the single-map renderer, scalarMap.ts, with a colour range shared by all planes
 * of the run); the same renderer draws the turbulence-intensity maps.
 */
import { withValues, type GridSpec } from '../grid/grid.ts';
import { scalarMapSvg } from './scalarMap.ts';
import { figureHead, svgDocument, text, n } from './svg.ts';
import { theme } from './theme.ts';
import { niceExtent } from './ticks.ts';

/** values[component][term] in m/s; NaN bars are left out. */
export function budgetBarsSvg(title: string, subtitle: string, terms: string[], components: string[], values: Record<string, Record<string, number>>): string {
  const W = 900, left = 80, right = 150, bottom = 70;
  const head = figureHead(left, W - left - 12, title, subtitle);
  const top = 70 + head.extra + Math.max(0, head.subLines.length - 1) * 15, H = top + 320 + bottom;
  const pw = W - left - right, ph = H - top - bottom;
  let max = 0;
  for (const c of components) for (const t of terms) if (Number.isFinite(values[c]?.[t])) max = Math.max(max, values[c][t]);
  const [, hi] = niceExtent(0, max > 0 ? max : 0.1);
  const y = (v: number) => top + ph - (v / hi) * ph;
  const group = pw / terms.length, bw = (group * 0.8) / components.length;
  let body = head.markup;
  body += `<rect x="${n(left)}" y="${n(top)}" width="${n(pw)}" height="${n(ph)}" fill="${theme.panel}"/>\n`;
  const ticks = 5;
  for (let k = 0; k <= ticks; k++) {
    const v = (hi * k) / ticks;
    body += `<line x1="${n(left)}" x2="${n(left + pw)}" y1="${n(y(v))}" y2="${n(y(v))}" stroke="${theme.rule}" stroke-width="0.6"/>\n`;
    body += text(left - 6, y(v), Number(v.toPrecision(3)).toString(), { size: 10, anchor: 'end', dy: 0.35 });
  }
  terms.forEach((t, i) => {
    const x0 = left + i * group + group * 0.1;
    components.forEach((c, j) => {
      const v = values[c]?.[t];
      if (!Number.isFinite(v)) return;
      body += `<rect x="${n(x0 + j * bw)}" y="${n(y(v))}" width="${n(bw * 0.92)}" height="${n(top + ph - y(v))}" fill="${theme.series[j % theme.series.length]}"><title>${c} ${t}: ${v.toPrecision(2)} m/s</title></rect>\n`;
    });
    body += text(left + i * group + group / 2, top + ph + 18, t, { size: 11, anchor: 'middle', weight: t === 'combined' ? 'bold' : 'normal' });
  });
  body += text(22, top + ph / 2, 'standard uncertainty (m/s)', { size: 11, anchor: 'middle', rotate: -90 });
  components.forEach((c, j) => {
    const ly = top + 10 + j * 20;
    // A component without any value here (e.g. w with instruments near the ground) is named as such, not drawn.
    const shown = terms.some((t) => Number.isFinite(values[c]?.[t]));
    body += shown
      ? `<rect x="${n(left + pw + 20)}" y="${n(ly - 9)}" width="14" height="12" fill="${theme.series[j % theme.series.length]}"/>\n`
      : `<rect x="${n(left + pw + 20.5)}" y="${n(ly - 8.5)}" width="13" height="11" fill="none" stroke="${theme.muted}" stroke-width="1"/>\n`;
    body += text(left + pw + 40, ly, shown ? c : `${c}: not retrieved`, { size: 11, fill: shown ? undefined : theme.muted });
  });
  // Terms that are zero for every component show no bar: say so, rather than leave an empty slot unexplained.
  const zero = terms.filter((t) => components.some((c) => Number.isFinite(values[c]?.[t])) && components.every((c) => !(values[c]?.[t] > 0)));
  body += text(left, H - 18, 'Combined: root-sum-square of the independent terms (JCGM 100:2008). Terms are described in the data dictionary (u_unc_<term>_ms).', { size: 10, fill: theme.muted });
  if (zero.length) {
    const why = zero.includes('pointing') ? ' (pointing: the campaign gives no instruments[].pointingUncertainty)' : '';
    body += text(left, H - 4, `No contribution at this cell: ${zero.join(', ')}${why}.`, { size: 10, fill: theme.muted });
  }
  return svgDocument(W, H, title, body);
}

/**
 * Map of a per-cell quantity on a plane on the run's shared colour range: a combined standard uncertainty (m/s,
 * colour-bar label u_c(component)) or, with `colorbarLabel`, another quantity such as the turbulence intensity.
 */
export function uncertaintyMapSvg(grid: GridSpec, values: Float64Array, o: { title: string; subtitle: string; component: string; domain: [number, number]; secondLabel: string; diameter_m: number; rotor?: { y: number; z: number; radius: number }; colorbarLabel?: string }): string {
  return scalarMapSvg(withValues(grid, values), {
    title: o.title,
    subtitle: o.subtitle,
    colorbarLabel: o.colorbarLabel ?? `u_{c}(${o.component}) (m/s)`,
    domain: o.domain,
    contours: false,
    axes: { yLabel: 'y (m)', zLabel: o.secondLabel, diameter_m: o.diameter_m, yLabelD: 'y/D', zLabelD: o.secondLabel.startsWith('z') ? 'z/D' : 'x/D' },
    ...(o.rotor ? { rotor: o.rotor } : {}),
  });
}
