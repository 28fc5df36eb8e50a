/**
 * The drawing layers of a plane map, shared by the single map (scalarMap.ts) and the small multiples
 * (smallMultiples.ts): the field as filled contour bands or cells, masked cells hatched by reason, in-plane
 * arrows, the rotor (cross planes) or the turbine seen from above (horizontal planes), wake markers and ellipses,
 * and the axes.
 *
 * Orientation: the horizontal axis is rotor-frame y and increases to the LEFT, so a cross plane is seen looking
 * downstream (and a horizontal plane from above with x up the page) and a wake displaced to +y appears on the left.
 * The vertical axis (z, or x for horizontal planes) increases upward. Both axes share one scale (metres are square).
 */
import type { Grid } from '../grid/grid.ts';
import { bandOf, type ColourScale } from './colourScale.ts';
import { contourRegions } from './contours.ts';
import { hatchOf, hatchPath, hatchStyle, maskFill, NO_VALUE_CODE } from './maskStyle.ts';
import { textWidth } from './richText.ts';
import { arrow, linear, n, text } from './svg.ts';
import { theme } from './theme.ts';
import { formatTick, niceStep, niceTicks } from './ticks.ts';

/** The part of a plane a map shows, metres: y (horizontal axis, increasing to the left) and the second axis. */
export interface View {
  yLo: number;
  yHi: number;
  zLo: number;
  zHi: number;
}

/** Where a map sits in the figure and how plane metres map to figure units. */
export interface MapFrame extends View {
  left: number;
  top: number;
  width: number;
  height: number;
  /** Figure units per metre (both axes). */
  scale: number;
  X: (y: number) => number;
  Z: (z: number) => number;
  /** Id of the plot-area clip path (unique within the document). */
  clipId: string;
}

/** The grid's outer cell edges. */
export function gridView(g: Pick<Grid, 'ny' | 'nz' | 'y0' | 'z0' | 'dy' | 'dz'>): View {
  return { yLo: g.y0 - g.dy / 2, yHi: g.y0 + (g.ny - 0.5) * g.dy, zLo: g.z0 - g.dz / 2, zHi: g.z0 + (g.nz - 0.5) * g.dz };
}

export function mapFrame(v: View, left: number, top: number, scale: number, clipId: string): MapFrame {
  const width = (v.yHi - v.yLo) * scale, height = (v.zHi - v.zLo) * scale;
  return { ...v, left, top, width, height, scale, X: linear(v.yHi, v.yLo, left, left + width), Z: linear(v.zHi, v.zLo, top, top + height), clipId };
}

export function clipDef(f: MapFrame): string {
  return `<clipPath id="${f.clipId}"><rect x="${n(f.left)}" y="${n(f.top)}" width="${n(f.width)}" height="${n(f.height)}"/></clipPath>`;
}

/** The field: filled contour bands (values clamped into the colour range first) or flat cells. */
export function fieldLayer(f: MapFrame, grid: Grid, s: ColourScale, contours: boolean): string {
  const { ny, nz, y0, z0, dy, dz, values } = grid;
  const out: string[] = [`<g clip-path="url(#${f.clipId})" class="field">`];
  let hasFinite = false;
  for (let i = 0; i < values.length && !hasFinite; i++) hasFinite = Number.isFinite(values[i]);
  if (contours && hasFinite) {
    // The lowest band under the contours, over the grid only (a view may reach beyond it, e.g. to the turbine).
    const gv = gridView(grid);
    const xA = f.X(Math.min(gv.yHi, f.yHi)), xB = f.X(Math.max(gv.yLo, f.yLo)), yA = f.Z(Math.min(gv.zHi, f.zHi)), yB = f.Z(Math.max(gv.zLo, f.zLo));
    out.push(`<rect x="${n(xA)}" y="${n(yA)}" width="${n(xB - xA)}" height="${n(yB - yA)}" fill="${s.colours[0]}"/>`);
    const regions = contourRegions(grid, s.thresholds.slice(1, -1), s.domain);
    regions.forEach((polys, k) => {
      if (!polys.length) return;
      const d = polys.map((p) => p.map((ring) => 'M' + ring.map(([y, z]) => `${n(f.X(y))},${n(f.Z(z))}`).join('L') + 'Z').join('')).join('');
      out.push(`<path class="band" data-level="${s.thresholds[k + 1]}" d="${d}" fill="${s.colours[k + 1]}" fill-rule="evenodd" stroke="${s.colours[k + 1]}" stroke-width="0.4"/>`);
    });
  } else if (hasFinite) {
    for (let iz = 0; iz < nz; iz++) {
      let iy = 0;
      while (iy < ny) {
        const v = values[iy + iz * ny];
        if (!Number.isFinite(v)) { iy++; continue; }
        const b = bandOf(s, v);
        let end = iy + 1;
        while (end < ny && Number.isFinite(values[end + iz * ny]) && bandOf(s, values[end + iz * ny]) === b) end++;
        const xL = f.X(y0 + (end - 0.5) * dy), xR = f.X(y0 + (iy - 0.5) * dy);
        const yT = f.Z(z0 + (iz + 0.5) * dz), yB = f.Z(z0 + (iz - 0.5) * dz);
        // A thin stroke of the cell's own colour so that anti-aliased edges leave no seams between rows.
        out.push(`<rect x="${n(xL)}" y="${n(yT)}" width="${n(xR - xL + 0.25)}" height="${n(yB - yT + 0.25)}" fill="${s.colours[b]}" stroke="${s.colours[b]}" stroke-width="0.5"/>`);
        iy = end;
      }
    }
  }
  out.push('</g>');
  return out.join('');
}

/** Mask code of a cell: its reason, else NO_VALUE_CODE when the value is not finite, else 0. */
export function maskCode(codes: Uint8Array | undefined, values: ArrayLike<number>, i: number): number {
  const c = codes ? codes[i] : 0;
  if (c) return c;
  return Number.isFinite(values[i]) ? 0 : NO_VALUE_CODE;
}

/**
 * Masked and empty cells, hatched by reason: per reason one grey path of cell runs ("M xL,yT H xR V yB H xL Z") and
 * one path of hatch lines. Returns the markup and the number of cells per code.
 */
export function maskLayer(f: MapFrame, grid: Grid, codes: Uint8Array | undefined): { markup: string; counts: Map<number, number> } {
  const { ny, nz, y0, z0, dy, dz, values } = grid;
  const counts = new Map<number, number>();
  const runs = new Map<number, string[]>();
  const hatches = new Map<number, string[]>();
  for (let iz = 0; iz < nz; iz++) {
    let iy = 0;
    while (iy < ny) {
      const code = maskCode(codes, values, iy + iz * ny);
      if (!code) { iy++; continue; }
      let end = iy + 1;
      while (end < ny && maskCode(codes, values, end + iz * ny) === code) end++;
      counts.set(code, (counts.get(code) ?? 0) + (end - iy));
      const xL = f.X(y0 + (end - 0.5) * dy), xR = f.X(y0 + (iy - 0.5) * dy);
      const yT = f.Z(z0 + (iz + 0.5) * dz), yB = f.Z(z0 + (iz - 0.5) * dz);
      if (!runs.has(code)) (runs.set(code, []), hatches.set(code, []));
      runs.get(code)!.push(`M${n(xL)},${n(yT)}H${n(xR + 0.25)}V${n(yB + 0.25)}H${n(xL)}Z`);
      hatches.get(code)!.push(hatchPath(hatchOf(code), xL, yT, xR, yB));
      iy = end;
    }
  }
  if (!counts.size) return { markup: '', counts };
  const parts: string[] = [];
  for (const c of [...counts.keys()].sort((a, b) => a - b)) {
    parts.push(`<path class="masked m${c}" d="${runs.get(c)!.join('')}" fill="${maskFill(c)}"/>`);
    const h = hatches.get(c)!.join('');
    if (h) parts.push(`<path class="hatch m${c}" d="${h}" ${hatchStyle(hatchOf(c))}/>`);
  }
  return { markup: `<g class="mask" clip-path="url(#${f.clipId})">${parts.join('')}</g>`, counts };
}

/**
 * The arrow scale of a run: the reference speed and the length, in plane metres, that an arrow of that speed has
 * in every figure of the run (so arrows compare across planes, windows and figure sizes against the map's metres).
 */
export interface ArrowScale {
  reference_ms: number;
  length_m: number;
}

export interface ArrowInput {
  /** In-plane components per cell (v along the horizontal axis, w along the vertical axis), m/s. */
  v: ArrayLike<number>;
  w: ArrayLike<number>;
  /** 1 where w was not measured but assumed zero (two-instrument cells): drawn with an open head in grey. */
  assumedW?: ArrayLike<number>;
  /** Every k-th cell in each direction. */
  every: number;
}

export interface ArrowCounts {
  measured: number;
  assumed: number;
  capped: number;
  /** Arrow places whose cell has a value on the map but no arrow: v or w not resolved (masked). */
  unresolved: number;
}

/**
 * Every how many cells a map draws an arrow: `base` (the map's own density), or more where the run's arrow length
 * (one for every plane, set by the plane with the widest spacing) needs it on a plane of smaller cells, so that
 * arrows stand at least 4/3 of their reference length apart (an arrow is 0.75 of the spacing at the reference speed).
 */
export function arrowEvery(grid: Pick<Grid, 'dy' | 'dz'>, sc: ArrowScale, base: number): number {
  return Math.max(1, Math.round(base), Math.ceil(sc.length_m / (0.75 * Math.min(grid.dy, grid.dz)) - 1e-9));
}

/** Arrows faster than this many reference speeds are cut to that length and drawn dashed. */
export const ARROW_CAP = 2;

/**
 * In-plane arrows centred on the cell centres (the middle of the arrow on the centre, as quiver plots commonly pivot),
 * every k-th cell. +v points to +y (left on the page), +w up. An arrow always
 * lies whole inside the map: centred, an arrow up to 4/3 of the reference speed stays within its cell's half-spacing,
 * and a longer one that would still cross the frame is moved inward along the frame by what it overhangs (at most a
 * quarter of the arrow spacing at the cap), so that its head and direction are never cut off. Measured arrows are
 * dark with a filled head; arrows of cells where w was assumed zero are grey with an open head.
 */
export function arrowLayer(f: MapFrame, grid: Grid, a: ArrowInput, sc: ArrowScale): { markup: string; counts: ArrowCounts } {
  const { ny, nz, y0, z0, dy, dz } = grid;
  const every = Math.max(1, Math.round(a.every));
  const k = (sc.length_m * f.scale) / sc.reference_ms; // figure units per m/s
  const counts: ArrowCounts = { measured: 0, assumed: 0, capped: 0, unresolved: 0 };
  const off = Math.floor((every - 1) / 2);
  const parts: string[] = [];
  for (let iz = off; iz < nz; iz += every) {
    for (let iy = off; iy < ny; iy += every) {
      const i = iy + iz * ny;
      const v = a.v[i], w = a.w[i];
      const yc = y0 + iy * dy, zc = z0 + iz * dz;
      if (yc < f.yLo || yc > f.yHi || zc < f.zLo || zc > f.zHi) continue;
      if (!Number.isFinite(v) || !Number.isFinite(w)) {
        if (Number.isFinite(grid.values[i])) counts.unresolved++;
        continue;
      }
      const s = Math.hypot(v, w);
      const cut = s > ARROW_CAP * sc.reference_ms ? (ARROW_CAP * sc.reference_ms) / s : 1;
      const assumed = !!a.assumedW && a.assumedW[i] === 1;
      if (cut < 1) counts.capped++;
      if (assumed) counts.assumed++;
      else counts.measured++;
      const cls = `arrow${assumed ? ' assumed' : ''}${cut < 1 ? ' capped' : ''}`;
      // Page offsets of the arrow: +v to the left (-X), +w up (-Z); centred on the cell centre.
      const hx = (-v * k * cut) / 2, hy = (-w * k * cut) / 2;
      const [x1, y1] = insideFrame(f, f.X(yc) - hx, f.Z(zc) - hy, f.X(yc) + hx, f.Z(zc) + hy);
      parts.push(arrowMark(x1, y1, x1 + 2 * hx, y1 + 2 * hy, assumed, cut < 1, cls));
    }
  }
  return { markup: parts.length ? `<g class="arrows" clip-path="url(#${f.clipId})">${parts.join('')}</g>` : '', counts };
}

/** The tail of an arrow (x1, y1) -> (x2, y2) moved by the least that keeps the whole arrow inside the frame. */
function insideFrame(f: MapFrame, x1: number, y1: number, x2: number, y2: number): [number, number] {
  const shift = (a: number, b: number, lo: number, hi: number) => {
    const min = Math.min(a, b), max = Math.max(a, b);
    if (max - min > hi - lo) return (lo + hi) / 2 - (a + b) / 2; // longer than the frame: centre it
    return min < lo ? lo - min : max > hi ? hi - max : 0;
  };
  return [x1 + shift(x1, x2, f.left, f.left + f.width), y1 + shift(y1, y2, f.top, f.top + f.height)];
}

/** One arrow: measured (ink, filled head) or assumed-w (grey, open head); dashed when cut to the cap. */
export function arrowMark(x1: number, y1: number, x2: number, y2: number, assumed: boolean, capped: boolean, cls: string): string {
  if (!assumed) return arrow(x1, y1, x2, y2, theme.ink, cls, 0.9, capped ? '2.5 1.5' : undefined);
  const dx = x2 - x1, dy = y2 - y1;
  const len = Math.hypot(dx, dy);
  let s = `<line class="${cls}" x1="${n(x1)}" y1="${n(y1)}" x2="${n(x2)}" y2="${n(y2)}" stroke="${theme.muted}" stroke-width="0.9" stroke-linecap="round"${capped ? ' stroke-dasharray="2.5 1.5"' : ''}/>`;
  if (len >= 2) {
    const head = Math.min(6, Math.max(2.5, len * 0.3));
    const ux = dx / len, uy = dy / len, bx = x2 - ux * head, by = y2 - uy * head, hw = head * 0.45;
    s += `<path d="M${n(bx - uy * hw)},${n(by + ux * hw)}L${n(x2)},${n(y2)}L${n(bx + uy * hw)},${n(by - ux * hw)}" fill="none" stroke="${theme.muted}" stroke-width="0.9" stroke-linejoin="miter"/>`;
  }
  return s + '\n';
}

/** Rotor disk outline and hub of a cross plane (white halo under dark ink so it reads on every colour). */
export function rotorLayer(f: MapFrame, r: { y: number; z: number; radius: number }, hubRadius = 3): string {
  const cx = f.X(r.y), cy = f.Z(r.z), rr = r.radius * f.scale;
  return `<g class="rotor" clip-path="url(#${f.clipId})"><circle cx="${n(cx)}" cy="${n(cy)}" r="${n(rr)}" fill="none" stroke="#ffffff" stroke-width="3" stroke-opacity="0.8"/>` +
    `<circle cx="${n(cx)}" cy="${n(cy)}" r="${n(rr)}" fill="none" stroke="${theme.ink}" stroke-width="1.2" stroke-dasharray="7 3 2 3"/>` +
    `<circle class="hub" cx="${n(cx)}" cy="${n(cy)}" r="${hubRadius}" fill="${theme.ink}" stroke="#ffffff" stroke-width="1"/></g>`;
}

/** A turbine seen from above on a horizontal plane: the rotor as a bar across y at its x, the nacelle behind it
 * (downstream, up the page). */
export interface TurbineMark {
  y: number;
  x: number;
  diameter_m: number;
  label: string;
}

/** True when the turbine's rotor stands within the map's view (only those are drawn). */
export function turbineInView(v: View, t: TurbineMark): boolean {
  return t.x >= v.zLo && t.x <= v.zHi && t.y + t.diameter_m / 2 >= v.yLo && t.y - t.diameter_m / 2 <= v.yHi;
}

export function turbineLayer(f: MapFrame, t: TurbineMark): string {
  if (!turbineInView(f, t)) return '';
  const yl = f.X(t.y + t.diameter_m / 2), yr = f.X(t.y - t.diameter_m / 2), yx = f.Z(t.x);
  const nac = Math.max(3, 0.08 * t.diameter_m * f.scale);
  const cx = f.X(t.y);
  return `<g class="turbine" data-y="${t.y}" data-x="${t.x}">` +
    `<line x1="${n(yl)}" y1="${n(yx)}" x2="${n(yr)}" y2="${n(yx)}" stroke="#ffffff" stroke-width="5" stroke-linecap="round"/>` +
    `<line x1="${n(yl)}" y1="${n(yx)}" x2="${n(yr)}" y2="${n(yx)}" stroke="${theme.ink}" stroke-width="2.4" stroke-linecap="round"/>` +
    // The nacelle stands behind the rotor, downstream: up the page.
    `<rect x="${n(cx - nac * 0.3)}" y="${n(yx - nac)}" width="${n(nac * 0.6)}" height="${n(nac)}" fill="${theme.ink}" stroke="#ffffff" stroke-width="0.8"/></g>`;
}

export function ellipseLayer(f: MapFrame, e: { y: number; z: number; ry: number; rz: number }): string {
  if (![e.y, e.z, e.ry, e.rz].every(Number.isFinite)) return '';
  const cx = f.X(e.y), cy = f.Z(e.z), rx = Math.abs(e.ry) * f.scale, ry = Math.abs(e.rz) * f.scale;
  return `<g class="ellipse" clip-path="url(#${f.clipId})"><ellipse cx="${n(cx)}" cy="${n(cy)}" rx="${n(rx)}" ry="${n(ry)}" fill="none" stroke="#ffffff" stroke-width="3.2" stroke-opacity="0.85"/>` +
    `<ellipse cx="${n(cx)}" cy="${n(cy)}" rx="${n(rx)}" ry="${n(ry)}" fill="none" stroke="${theme.ink}" stroke-width="1.3" stroke-dasharray="4 3"/></g>`;
}

export type MarkerShape = 'cross' | 'circle' | 'diamond';

export function markerLayer(f: MapFrame, m: { y: number; z: number; shape: MarkerShape }, size = 6): string {
  if (!Number.isFinite(m.y) || !Number.isFinite(m.z)) return '';
  return `<g class="marker marker-${m.shape}" data-y="${m.y}" data-z="${m.z}">${markerShape(m.shape, f.X(m.y), f.Z(m.z), size)}</g>`;
}

export function markerShape(shape: MarkerShape, x: number, y: number, s: number): string {
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

export interface AxesOptions {
  /** Tick labels along the bottom (y) and left (z) edges. */
  yTicks: boolean;
  zTicks: boolean;
  tickSize?: number;
  /** Rotor diameters on the top and right edges, from (yc, zc). */
  diameters?: { D: number; yc: number; zc: number };
  /** Bottom tick labels must stay within [x0, x1] (figure units), e.g. the room between neighbouring panels. */
  yTickRoom?: [number, number];
}

/** Frame, ticks and tick labels (metres bottom and left; rotor diameters top and right when asked). */
export function axesLayer(f: MapFrame, o: AxesOptions): string {
  const size = o.tickSize ?? 11;
  const ax: string[] = [`<rect x="${n(f.left)}" y="${n(f.top)}" width="${n(f.width)}" height="${n(f.height)}" fill="none" stroke="${theme.ink}" stroke-width="0.8"/>`];
  const right = f.left + f.width, bottom = f.top + f.height;
  const yCount = Math.max(3, Math.round(f.width / 80)), zCount = Math.max(3, Math.round(f.height / 60));
  const yStep = niceStep(f.yLo, f.yHi, yCount), zStep = niceStep(f.zLo, f.zHi, zCount);
  for (const t of niceTicks(f.yLo, f.yHi, yCount)) {
    const x = f.X(t);
    ax.push(`<line x1="${n(x)}" y1="${n(bottom)}" x2="${n(x)}" y2="${n(bottom + 5)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    const label = formatTick(t, yStep), half = textWidth(label, size) / 2;
    if (o.yTicks && (!o.yTickRoom || (x - half >= o.yTickRoom[0] && x + half <= o.yTickRoom[1]))) ax.push(text(x, bottom + 6 + size, label, { anchor: 'middle', size, cls: 'tick' }));
  }
  for (const t of niceTicks(f.zLo, f.zHi, zCount)) {
    const y = f.Z(t);
    ax.push(`<line x1="${n(f.left - 5)}" y1="${n(y)}" x2="${n(f.left)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
    if (o.zTicks) ax.push(text(f.left - 8, y, formatTick(t, zStep), { anchor: 'end', dy: 0.35, size, cls: 'tick' }));
  }
  if (o.diameters) {
    const { D, yc, zc } = o.diameters;
    const dLo = (f.yLo - yc) / D, dHi = (f.yHi - yc) / D;
    const dStep = niceStep(dLo, dHi, yCount);
    for (const t of niceTicks(dLo, dHi, yCount)) {
      const x = f.X(yc + t * D);
      ax.push(`<line x1="${n(x)}" y1="${n(f.top - 5)}" x2="${n(x)}" y2="${n(f.top)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
      ax.push(text(x, f.top - 9, formatTick(t, dStep), { anchor: 'middle', fill: theme.muted, size, cls: 'tick' }));
    }
    const eLo = (f.zLo - zc) / D, eHi = (f.zHi - zc) / D;
    const eStep = niceStep(eLo, eHi, zCount);
    for (const t of niceTicks(eLo, eHi, zCount)) {
      const y = f.Z(zc + t * D);
      ax.push(`<line x1="${n(right)}" y1="${n(y)}" x2="${n(right + 5)}" y2="${n(y)}" stroke="${theme.ink}" stroke-width="0.8"/>`);
      ax.push(text(right + 8, y, formatTick(t, eStep), { dy: 0.35, fill: theme.muted, size, cls: 'tick' }));
    }
  }
  return `<g class="axes">${ax.join('')}</g>`;
}
