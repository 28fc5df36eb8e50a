/**
 * Figure geometry read back from the SVG text: colour ranges shared by every figure of a run (or fixed in the
 * campaign) with the cells beyond them counted at triangular ends, hatching drawn inside the masked cells, one arrow
 * scale per run, arrows of assumed-w cells drawn apart, horizontal planes cropped with the turbine marked, and the
 * typography (no overlapping labels, no two rotated labels side by side, numbers kept with their units, real
 * subscripts). Text boxes are estimated from the font's advance widths (test/helpers/svgText.ts); the browser test
 * measures the same figures with chromium.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { FIGURES_DEFAULT, type FiguresSettings } from '../src/campaign/figures.ts';
import { gridSpecOf, withValues } from '../src/grid/grid.ts';
import { planCampaign } from '../src/plan/planCampaign.ts';
import { writePlanImages } from '../src/plan/images.ts';
import { parseImageSelection, parseWindowImages, windowSelected } from '../src/render/figureSelection.ts';
import { hatchOf } from '../src/render/maskStyle.ts';
import { decimalsForUncertainty, roundToUncertainty, withUncertainty } from '../src/render/numbers.ts';
import { panelField } from '../src/render/panelField.ts';
import { planeWindowFigures } from '../src/render/planeImages.ts';
import { FigureCollector, planePanelsSvg } from '../src/render/runFigures.ts';
import { ValueHistogram } from '../src/render/runScales.ts';
import { linePlotSvg } from '../src/render/linePlot.ts';
import { scalarMapSvg } from '../src/render/scalarMap.ts';
import { summaryFigures } from '../src/render/summaryPlots.ts';
import { theme } from '../src/render/theme.ts';
import { niceExtent } from '../src/render/ticks.ts';
import { textWidth, wrapText } from '../src/render/richText.ts';
import { MaskReason, type FieldResult } from '../src/retrieval/types.ts';
import { DEFAULT_SHAPE, fixtureAnalysis, fixtureCampaign, fixtureField, fixtureWake } from './render-fixture.ts';
import { overlaps, svgTexts } from './helpers/svgText.ts';

const dir = mkdtempSync(join(tmpdir(), 'wakeplane-figs-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const campaign = fixtureCampaign();
const [P5D, H90] = campaign.planes;
/** Three windows whose wakes deepen: amplitude 0.25, 0.45, 0.65 (so the pooled range differs from each window's). */
const shapes = [0.25, 0.45, 0.65].map((amplitude, k) => ({ ...DEFAULT_SHAPE, amplitude, yc: 5 + 10 * k }));
const cross = shapes.map((s, k) => fixtureField(P5D, k, s));
const horiz = shapes.map((s, k) => fixtureField(H90, k, s));
const wakes = new Map<FieldResult, ReturnType<typeof fixtureWake>>([...cross, ...horiz].map((f, k) => [f, fixtureWake(f, shapes[k % 3])]));

function collect(fields: FieldResult[], settings: FiguresSettings = FIGURES_DEFAULT) {
  const c = new FigureCollector(settings.maxPanels);
  for (const f of fields) c.add(f, wakes.get(f));
  return { collector: c, scales: c.runScales(settings, campaign.planes) };
}

const attrs = (tag: string): Record<string, number> => Object.fromEntries([...tag.matchAll(/([a-z0-9-]+)="([-0-9.]+)"/g)].map((m) => [m[1], Number(m[2])]));
/** Tick labels of the colour bar, as numbers (typographic minus read back). */
const colourBarTicks = (svg: string) => [...(/<g class="colorbar">(.*?)<\/g>/s.exec(svg)![1]).matchAll(/<text[^>]*class="tick"[^>]*>([^<]*)<\/text>/g)].map((m) => Number(m[1].replace('\u2212', '-')));

describe('colour ranges shared by the run', () => {
  const all = [...cross, ...horiz];
  const { collector, scales } = collect(all);

  it('come from the pooled values of every plane and window (1st to 99th percentile, widened to nice numbers)', () => {
    // Independent reference: the exact percentiles of all u/u_inf values by sorting (linear interpolation, as
    // numpy.percentile's default), then the same nice widening. The histogram is exact to its bin width (0.001).
    const pooled: number[] = [];
    for (const f of all) for (const v of panelField(f, wakes.get(f)).values) if (Number.isFinite(v)) pooled.push(v);
    pooled.sort((a, b) => a - b);
    const q = (p: number) => { const pos = p * (pooled.length - 1), i = Math.floor(pos); return pooled[i] + (pooled[Math.min(i + 1, pooled.length - 1)] - pooled[i]) * (pos - i); };
    const h = collector.scales.hist.u_norm;
    expect(Math.abs(h.quantile(0.01) - q(0.01))).toBeLessThanOrEqual(0.001);
    expect(Math.abs(h.quantile(0.99) - q(0.99))).toBeLessThanOrEqual(0.001);
    expect(scales.limits.u_norm).toEqual(niceExtent(h.quantile(0.01), h.quantile(0.99), 10));
    // The range covers at least 98 % of all values (1st to 99th percentile, widened outwards).
    const [lo, hi] = scales.limits.u_norm!;
    expect(pooled.filter((v) => v >= lo && v <= hi).length / pooled.length).toBeGreaterThanOrEqual(0.98);
    expect(scales.limitSource.u_norm).toBe('run');
  });

  it('are the same on every figure of the run: each window image, both planes\' multi-panel figures', () => {
    const svgs = [
      ...cross.map((f) => planeWindowFigures(f, wakes.get(f), campaign, scales, false)[0].svg),
      planeWindowFigures(horiz[1], wakes.get(horiz[1]), campaign, scales, false)[0].svg,
      planePanelsSvg(P5D, collector.panels('P5D').shown, 3, scales, campaign),
      planePanelsSvg(H90, collector.panels('H90').shown, 3, scales, campaign),
    ];
    const ticks = svgs.map(colourBarTicks);
    for (const t of ticks) expect(t).toEqual(ticks[0]);
    // The bar's end ticks are the shared limits (nice numbers, so they are ticks).
    expect(ticks[0][0]).toBeCloseTo(scales.limits.u_norm![0], 9);
    expect(ticks[0].at(-1)).toBeCloseTo(scales.limits.u_norm![1], 9);
    // A window alone would have had its own, narrower range: the shallow wake (amplitude 0.25) does not reach 0.6.
    const own = scalarMapSvg(withValues(cross[0].grid, Float64Array.from(panelField(cross[0], wakes.get(cross[0])).values)), { title: 't', colorbarLabel: 'u', axes: { yLabel: 'y', zLabel: 'z' } });
    expect(colourBarTicks(own)[0]).toBeGreaterThan(ticks[0][0]);
  });

  it('can be fixed in the campaign; values beyond them are counted at triangular ends of the colour bar', () => {
    const settings = { ...FIGURES_DEFAULT, limits: { u_norm: [0.7, 0.95] as [number, number] } };
    const fixed = collect(cross, settings);
    expect(fixed.scales.limits.u_norm).toEqual([0.7, 0.95]);
    expect(fixed.scales.limitSource.u_norm).toBe('campaign');
    const panels = fixed.collector.panels('P5D').shown;
    let under = 0, over = 0;
    for (const p of panels) for (const v of p.values) if (v < 0.7) under++; else if (v > 0.95) over++;
    expect(under).toBeGreaterThan(0); // the deeper wakes fall below 0.7
    expect(over).toBeGreaterThan(0); // the free stream is near 1
    const svg = planePanelsSvg(P5D, panels, 3, fixed.scales, campaign);
    expect(attrs(/<path class="colorbar-under"[^>]*>/.exec(svg)![0])['data-count']).toBe(under);
    expect(attrs(/<path class="colorbar-over"[^>]*>/.exec(svg)![0])['data-count']).toBe(over);
    const words = svgTexts(svg).map((t) => t.text).join(' ');
    expect(words).toContain(`${under}\u00a0below`);
    expect(words).toContain(`${over}\u00a0above`);
    // Without values beyond the range there are no triangles.
    const inRange = scalarMapSvg({ ...cross[0].grid, values: new Float64Array(cross[0].u.length).fill(0.8) }, { title: 't', colorbarLabel: 'u', axes: { yLabel: 'y', zLabel: 'z' }, domain: [0.7, 0.95] });
    expect(inRange).not.toContain('colorbar-under');
    expect(inRange).not.toContain('colorbar-over');
  });
});

describe('value histogram (shared ranges without keeping values)', () => {
  it('gives quantiles within one bin of the exact ones, and merges by adding counts', () => {
    // Deterministic pseudo-random values (a sine hash, as in REFERENCES.md section 7), reference: exact quantiles of
    // the sorted values; tolerance one bin width (0.01).
    const vals = Array.from({ length: 5000 }, (_, i) => 0.5 + 0.6 * Math.abs(Math.sin(12.9898 * i + 78.233)));
    const a = new ValueHistogram(0, 2, 200), b = new ValueHistogram(0, 2, 200);
    vals.forEach((v, i) => (i % 2 ? a : b).add(v));
    a.merge(b);
    const s = [...vals].sort((x, y) => x - y);
    for (const p of [0.01, 0.1, 0.5, 0.9, 0.99]) {
      const pos = p * (s.length - 1), i = Math.floor(pos);
      const exact = s[i] + (s[i + 1] - s[i]) * (pos - i);
      expect(Math.abs(a.quantile(p) - exact)).toBeLessThanOrEqual(0.01);
    }
    expect(a.total).toBe(5000);
    a.add(-5); // below the range: counted, and found in its geometric tail bin (not clamped to the lower edge)
    expect(a.under).toBe(1);
    // One tail bin: about 1 % of the distance from the range (5) plus the bin width (0.01).
    expect(Math.abs(a.quantile(0) - -5)).toBeLessThanOrEqual(0.01 * 5 + 0.01);
  });
});

describe('hatching of masked cells', () => {
  it('draws the hatch lines of each reason inside that reason\'s cells, and names the reason in the legend', () => {
    const f = cross[1];
    const svg = planeWindowFigures(f, wakes.get(f), campaign, undefined, false)[0].svg;
    // The fixture masks u for amplification (code 4, cross-hatched) in one corner and has no data (code 1, plain) at
    // the bottom.
    expect(hatchOf(MaskReason.amplification)).toBe('cross');
    const runs = [...(/<path class="masked m4" d="([^"]+)"/.exec(svg)![1]).matchAll(/M([-0-9.]+),([-0-9.]+)H([-0-9.]+)V([-0-9.]+)H[-0-9.]+Z/g)].map((m) => m.slice(1).map(Number));
    expect(runs.length).toBeGreaterThan(0);
    const hatch = /<path class="hatch m4" d="([^"]+)"/.exec(svg)![1];
    const segs = [...hatch.matchAll(/M([-0-9.]+),([-0-9.]+)L([-0-9.]+),([-0-9.]+)/g)].map((m) => m.slice(1).map(Number));
    expect(segs.length).toBeGreaterThan(10);
    // Every end of every hatch line lies within a masked run (coordinates rounded to 0.01, runs drawn 0.25 wider).
    const inside = (x: number, y: number) => runs.some(([xL, yT, xR, yB]) => x >= xL - 0.02 && x <= xR + 0.02 && y >= yT - 0.02 && y <= yB + 0.02);
    for (const [x1, y1, x2, y2] of segs) {
      expect(inside(x1, y1)).toBe(true);
      expect(inside(x2, y2)).toBe(true);
      // Cross hatch: +-45 degree lines.
      expect(Math.abs(Math.abs(x2 - x1) - Math.abs(y2 - y1))).toBeLessThan(0.03);
    }
    const words = svgTexts(svg).map((t) => t.text).join(' ');
    expect(words).toMatch(/amplification above threshold \(\d+\u00a0cells\)/);
    // The multi-panel figure hatches the same cells in every panel and counts them over all panels.
    const { collector, scales } = collect(cross);
    const panels = planePanelsSvg(P5D, collector.panels('P5D').shown, 3, scales, campaign);
    expect((panels.match(/<path class="hatch m4"/g) ?? []).length).toBe(3);
    let masked = 0;
    for (const c of cross) for (const m of c.maskU) if (m === MaskReason.amplification) masked++;
    expect(svgTexts(panels).map((t) => t.text).join(' ')).toContain(`amplification above threshold (${masked}\u00a0cells)`);
  });
});

describe('arrows: one scale per run, assumed w drawn apart', () => {
  it('gives every figure of the run the same arrow length per m/s in plane metres, whatever its grid', () => {
    // A second cross plane with another cell size, in the same run.
    const c2 = fixtureCampaign();
    c2.planes[1] = { ...c2.planes[0], id: 'P7D', index: 1, x_m: 840, cell_m: [15, 10] };
    const f7 = fixtureField(c2.planes[1], 0);
    const col = new FigureCollector(24);
    col.add(cross[0], wakes.get(cross[0]));
    col.add(f7, fixtureWake(f7));
    const scales = col.runScales(FIGURES_DEFAULT, c2.planes);
    // Spacing: ceil(max(ny, nz)/16) cells of the smaller side on the full map; the widest over the planes.
    const g5 = gridSpecOf(c2.planes[0]), g7 = gridSpecOf(c2.planes[1]);
    const spacing = Math.max(Math.ceil(Math.max(g5.ny, g5.nz) / 16) * Math.min(g5.dy, g5.dz), Math.ceil(Math.max(g7.ny, g7.nz) / 16) * Math.min(g7.dy, g7.dz));
    expect(scales.arrows.length_m).toBeCloseTo(0.75 * spacing, 9);
    for (const [f, w] of [[cross[0], wakes.get(cross[0])], [f7, fixtureWake(f7)]] as const) {
      const svg = planeWindowFigures(f, w, c2, scales, false)[0].svg;
      const pxPerM = attrs(/<g class="rotor"[^>]*><circle [^>]*>/.exec(svg)![0]).r / 60; // rotor radius 60 m
      const ref = attrs(/<line class="arrow-ref"[^>]*>/.exec(svg)![0]);
      // Coordinates are written to 0.01 units: tolerance 0.02 units, in metres 0.02 / pxPerM.
      expect(Math.abs((ref.x2 - ref.x1) / pxPerM - scales.arrows.length_m)).toBeLessThan(0.02 / pxPerM + 1e-9);
      // Each drawn arrow: speed x (length_m / reference) metres (unless cut at twice the reference).
      for (const m of svg.matchAll(/<line class="arrow" x1="([-0-9.]+)" y1="([-0-9.]+)" x2="([-0-9.]+)" y2="([-0-9.]+)"/g)) {
        const [x1, y1, x2, y2] = m.slice(1).map(Number);
        expect(Math.hypot(x2 - x1, y2 - y1) / pxPerM).toBeLessThanOrEqual(2 * scales.arrows.length_m + 0.03 / pxPerM);
      }
    }
  });

  it('draws cells where w was assumed zero grey with an open head, horizontally, and explains them', () => {
    const f = fixtureField(P5D, 0);
    let assumed = 0;
    for (let i = 0; i < f.maskW.length; i++) if (f.maskW[i] === MaskReason.assumedZero) assumed++;
    expect(assumed).toBeGreaterThan(0); // the fixture assumes w = 0 in a corner
    const svg = scalarMapSvg(withValues(f.grid, f.u), {
      title: 't', colorbarLabel: 'u', axes: { yLabel: 'y', zLabel: 'z' },
      arrows: { v: f.v, w: Float64Array.from(f.w, (w, i) => (f.maskW[i] === MaskReason.assumedZero ? 0 : w)), assumedW: Uint8Array.from(f.maskW, (m) => (m === MaskReason.assumedZero ? 1 : 0)), every: 1, referenceSpeed: 1 },
    });
    const lines = [...svg.matchAll(/<line class="arrow assumed( capped)?" ([^>]*)>/g)];
    const heads = [...svg.matchAll(/<line class="arrow assumed[^"]*"[^>]*\/><path d="[^"]+" fill="none" stroke="([^"]+)"/g)];
    // every = 1: one arrow per assumed cell with a finite v (all of them in the fixture).
    expect(lines.length).toBe(assumed);
    expect(heads.length).toBe(assumed); // open heads (no fill)
    for (const m of lines) {
      const a = attrs(m[2]);
      expect(m[2]).toContain(`stroke="${theme.muted}"`);
      expect(Math.abs(a.y2 - a.y1)).toBeLessThan(0.011); // w = 0: horizontal, up to the 0.01 rounding
    }
    // Measured arrows stay dark with filled heads.
    expect(svg).toMatch(new RegExp(`<line class="arrow" [^>]*stroke="${theme.ink}"`));
    const words = svgTexts(svg).map((t) => t.text).join(' ');
    expect(words).toContain('w not measured, taken as 0');
    expect(words).toContain(`${assumed}\u00a0arrows`);
  });
});

describe('horizontal planes', () => {
  it('are cropped to the cells with data and mark the turbine when it stands near them', () => {
    // Near: the fixture's data start 240 m (2 D) downstream, so the turbine at x = 0 is in view.
    const near = planeWindowFigures(horiz[0], wakes.get(horiz[0]), campaign, undefined, false)[0].svg;
    expect(near).toContain('<g class="turbine" data-y="0" data-x="0">');
    expect(svgTexts(near).map((t) => t.text).join(' ')).toContain('turbine T-invented: rotor seen from above');
    // Far and partial: data only in y 0..100 m and x 700..1000 m of a plane reaching 240..1200 m; the turbine is more
    // than 3 D away, so the view is the data's cells plus one cell each side: y -10..110 (12 cells of 10 m) and
    // x 660..1020 m (12 cells of 30 m); the frame's aspect is that of the view.
    const f = fixtureField(H90, 0);
    const g = f.grid;
    for (let i = 0; i < g.ny * g.nz; i++) {
      const y = g.y0 + (i % g.ny) * g.dy, x = g.z0 + Math.floor(i / g.ny) * g.dz;
      if (!(y > 0 && y < 100 && x > 700 && x < 1000)) {
        f.u[i] = NaN;
        f.samples[i] = 0;
        f.maskU[i] = MaskReason.noData;
      }
    }
    const far = planeWindowFigures(f, undefined, campaign, undefined, false)[0].svg;
    expect(far).not.toContain('class="turbine"');
    const frame = attrs(/<clipPath id="wp-plot"><rect [^>]*>/.exec(far)![0]);
    expect(frame.width / frame.height).toBeCloseTo(120 / 360, 2);
  });
});

/** Every kind of figure a run and the planner draw, as SVG text. */
async function allFigures(): Promise<[string, string][]> {
  const { collector, scales } = collect([...cross, ...horiz]);
  const figs: [string, string][] = [];
  for (const s of summaryFigures(fixtureAnalysis([...wakes.values()]), campaign)) figs.push([`summary_${s.what}`, s.svg]);
  figs.push(['P5D_panels', planePanelsSvg(P5D, collector.panels('P5D').shown, 3, scales, campaign)]);
  figs.push(['H90_panels', planePanelsSvg(H90, collector.panels('H90').shown, 3, scales, campaign)]);
  for (const f of [cross[1], horiz[1]]) for (const s of planeWindowFigures(f, wakes.get(f), campaign, scales, true)) figs.push([s.name, s.svg]);
  const plan = planCampaign(campaign);
  await writePlanImages(plan, campaign, dir);
  for (const name of readdirSync(join(dir, 'plan')).filter((n) => n.endsWith('.svg'))) figs.push([`plan/${name}`, readFileSync(join(dir, 'plan', name), 'utf8')]);
  return figs;
}

describe('typography of every figure type', async () => {
  const figs = await allFigures();

  it('covers summary plots, multi-panel figures, single-window maps and plots, and planner maps', () => {
    const names = figs.map(([n]) => n);
    expect(names.filter((n) => n.startsWith('summary_')).length).toBe(5);
    expect(names).toContain('P5D_panels');
    expect(names).toContain('H90_w1_u_norm');
    expect(names).toContain('P5D_w1_inflow');
    expect(names.filter((n) => n.startsWith('plan/')).length).toBe(6); // trust, dopw, cond for two planes
  });

  it('no two labels overlap (estimated text boxes, 0.5-unit tolerance)', () => {
    for (const [name, svg] of figs) {
      const o = overlaps(svgTexts(svg));
      expect(o.map(([a, b]) => `${a.text} / ${b.text}`), name).toEqual([]);
    }
  });

  it('no two rotated labels stand side by side: at most one left and one right of the plot', () => {
    for (const [name, svg] of figs) {
      const rot = svgTexts(svg).filter((t) => t.rotate !== 0);
      expect(rot.length, name).toBeLessThanOrEqual(2);
      if (rot.length === 2) expect(Math.abs(rot[0].x - rot[1].x), name).toBeGreaterThan(150);
    }
  });

  it('keeps numbers with their units, writes degrees as °, and uses real subscripts', () => {
    const unitStart = /^(m|m\/s|°|%|cells?|D|s|MiB)([\s,.;)]|$)/;
    for (const [name, svg] of figs) {
      for (const t of svgTexts(svg)) {
        expect(unitStart.test(t.text.trim()), `${name}: "${t.text}"`).toBe(false);
        expect(/[=±]$/.test(t.text.trim()), `${name}: "${t.text}"`).toBe(false);
        expect(/\bdeg(rees)?\b/.test(t.text), `${name}: "${t.text}"`).toBe(false);
        expect(/u_inf|z_hub|sigma/.test(t.text), `${name}: "${t.text}"`).toBe(false);
      }
    }
    const svg = (n: string) => figs.find(([k]) => k === n)![1];
    const sub = (base: string, s: string) => new RegExp(`${base}<tspan dy="[0-9.]+" font-size="[0-9.]+">${s}</tspan>`);
    expect(svg('P5D_w1_u_norm')).toMatch(sub('u/u', '∞')); // colour bar title
    expect(svg('P5D_w1_u_norm')).toMatch(sub('\\(z − z', 'hub')); // rotor-diameter axis
    expect(svg('P5D_w1_u_norm')).toMatch(sub('σ', 'y')); // width ellipse in the legend
    expect(svg('summary_steering')).toMatch(sub('Δy', 'c'));
    expect(svg('summary_deficit')).toMatch(/k<tspan dy="-[0-9.]+" font-size="[0-9.]+">\*<\/tspan>/); // superscript
  });

  it('wraps at ordinary spaces only: a no-break space keeps a number with its unit', () => {
    expect(wrapText('width ellipse: σ_{y}\u00a0=\u00a035.0\u00a0±\u00a00.2\u00a0m, more words here', 60, 10.5)).toContain('σ_{y}\u00a0=\u00a035.0\u00a0±\u00a00.2\u00a0m,');
    expect(wrapText('a b', 1, 10)).toEqual(['a', 'b']);
  });

  it('cuts a word wider than the line after its dashes (a time span over a narrow panel), never after a leading sign', () => {
    // 70 user units at 11 px bold hold "window 0 ·" but not "09:01:30–09:09:30" (about 100): the span goes on two
    // lines, cut after its en dash, each within the width (widths from the font's advance widths: textWidth).
    const lines = wrapText('window 0 \u00b7 09:01:30\u201309:09:30', 70, 11, true);
    expect(lines).toEqual(['window 0 \u00b7', '09:01:30\u2013', '09:09:30']);
    for (const l of lines) expect(textWidth(l, 11, true)).toBeLessThanOrEqual(70);
    // A negative number joined to its unit by no-break spaces is not cut after its sign.
    expect(wrapText('-1234.5\u00a0m', 10, 11)).toEqual(['-1234.5\u00a0m']);
  });
});

describe('numbers rounded to their uncertainty', () => {
  it('quotes the uncertainty to two significant digits and the value to the same place', () => {
    // GUM (JCGM 100:2008) 7.2.2 example, from memory: m_s = 100.021 47 g with u_c = 0.35 mg.
    expect(roundToUncertainty(100.02147, 0.00035)).toEqual({ value: '100.02147', uncertainty: '0.00035', decimals: 5 });
    // Rounding up across a decade keeps two digits: 0.0996 -> 0.10 (two decimals), 9.96 -> 10 (no decimal).
    expect(decimalsForUncertainty(0.0996)).toBe(2);
    expect(roundToUncertainty(3.14159, 0.0996).value).toBe('3.14');
    expect(roundToUncertainty(1234.5, 9.96)).toEqual({ value: '1235', uncertainty: '10', decimals: 0 });
    // Large uncertainties round to tens.
    expect(roundToUncertainty(12345, 123)).toEqual({ value: '12350', uncertainty: '120', decimals: -1 });
    expect(withUncertainty(-0.0421, 0.0038, 'm')).toBe('\u22120.0421\u00a0\u00b1\u00a00.0038\u00a0m');
    // Without a usable uncertainty: three significant digits.
    expect(roundToUncertainty(0.123456, NaN).value).toBe('0.123');
  });
});

describe('window selection', () => {
  it('reads none, all, every:N and lists, and rejects anything else naming the option', () => {
    expect(parseWindowImages('none')).toBe('none');
    expect(parseWindowImages('ALL')).toBe('all');
    expect(parseWindowImages('every:3')).toEqual({ every: 3 });
    expect(parseWindowImages('0, 4,7,4')).toEqual([0, 4, 7]);
    expect(() => parseWindowImages('every:0')).toThrow(/--window-images/);
    expect(() => parseWindowImages('1-3')).toThrow(/none, all, every:N/);
    expect([0, 1, 2, 3, 4, 5, 6].filter((w) => windowSelected({ every: 3 }, w))).toEqual([0, 3, 6]);
    expect(windowSelected([2, 5], 5)).toBe(true);
    expect(windowSelected('none', 0)).toBe(false);
    // Condition bins after "bins:", the option given twice for both.
    expect(parseImageSelection(['0,3', 'bins:all'])).toEqual({ windowImages: [0, 3], binImages: 'all' });
    expect(parseImageSelection('bins:every:2')).toEqual({ binImages: { every: 2 } });
  });
});

describe('condition bins (ensembles)', () => {
  it('get a multi-panel figure of their own, labelled by bin, apart from the windows', () => {
    const col = new FigureCollector(24);
    for (const f of cross) col.add(f, wakes.get(f));
    const bins = [0, 1].map((b) => {
      const f = fixtureField(P5D, b);
      f.window = { ...f.window, index: b, kind: 'ensemble', label: `yaw_offset_deg in [${10 * b - 5}, ${10 * b + 5})`, members: [[0, 600], [600, 1200], [1200, 1800]] };
      return f;
    });
    for (const f of bins) col.add(f);
    expect(col.panels('P5D').total).toBe(3);
    expect(col.panels('P5D', true).total).toBe(2);
    const svg = planePanelsSvg(P5D, col.panels('P5D', true).shown, 2, col.runScales(FIGURES_DEFAULT, campaign.planes), campaign);
    const words = svgTexts(svg).map((t) => t.text).join(' ');
    expect(words).toContain('P5D: streamwise speed u in 2 condition bins'); // no wake rows given: u in m/s
    expect(words).toContain('condition bin 1 · yaw offset 5° to 15°');
    expect(words).toContain('3\u00a0windows');
    expect(overlaps(svgTexts(svg))).toEqual([]);
  });
});

describe('multi-panel figures of long campaigns', () => {
  it('keep at most maxPanels evenly spaced panels per plane and say which windows they show', () => {
    const col = new FigureCollector(4);
    const fields = Array.from({ length: 37 }, (_, k) => fixtureField(P5D, k));
    for (const f of fields) col.add(f);
    const { shown, total } = col.panels('P5D');
    expect(total).toBe(37);
    expect(shown.length).toBe(4);
    const idx = shown.map((p) => p.index);
    expect(idx[0]).toBe(0);
    // Evenly spaced over the run: gaps between shown windows differ by at most the kept stride (8 here: the stride
    // doubles from 1 while more than 2 x 4 panels are kept, reaching 8 for 37 windows).
    const gaps = idx.slice(1).map((v, i) => v - idx[i]);
    expect(Math.max(...gaps) - Math.min(...gaps)).toBeLessThanOrEqual(8);
    expect(idx.at(-1)).toBeGreaterThanOrEqual(24);
    const svg = planePanelsSvg(P5D, shown, total, col.runScales(FIGURES_DEFAULT, campaign.planes), campaign);
    expect(svgTexts(svg).map((t) => t.text).join(' ')).toContain(`4 of 37 windows shown, evenly spaced: windows ${idx.join(', ')}`);
    expect((svg.match(/<g class="panel"/g) ?? []).length).toBe(4);
  });
});

describe('line plots: intervals that are not symmetric about the value', () => {
  it('draws a bar from the interval\'s lower to its upper end (bootstrap percentile intervals), not +/- half its width', () => {
    // Plot area 470 x 300 from y = 50 (no subtitle); y axis fixed to [0, 10], so a value v sits at 350 - 30 v.
    const svg = linePlotSvg({
      title: 't', xLabel: 'x', yLabel: 'y', yDomain: [0, 10], xDomain: [0, 2],
      series: [{ label: 's', kind: 'points', x: [1], y: [2], yInterval: [[1], [7]] }],
      xDivider: { at: 1.5, label: 'combined' },
    });
    const bar = /<path class="errorbar" d="M([\d.]+),([\d.]+)L([\d.]+),([\d.]+)/.exec(svg)!;
    // Exact to the SVG's rounding (0.01 user units): ends at v = 1 and v = 7, i.e. y = 320 and 140; a symmetric bar
    // about 2 of half-width 3 would end at -1 and 5 (y = 380 and 200).
    expect(Number(bar[2])).toBeCloseTo(320, 1);
    expect(Number(bar[4])).toBeCloseTo(140, 1);
    expect(svg).toMatch(/<line class="divider" x1="([\d.]+)"/);
    expect(Number(/<line class="divider" x1="([\d.]+)"/.exec(svg)![1])).toBeCloseTo(72 + 470 * 0.75, 1); // x = 1.5 of [0, 2]
    expect(svg).toContain('>combined<');
  });
});
