/**
 * The one map renderer: a scalar field on a plane grid as filled contour bands (or cells) with a colour bar, masked
 * cells hatched by reason, optional rotor outline, markers, ellipses and in-plane arrows. Results and the planner's
 * trust maps share it.
 *
 * Orientation: the horizontal axis is rotor-frame y and increases to the LEFT, so a cross plane is seen looking
 * downstream (and a horizontal plane from above with x up the page) and a wake displaced to +y appears on the left.
 * The vertical axis (z, or x for horizontal planes) increases upward. Both axes share one scale (metres are square).
 */
import type { Grid } from '../grid/grid.ts';
import { bandColours, type Scheme } from './colour.ts';
import { contourRegions } from './contours.ts';
import { maskPattern, NO_VALUE_CODE, patternId } from './maskStyle.ts';
import { arrow, linear, n, svgDocument, text, wrap } from './svg.ts';
import { theme } from './theme.ts';
import { formatNumber, formatTick, niceExtent, niceStep, niceTicks } from './ticks.ts';

export interface ScalarMapOptions {
  title: string;
  subtitle?: string;
  /** Colour-bar label, with unit, e.g. "u / u_inf (–)". */
  colorbarLabel: string;
  /** Colour range [lo, hi] in the value's unit; values outside take the end colours. Default: the 1st to 99th
   * percentile of the finite values, widened to nice numbers. */
  domain?: [number, number];
  /** Default 'sequential' (cividis); 'diverging' (PuOr) for signed quantities. */
  scheme?: 'sequential' | 'diverging';
  /** Marks across the colour bar, e.g. a masking threshold: a dark line with a pointer, explained in the legend. */
  colorbarMarks?: { value: number; label: string }[];
  /** Filled contour bands (default true) or flat cells. */
  contours?: boolean;
  /** Mask reason per cell (0 = valid) and the reasons' names for the legend; masked cells are drawn hatched. */
  mask?: { codes: Uint8Array; names: Record<number, string> };
  /** Axis labels (with unit); with diameter_m a second pair of axes shows rotor diameters from the rotor centre
   * (or from 0 without a rotor). */
  axes: { yLabel: string; zLabel: string; diameter_m?: number; yLabelD?: string; zLabelD?: string; note?: string };
  /** Rotor disk outline and hub, metres in the plane's coordinates. */
  rotor?: { y: number; z: number; radius: number };
  markers?: { y: number; z: number; label: string; shape: 'cross' | 'circle' | 'diamond' }[];
  /** Ellipses with semi-axes ry (along y) and rz (along the second axis), metres. */
  ellipses?: { y: number; z: number; ry: number; rz: number; label: string }[];
  /** In-plane vectors per cell (v along the horizontal axis, w along the vertical axis), m/s; every k-th cell in
   * each direction (default: about 16 arrows across); the reference arrow shows referenceSpeed (default: a nice
   * number near the 90th percentile of the in-plane speed); label follows the reference speed in the legend. Arrows
   * faster than twice the reference are cut to that length and drawn dashed (counted in the legend). */
  arrows?: { v: Float64Array; w: Float64Array; every?: number; referenceSpeed?: number; label?: string };
}

const ID = 'wp';

export function scalarMapSvg(grid: Grid, opts: ScalarMapOptions): string {
  const { ny, nz, y0, z0, dy, dz, values } = grid;
  const scheme: Scheme = opts.scheme ?? 'sequential';
  const { domain, thresholds } = colourLevels(values, opts.domain);
  const colours = bandColours(scheme, thresholds, domain);

  // Layout (user units).
  const yLo = y0 - dy / 2, yHi = y0 + (ny - 0.5) * dy;
  const zLo = z0 - dz / 2, zHi = z0 + (nz - 0.5) * dz;
  // Plot area at most 520 wide and 430 high (560 for planes taller than wide), one scale for both axes.
  const maxH = zHi - zLo > 1.2 * (yHi - yLo) ? 560 : 430;
  const scale = Math.min(520 / (yHi - yLo), maxH / (zHi - zLo));
  const pw = (yHi - yLo) * scale, ph = (zHi - zLo) * scale;
  const D = opts.axes.diameter_m && opts.axes.diameter_m > 0 ? opts.axes.diameter_m : undefined;
  const left = 74;
  // Figure width: the plot, colour bar and legend, but at least wide enough for a readable title block.
  const width = Math.max(left + pw + (D ? 72 : 22) + 96 + 218 + 12, 760);
  const subLines = opts.subtitle ? wrap(opts.subtitle, Math.floor((width - left - 12) / 6.6)) : [];
  const top = 50 + subLines.length * 15 + (D ? 40 : 6);
  const plotR = left + pw;
  const cbX = plotR + (D ? 72 : 22);
  const legendX = cbX + 96;
  const legendW = 218;
  const X = linear(yHi, yLo, left, plotR); // y increases to the left
  const Z = linear(zHi, zLo, top, top + ph);

  const defs: string[] = [`<clipPath id="${ID}-plot"><rect x="${n(left)}" y="${n(top)}" width="${n(pw)}" height="${n(ph)}"/></clipPath>`];
  const body: string[] = [];
  const legend: LegendItem[] = [];

  // 1. Field: base band, contour bands above it (or cells), clipped to the plot.
  body.push(`<g clip-path="url(#${ID}-plot)" class="field">`);
  const clamp = (v: number) => Math.min(domain[1], Math.max(domain[0], v));
  const bandOf = (v: number) => {
    const c = clamp(v);
    let k = 0;
    while (k + 1 < colours.length && c >= thresholds[k + 1]) k++;
    return k;
  };
  const hasFinite = values.some((v) => Number.isFinite(v));
  if (opts.contours !== false && hasFinite) {
    body.push(`<rect x="${n(left)}" y="${n(top)}" width="${n(pw)}" height="${n(ph)}" fill="${colours[0]}"/>`);
    const regions = contourRegions(grid, thresholds.slice(1, -1), domain);
    regions.forEach((polys, k) => {
      if (!polys.length) return;
      const d = polys.map((p) => p.map((ring) => 'M' + ring.map(([y, z]) => `${n(X(y))},${n(Z(z))}`).join('L') + 'Z').join('')).join('');
      body.push(`<path class="band" data-level="${thresholds[k + 1]}" d="${d}" fill="${colours[k + 1]}" fill-rule="evenodd" stroke="${colours[k + 1]}" stroke-width="0.4"/>`);
    });
  } else {
    for (let iz = 0; iz < nz; iz++) {
      let iy = 0;
      while (iy < ny) {
        const v = values[iy + iz * ny];
        if (!Number.isFinite(v)) { iy++; continue; }
        const b = bandOf(v);
        let end = iy + 1;
        while (end < ny && Number.isFinite(values[end + iz * ny]) && bandOf(values[end + iz * ny]) === b) end++;
        body.push(cellRun(X, Z, y0, z0, dy, dz, iy, end, iz, colours[b]));
        iy = end;
      }
    }
  }
  body.push('</g>');

  // 2. Masked and empty cells, hatched by reason.
  const counts = new Map<number, number>();
  // One path per reason (librsvg renders a pattern once per element, so one element per reason keeps it fast).
  const maskPaths = new Map<number, string[]>();
  for (let iz = 0; iz < nz; iz++) {
    let iy = 0;
    while (iy < ny) {
      const code = maskCode(opts.mask?.codes, values, iy + iz * ny);
      if (!code) { iy++; continue; }
      let end = iy + 1;
      while (end < ny && maskCode(opts.mask?.codes, values, end + iz * ny) === code) end++;
      counts.set(code, (counts.get(code) ?? 0) + (end - iy));
      const xL = X(y0 + (end - 0.5) * dy), xR = X(y0 + (iy - 0.5) * dy);
      const yT = Z(z0 + (iz + 0.5) * dz), yB = Z(z0 + (iz - 0.5) * dz);
      if (!maskPaths.has(code)) maskPaths.set(code, []);
      maskPaths.get(code)!.push(`M${n(xL)},${n(yT)}H${n(xR + 0.25)}V${n(yB + 0.25)}H${n(xL)}Z`);
      iy = end;
    }
  }
  if (counts.size) {
    const codes = [...counts.keys()].sort((a, b) => a - b);
    for (const c of codes) defs.push(maskPattern(ID, c));
    body.push(`<g class="mask">${codes.map((c) => `<path class="masked m${c}" d="${maskPaths.get(c)!.join('')}" fill="url(#${patternId(ID, c)})"/>`).join('')}</g>`);
    legend.push({ kind: 'heading', label: 'Not shown' });
    for (const c of codes) {
      const name = c === NO_VALUE_CODE ? 'no value' : (opts.mask?.names[c] || `code ${c}`).replace(/_/g, ' ');
      const k = counts.get(c)!;
      legend.push({ kind: 'swatch', fill: `url(#${patternId(ID, c)})`, label: `${name} (${k} cell${k === 1 ? '' : 's'})` });
    }
  }
  body.push(`<rect x="${n(left)}" y="${n(top)}" width="${n(pw)}" height="${n(ph)}" fill="none" stroke="${theme.ink}" stroke-width="0.8"/>`);

  // 3. In-plane arrows.
  const overlay: string[] = [];
  if (opts.arrows) {
    const a = opts.arrows;
    const every = Math.max(1, Math.round(a.every ?? Math.ceil(Math.max(ny, nz) / 16)));
    const speeds: number[] = [];
    for (let i = 0; i < ny * nz; i++) {
      const s = Math.hypot(a.v[i], a.w[i]);
      if (Number.isFinite(s)) speeds.push(s);
    }
    const ref = a.referenceSpeed && a.referenceSpeed > 0 ? a.referenceSpeed : niceRound(percentile(speeds, 0.9));
    const refLen = 0.75 * every * Math.min(dy, dz) * scale;
    const k = refLen / ref;
    const capFactor = 2;
    let capped = 0;
    const off = Math.floor((every - 1) / 2);
    const parts: string[] = [];
    for (let iz = off; iz < nz; iz += every) {
      for (let iy = off; iy < ny; iy += every) {
        const i = iy + iz * ny;
        const v = a.v[i], w = a.w[i];
        if (!Number.isFinite(v) || !Number.isFinite(w)) continue;
        const x1 = X(y0 + iy * dy), y1 = Z(z0 + iz * dz);
        // +v points to +y, which is to the left on the page; +w points up, which is -SVG y. Arrows faster than
        // capFactor x the reference are cut to that length and drawn dashed, so a few noisy cells cannot hide the rest.
        const s = Math.hypot(v, w);
        const f = s > capFactor * ref ? (capFactor * ref) / s : 1;
        if (f < 1) capped++;
        parts.push(arrow(x1, y1, x1 - v * k * f, y1 - w * k * f, theme.ink, f < 1 ? 'arrow capped' : 'arrow', 0.9, f < 1 ? '2.5 1.5' : undefined));
      }
    }
    if (parts.length) {
      overlay.push(`<g class="arrows" clip-path="url(#${ID}-plot)">${parts.join('')}</g>`);
      legend.push({ kind: 'arrow', length: refLen, label: `${formatNumber(ref, decimalsOf(ref))} m/s ${a.label ?? 'in-plane (v, w)'}` });
      if (capped) legend.push({ kind: 'arrow', length: refLen, dashed: true, label: `${capped} arrow${capped === 1 ? '' : 's'} faster than ${formatNumber(capFactor * ref, decimalsOf(ref))} m/s, cut to that length` });
    }
  }

  // 4. Rotor, ellipses, markers (white halo under dark ink so they read on every colour).
  if (opts.rotor) {
    const r = opts.rotor;
    const cx = X(r.y), cy = Z(r.z), rr = r.radius * scale;
    overlay.push(
      `<g class="rotor"><circle cx="${n(cx)}" cy="${n(cy)}" r="${n(rr)}" fill="none" stroke="#ffffff" stroke-width="3" stroke-opacity="0.8"/>` +
        `<circle cx="${n(cx)}" cy="${n(cy)}" r="${n(rr)}" fill="none" stroke="${theme.ink}" stroke-width="1.2" stroke-dasharray="7 3 2 3"/>` +
        `<circle class="hub" cx="${n(cx)}" cy="${n(cy)}" r="3" fill="${theme.ink}" stroke="#ffffff" stroke-width="1"/></g>`,
    );
    legend.push({ kind: 'rotor', label: 'rotor disk and hub' });
  }
  for (const e of opts.ellipses ?? []) {
    if (![e.y, e.z, e.ry, e.rz].every(Number.isFinite)) continue;
    const cx = X(e.y), cy = Z(e.z), rx = Math.abs(e.ry) * scale, ry = Math.abs(e.rz) * scale;
    overlay.push(
      `<g class="ellipse"><ellipse cx="${n(cx)}" cy="${n(cy)}" rx="${n(rx)}" ry="${n(ry)}" fill="none" stroke="#ffffff" stroke-width="3.2" stroke-opacity="0.85"/>` +
        `<ellipse cx="${n(cx)}" cy="${n(cy)}" rx="${n(rx)}" ry="${n(ry)}" fill="none" stroke="${theme.ink}" stroke-width="1.3" stroke-dasharray="4 3"/></g>`,
    );
    legend.push({ kind: 'ellipse', label: e.label });
  }
  for (const m of opts.markers ?? []) {
    if (!Number.isFinite(m.y) || !Number.isFinite(m.z)) continue;
    overlay.push(`<g class="marker marker-${m.shape}" data-y="${m.y}" data-z="${m.z}">${markerShape(m.shape, X(m.y), Z(m.z), 6)}</g>`);
    legend.push({ kind: 'marker', shape: m.shape, label: m.label });
  }
  body.push(...overlay);

  // 5. Axes: metres on the bottom and left, rotor diameters on the top and right.
  const yTicks = niceTicks(yLo, yHi, Math.max(3, Math.round(pw / 80)));
  const zTicks = niceTicks(zLo, zHi, Math.max(3, Math.round(ph / 60)));
  const yStep = niceStep(yLo, yHi, Math.max(3, Math.round(pw / 80)));
  const zStep = niceStep(zLo, zHi, Math.max(3, Math.round(ph / 60)));
  const ax: string[] = [];
  for (const t of yTicks) {
    const x = X(t);
    ax.push(`<line x1="${n(x)}" y1="${n(top + ph)}" x2="${n(x)}" y2="${n(top + ph + 5)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    ax.push(text(x, top + ph + 17, formatTick(t, yStep), { anchor: 'middle' }));
  }
  for (const t of zTicks) {
    const y = Z(t);
    ax.push(`<line x1="${n(left - 5)}" y1="${n(y)}" x2="${n(left)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    ax.push(text(left - 8, y, formatTick(t, zStep), { anchor: 'end', dy: 0.35 }));
  }
  ax.push(text((left + plotR) / 2, top + ph + 36, opts.axes.yLabel, { anchor: 'middle', size: 12 }));
  ax.push(text(18, top + ph / 2, opts.axes.zLabel, { anchor: 'middle', size: 12, rotate: -90 }));
  if (D) {
    const yc = opts.rotor?.y ?? 0, zc = opts.rotor?.z ?? 0;
    const dLo = (yLo - yc) / D, dHi = (yHi - yc) / D;
    const dStep = niceStep(dLo, dHi, Math.max(3, Math.round(pw / 80)));
    for (const t of niceTicks(dLo, dHi, Math.max(3, Math.round(pw / 80)))) {
      const x = X(yc + t * D);
      ax.push(`<line x1="${n(x)}" y1="${n(top - 5)}" x2="${n(x)}" y2="${n(top)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
      ax.push(text(x, top - 9, formatTick(t, dStep), { anchor: 'middle', fill: theme.muted }));
    }
    ax.push(text((left + plotR) / 2, top - 26, opts.axes.yLabelD ?? (opts.rotor ? '(y − y_hub) / D' : 'y / D'), { anchor: 'middle', size: 11, fill: theme.muted }));
    const eLo = (zLo - zc) / D, eHi = (zHi - zc) / D;
    const eStep = niceStep(eLo, eHi, Math.max(3, Math.round(ph / 60)));
    for (const t of niceTicks(eLo, eHi, Math.max(3, Math.round(ph / 60)))) {
      const y = Z(zc + t * D);
      ax.push(`<line x1="${n(plotR)}" y1="${n(y)}" x2="${n(plotR + 5)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
      ax.push(text(plotR + 8, y, formatTick(t, eStep), { dy: 0.35, fill: theme.muted }));
    }
    ax.push(text(plotR + 48, top + ph / 2, opts.axes.zLabelD ?? (opts.rotor ? '(z − z_hub) / D' : 'z / D'), { anchor: 'middle', size: 11, fill: theme.muted, rotate: 90 }));
  }
  if (opts.axes.note) ax.push(text(left, top + ph + 54, opts.axes.note, { size: 10, fill: theme.muted }));
  body.push(`<g class="axes">${ax.join('')}</g>`);

  // 6. Colour bar (an empty frame saying so when the field has no finite value).
  const cbH = Math.max(ph, 160);
  const C = linear(domain[0], domain[1], top + cbH, top);
  const cb: string[] = [];
  if (!hasFinite) {
    cb.push(`<rect x="${n(cbX)}" y="${n(top)}" width="16" height="${n(cbH)}" fill="${theme.faint}" stroke="${theme.rule}" stroke-width="0.6"/>`);
    cb.push(text(cbX + 8, top + cbH / 2, 'no values', { anchor: 'middle', size: 10, fill: theme.muted, rotate: 90, dy: 0.35 }));
  } else {
    for (let k = 0; k < colours.length; k++) {
      const yA = C(thresholds[k + 1]), yB = C(thresholds[k]);
      cb.push(`<rect x="${n(cbX)}" y="${n(yA)}" width="16" height="${n(yB - yA + 0.3)}" fill="${colours[k]}"/>`);
    }
    cb.push(`<rect x="${n(cbX)}" y="${n(top)}" width="16" height="${n(cbH)}" fill="none" stroke="${theme.ink}" stroke-width="0.6"/>`);
    const cStep = niceStep(domain[0], domain[1], 6);
    for (const t of niceTicks(domain[0], domain[1], 6)) {
      const y = C(t);
      cb.push(`<line x1="${n(cbX + 16)}" y1="${n(y)}" x2="${n(cbX + 20)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.6"/>`);
      cb.push(text(cbX + 23, y, formatTick(t, cStep), { dy: 0.35, size: 10 }));
    }
    for (const mk of opts.colorbarMarks ?? []) {
      if (!(mk.value >= domain[0] && mk.value <= domain[1])) continue;
      const y = C(mk.value);
      cb.push(`<line class="cb-mark" x1="${n(cbX - 4)}" y1="${n(y)}" x2="${n(cbX + 16)}" y2="${n(y)}" stroke="#ffffff" stroke-width="3"/><line x1="${n(cbX - 4)}" y1="${n(y)}" x2="${n(cbX + 16)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="1.4"/>`);
      cb.push(`<path d="M${n(cbX - 1)},${n(y)}L${n(cbX - 8)},${n(y - 4)}L${n(cbX - 8)},${n(y + 4)}Z" fill="${theme.ink}"/>`);
      legend.push({ kind: 'cbmark', label: `${mk.label} ${formatNumber(mk.value, decimalsOfStep(mk.value))} (line on the colour bar)` });
    }
  }
  cb.push(text(cbX + 78, top + cbH / 2, opts.colorbarLabel, { anchor: 'middle', size: 11, rotate: 90 }));
  body.push(`<g class="colorbar">${cb.join('')}</g>`);

  // 7. Legend.
  const leg = drawLegend(legend, legendX, top + 4, legendW);
  body.push(`<g class="legend">${leg.markup}</g>`);

  // 8. Title.
  const head = text(left, 26, opts.title, { size: 16, weight: 'bold' }) + subLines.map((l, i) => text(left, 45 + i * 15, l, { size: 11.5, fill: theme.muted })).join('');

  const height = Math.max(top + ph + (opts.axes.note ? 66 : 50), top + cbH + 20, leg.bottom + 16);
  return svgDocument(width, height, opts.title, head + body.join('\n') + '\n', defs.join(''));
}

/** Band edges for a value range: nice ticks from lo to hi including both ends (about ten bands). */
export function colourLevels(values: Float64Array, given?: [number, number]): { domain: [number, number]; thresholds: number[] } {
  let d0: number, d1: number;
  if (given && Number.isFinite(given[0]) && Number.isFinite(given[1]) && given[1] > given[0]) [d0, d1] = given;
  else {
    const finite: number[] = [];
    for (const v of values) if (Number.isFinite(v)) finite.push(v);
    finite.sort((a, b) => a - b);
    const lo = finite.length ? percentileSorted(finite, 0.01) : 0;
    const hi = finite.length ? percentileSorted(finite, 0.99) : 1;
    [d0, d1] = niceExtent(lo, hi, 10);
  }
  const inner = niceTicks(d0, d1, 10).filter((t) => t > d0 + 1e-9 * (d1 - d0) && t < d1 - 1e-9 * (d1 - d0));
  return { domain: [d0, d1], thresholds: [d0, ...inner, d1] };
}

function maskCode(codes: Uint8Array | undefined, values: Float64Array, i: number): number {
  const c = codes ? codes[i] : 0;
  if (c) return c;
  return Number.isFinite(values[i]) ? 0 : NO_VALUE_CODE;
}

function cellRun(X: (v: number) => number, Z: (v: number) => number, y0: number, z0: number, dy: number, dz: number, iyA: number, iyB: number, iz: number, fill: string): string {
  // Cells iyA..iyB-1 of row iz; y increases to the left, so the run's left edge is its largest y.
  const xL = X(y0 + (iyB - 0.5) * dy), xR = X(y0 + (iyA - 0.5) * dy);
  const yT = Z(z0 + (iz + 0.5) * dz), yB = Z(z0 + (iz - 0.5) * dz);
  // Cells get a thin stroke of their own colour so that anti-aliased edges leave no seams between rows.
  const seam = ` stroke="${fill}" stroke-width="0.5"`;
  return `<rect x="${n(xL)}" y="${n(yT)}" width="${n(xR - xL + 0.25)}" height="${n(yB - yT + 0.25)}" fill="${fill}"${seam}/>`;
}

function markerShape(shape: 'cross' | 'circle' | 'diamond', x: number, y: number, s: number): string {
  const halo = `stroke="#ffffff" stroke-width="4" stroke-opacity="0.9"`;
  switch (shape) {
    case 'cross': {
      const d = `M${n(x - s)},${n(y - s)}L${n(x + s)},${n(y + s)}M${n(x - s)},${n(y + s)}L${n(x + s)},${n(y - s)}`;
      return `<path d="${d}" fill="none" ${halo}/><path d="${d}" fill="none" stroke="${theme.ink}" stroke-width="1.8"/>`;
    }
    case 'circle':
      return `<circle cx="${n(x)}" cy="${n(y)}" r="${n(s * 0.8)}" fill="#ffffff" fill-opacity="0.35" stroke="${theme.ink}" stroke-width="1.6"/>`;
    case 'diamond': {
      const d = `M${n(x)},${n(y - s)}L${n(x + s)},${n(y)}L${n(x)},${n(y + s)}L${n(x - s)},${n(y)}Z`;
      return `<path d="${d}" fill="#ffffff" stroke="${theme.ink}" stroke-width="1.4"/>`;
    }
  }
}

type LegendItem =
  | { kind: 'heading'; label: string }
  | { kind: 'swatch'; fill: string; label: string }
  | { kind: 'arrow'; length: number; label: string; dashed?: boolean }
  | { kind: 'rotor'; label: string }
  | { kind: 'ellipse'; label: string }
  | { kind: 'cbmark'; label: string }
  | { kind: 'marker'; shape: 'cross' | 'circle' | 'diamond'; label: string };

function drawLegend(all: LegendItem[], x: number, y: number, w: number): { markup: string; bottom: number } {
  const seen = new Set<string>();
  const items = all.filter((it) => {
    const key = JSON.stringify(it);
    return seen.has(key) ? false : (seen.add(key), true);
  });
  const out: string[] = [];
  let cy = y;
  const chars = Math.floor((w - 30) / 6.2);
  for (const it of items) {
    if (it.kind === 'heading') {
      out.push(text(x, cy + 9, it.label, { size: 11, weight: 'bold' }));
      cy += 18;
      continue;
    }
    if (it.kind === 'arrow') {
      const len = Math.min(it.length, w - 10);
      out.push(arrow(x, cy + 6, x + len, cy + 6, theme.ink, it.dashed ? 'arrow-cap' : 'arrow-ref', 1.1, it.dashed ? '2.5 1.5' : undefined));
      const lines = wrap(it.label, chars + 4);
      lines.forEach((l, i) => out.push(text(x, cy + 24 + i * 13, l, { size: 10.5 })));
      cy += 26 + lines.length * 13;
      continue;
    }
    const sx = x + 11, sy = cy + 6;
    if (it.kind === 'swatch') out.push(`<rect x="${n(x)}" y="${n(cy)}" width="22" height="12" fill="${it.fill}" stroke="${theme.maskedInk}" stroke-width="0.5"/>`);
    else if (it.kind === 'rotor') out.push(`<circle cx="${n(sx)}" cy="${n(sy)}" r="7" fill="none" stroke="${theme.ink}" stroke-width="1.1" stroke-dasharray="4 2 1.5 2"/><circle cx="${n(sx)}" cy="${n(sy)}" r="2" fill="${theme.ink}"/>`);
    else if (it.kind === 'ellipse') out.push(`<ellipse cx="${n(sx)}" cy="${n(sy)}" rx="10" ry="6" fill="none" stroke="${theme.ink}" stroke-width="1.2" stroke-dasharray="3 2"/>`);
    else if (it.kind === 'marker') out.push(markerShape(it.shape, sx, sy, 5));
    else if (it.kind === 'cbmark') out.push(`<path d="M${n(x + 8)},${n(sy)}L${n(x + 1)},${n(sy - 4)}L${n(x + 1)},${n(sy + 4)}Z" fill="${theme.ink}"/><line x1="${n(x + 8)}" y1="${n(sy)}" x2="${n(x + 22)}" y2="${n(sy)}" stroke="${theme.ink}" stroke-width="1.4"/>`);
    const lines = wrap(it.label, chars);
    lines.forEach((l, i) => out.push(text(x + 30, cy + 10 + i * 13, l, { size: 10.5 })));
    cy += Math.max(18, lines.length * 13 + 6);
  }
  return { markup: out.join(''), bottom: cy };
}

function percentile(values: number[], p: number): number {
  if (!values.length) return NaN;
  return percentileSorted([...values].sort((a, b) => a - b), p);
}

function percentileSorted(s: number[], p: number): number {
  const pos = p * (s.length - 1);
  const i = Math.floor(pos);
  return i + 1 < s.length ? s[i] + (s[i + 1] - s[i]) * (pos - i) : s[i];
}

/** 1, 2 or 5 times a power of ten nearest to v (1 for empty or zero input). */
function niceRound(v: number): number {
  if (!(v > 0) || !Number.isFinite(v)) return 1;
  const p = 10 ** Math.floor(Math.log10(v));
  const f = v / p;
  return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}

function decimalsOfStep(v: number): number {
  for (let d = 0; d < 4; d++) if (Math.abs(v * 10 ** d - Math.round(v * 10 ** d)) < 1e-9) return d;
  return 4;
}

function decimalsOf(v: number): number {
  return v >= 1 ? 0 : Math.min(4, Math.ceil(-Math.log10(v)));
}
