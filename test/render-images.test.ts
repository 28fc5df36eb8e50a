import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, describe, expect, it } from 'vitest';
import { MaskReason, maskReasonName } from '../src/retrieval/types.ts';
import { renderGeometryMaps, renderPlaneImages, renderSummaryPlots } from '../src/render/planeImages.ts';
import { scalarMapSvg } from '../src/render/scalarMap.ts';
import { writeSvgAndPng } from '../src/render/write.ts';
import { fixtureAnalysis, fixtureCampaign, fixtureField, fixtureWake } from './render-fixture.ts';

/** Screen density for figures whose pixel size is not under test (keeps the suite fast). */
const LOW = { density: 96 };
const dir = mkdtempSync(join(tmpdir(), 'wakeplane-render-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Grid 40 x 32 cells of 7.5 m x 5 m, centres y = -146.25 + 7.5 i, z = 12.5 + 5 j (a cross plane y -150..150, z 10..170). */
const G = { ny: 40, nz: 32, y0: -146.25, z0: 12.5, dy: 7.5, dz: 5 };
const N = G.ny * G.nz;
const yOf = (i: number) => G.y0 + (i % G.ny) * G.dy;
const zOf = (i: number) => G.z0 + Math.floor(i / G.ny) * G.dz;

function attrs(tag: string): Record<string, number> {
  const out: Record<string, number> = {};
  for (const m of tag.matchAll(/([a-z0-9-]+)="([-0-9.]+)"/g)) out[m[1]] = Number(m[2]);
  return out;
}

/** Width and height of the figure in inches from the root element. */
function inches(svg: string): [number, number] {
  const m = /<svg[^>]*width="([0-9.]+)in" height="([0-9.]+)in"/.exec(svg);
  if (!m) throw new Error('no size in inches');
  return [Number(m[1]), Number(m[2])];
}

async function distinctColours(png: string): Promise<number> {
  const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  const seen = new Set<number>();
  for (let i = 0; i < info.width * info.height * 3; i += 3) seen.add((data[i] << 16) | (data[i + 1] << 8) | data[i + 2]);
  return seen.size;
}

describe('scalar map: pixels', () => {
  it('renders at 300 dots per inch of the declared size and is not blank', async () => {
    const values = new Float64Array(N);
    for (let i = 0; i < N; i++) values[i] = 1 - 0.4 * Math.exp(-(yOf(i) ** 2) / (2 * 35 ** 2) - ((zOf(i) - 90) ** 2) / (2 * 28 ** 2));
    const svg = scalarMapSvg({ ...G, values }, { title: 'test map', colorbarLabel: 'u / u_inf (\u2013)', axes: { yLabel: 'y (m)', zLabel: 'z (m)', diameter_m: 120 } });
    const [png] = (await writeSvgAndPng(svg, join(dir, 'map'))).filter((p) => p.endsWith('.png'));
    const meta = await sharp(png).metadata();
    const [wIn, hIn] = inches(svg);
    // Pixel size = inches x 300, within 1 pixel of rounding.
    expect(Math.abs(meta.width! - wIn * 300)).toBeLessThanOrEqual(1);
    expect(Math.abs(meta.height! - hIn * 300)).toBeLessThanOrEqual(1);
    const stats = await sharp(png).stats();
    // Not blank: a flat image has standard deviation 0; text, axes and ten colour bands give far more than 10 levels.
    expect(Math.max(...stats.channels.slice(0, 3).map((c) => c.stdev))).toBeGreaterThan(10);
    // At least the ten band colours plus paper and ink (anti-aliasing adds many more).
    expect(await distinctColours(png)).toBeGreaterThan(12);
  });

  it('escapes markup in titles (librsvg would refuse an unescaped "<")', async () => {
    const svg = scalarMapSvg({ ...G, values: new Float64Array(N).fill(1) }, { title: 'a <b> & "c"', colorbarLabel: 'x', axes: { yLabel: 'y', zLabel: 'z' } });
    expect(svg).toContain('a &lt;b&gt; &amp; &quot;c&quot;');
    expect(svg).not.toContain('<b>');
    const meta = await sharp(Buffer.from(svg), { density: 72 }).metadata();
    expect(meta.width).toBeGreaterThan(0);
  });
});

describe('scalar map: geometry in the SVG', () => {
  it('draws solid-body swirl arrows tangent to circles about the hub, turning the right way, scaled to the reference', () => {
    // Swirl about the cell centre (3.75, 92.5): v = -omega (z - zh), w = omega (y - yh), omega = 0.02 rad/s.
    // With +y to the LEFT of the page and +z up, a positive omega turns from +y (left) to +z (up): clockwise on the
    // page. In SVG pixels (X right, Y down) for tail offset r = tail - hub and arrow d, r_X d_Y - r_Y d_X > 0.
    // Check: left of the hub r = (-1, 0), velocity up d = (0, -1): (-1)(-1) - 0 = 1 > 0.
    const yh = 3.75, zh = 92.5, omega = 0.02, R = 60;
    const v = new Float64Array(N), w = new Float64Array(N), values = new Float64Array(N).fill(1);
    for (let i = 0; i < N; i++) {
      v[i] = -omega * (zOf(i) - zh);
      w[i] = omega * (yOf(i) - yh);
    }
    const svg = scalarMapSvg({ ...G, values }, {
      title: 'swirl', colorbarLabel: 'x', axes: { yLabel: 'y', zLabel: 'z' },
      rotor: { y: yh, z: zh, radius: R }, arrows: { v, w, every: 2, referenceSpeed: 1 },
    });
    const hub = attrs(/<circle class="hub"[^>]*>/.exec(svg)![0]);
    const rotorR = attrs(/<g class="rotor"[^>]*><circle [^>]*>/.exec(svg)![0]).r;
    const pxPerM = rotorR / R;
    const ref = attrs(/<line class="arrow-ref"[^>]*>/.exec(svg)![0]);
    const refLen = Math.hypot(ref.x2 - ref.x1, ref.y2 - ref.y1); // pixels for 1 m/s
    const lines = [...svg.matchAll(/<line class="arrow( capped)?" [^>]*>/g)].map((m) => Object.assign(attrs(m[0]), { capped: m[1] ? 1 : 0 }));
    expect(lines.length).toBeGreaterThan(100); // every 2nd cell of 40 x 32: 20 x 16 = 320 arrows, minus the hub's zero arrow
    let checked = 0, capped = 0, moved = 0;
    const clip = attrs(/<clipPath id="[^"]+"><rect [^>]*>/.exec(svg)![0].replace(/^<clipPath[^>]*>/, ''));
    const atFrame = (a: Record<string, number>) =>
      [a.x1, a.x2].some((x) => Math.abs(x - clip.x) < 0.02 || Math.abs(x - clip.x - clip.width) < 0.02) ||
      [a.y1, a.y2].some((y) => Math.abs(y - clip.y) < 0.02 || Math.abs(y - clip.y - clip.height) < 0.02);
    for (const a of lines) {
      // An arrow that would cross the frame is moved inward along it (mapLayers.ts arrowLayer): not about its cell.
      if (atFrame(a)) { moved++; continue; }
      // Arrows are centred on their cells: the offset from the hub is that of the arrow's middle.
      const rX = (a.x1 + a.x2) / 2 - hub.cx, rY = (a.y1 + a.y2) / 2 - hub.cy;
      const dX = a.x2 - a.x1, dY = a.y2 - a.y1;
      const r = Math.hypot(rX, rY), d = Math.hypot(dX, dY);
      if (r < 1) continue;
      // Coordinates are written to 0.01 units, so each arrow direction is good to about 0.02 / d radians.
      expect(Math.abs(rX * dX + rY * dY) / (r * d)).toBeLessThan(0.02 / d + 0.02 / r + 1e-3);
      expect(rX * dY - rY * dX).toBeGreaterThan(0);
      // Length: speed omega * r_m, drawn at refLen pixels per m/s, cut at twice the reference speed (2 m/s here)
      // and then marked as capped; tolerance from the 0.01-unit rounding of the coordinates.
      const speed = omega * (r / pxPerM);
      const expected = Math.min(speed, 2) * refLen;
      expect(Math.abs(d - expected)).toBeLessThan(0.03 + 1e-3 * expected);
      // (Speeds within 0.5 % of the cap are not judged: the radius is read back from rounded coordinates.)
      if (Math.abs(speed - 2) > 0.01) expect(a.capped).toBe(speed > 2 ? 1 : 0);
      if (a.capped) capped++;
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
    expect(moved).toBeLessThan(0.2 * lines.length); // only arrows of the outer cells, pointing out of the map
    expect(capped).toBeGreaterThan(10); // corners are 0.02 x ~190 m = 3.8 m/s from the hub: beyond the 2 m/s cap
    // Directly above the hub (same column): z > zh, so v = -omega (z - zh) < 0 points to -y, i.e. to the RIGHT.
    const above = lines.filter((a) => Math.abs((a.x1 + a.x2) / 2 - hub.cx) < 0.01 && a.y1 < hub.cy - 1);
    expect(above.length).toBeGreaterThan(3);
    for (const a of above) {
      expect(a.x2 - a.x1).toBeGreaterThan(0);
      expect(Math.abs(a.y2 - a.y1)).toBeLessThan(0.02); // no vertical component, up to rounding
    }
  });

  it('places +y to the left of the hub and +z above it', () => {
    const svg = scalarMapSvg({ ...G, values: new Float64Array(N).fill(1) }, {
      title: 'orientation', colorbarLabel: 'x', axes: { yLabel: 'y', zLabel: 'z' }, rotor: { y: 0, z: 90, radius: 60 },
      markers: [{ y: 50, z: 90, label: 'left', shape: 'circle' }, { y: 0, z: 140, label: 'up', shape: 'circle' }],
    });
    const hub = attrs(/<circle class="hub"[^>]*>/.exec(svg)![0]);
    const [left, up] = [...svg.matchAll(/<g class="marker marker-circle"[^>]*><circle [^>]*>/g)].map((m) => attrs(m[0].slice(m[0].indexOf('<circle'))));
    expect(left.cx).toBeLessThan(hub.cx - 10); // 50 m at about 1.7 units per metre
    expect(Math.abs(left.cy - hub.cy)).toBeLessThan(0.02);
    expect(up.cy).toBeLessThan(hub.cy - 10);
    expect(Math.abs(up.cx - hub.cx)).toBeLessThan(0.02);
  });

  it('hatches masked cells and names each reason with its cell count', () => {
    const values = new Float64Array(N).fill(1);
    const codes = new Uint8Array(N);
    let amp = 0, none = 0;
    for (let i = 0; i < N; i++) {
      if (zOf(i) < 20) (codes[i] = MaskReason.noData), (values[i] = NaN), none++;
      else if (yOf(i) > 120 && zOf(i) > 150) (codes[i] = MaskReason.amplification), (values[i] = NaN), amp++;
    }
    const svg = scalarMapSvg({ ...G, values }, { title: 'mask', colorbarLabel: 'x', axes: { yLabel: 'y', zLabel: 'z' }, mask: { codes, names: maskReasonName } });
    expect(none).toBe(80); // two rows of 40 (z = 12.5, 17.5)
    expect(amp).toBe(16); // y = 123.75 .. 146.25 (4 columns) x z = 152.5 .. 167.5 (4 rows)
    // The legend's text (wrapped lines joined back with spaces).
    const legend = /<g class="legend">(.*?)<\/g>/s.exec(svg)![1];
    const words = [...legend.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]).join(' ');
    // (A no-break space keeps each count with its unit.)
    expect(words).toContain(`no data (${none}\u00a0cells)`);
    expect(words).toContain(`amplification above threshold (${amp}\u00a0cells)`);
    // Every masked cell is covered by a hatched run "M xL,yT H xR V yB H xL Z" (0.25 units of overlap right and
    // below): each run's width over its height, times dz/dy, is its number of cells.
    const runs = (code: number) => {
      const d = new RegExp(`<path class="masked m${code}" d="([^"]+)"`).exec(svg)![1];
      let cells = 0;
      for (const m of d.matchAll(/M([-0-9.]+),([-0-9.]+)H([-0-9.]+)V([-0-9.]+)H[-0-9.]+Z/g)) {
        const [xL, yT, xR, yB] = m.slice(1).map(Number);
        cells += Math.round(((xR - 0.25 - xL) / (yB - 0.25 - yT)) * (G.dz / G.dy));
      }
      return cells;
    };
    expect(runs(MaskReason.noData)).toBe(none);
    expect(runs(MaskReason.amplification)).toBe(amp);
  });
});

describe('plane images, geometry maps and summary plots from synthetic results', () => {
  const c = fixtureCampaign();
  const f = fixtureField(c.planes[0], 3);
  const wake = fixtureWake(f);

  it('writes the named SVG/PNG pairs under images/ with relative paths', async () => {
    const recs = [...(await renderPlaneImages(f, wake, c, dir, LOW)), ...(await renderGeometryMaps(f, c, dir, LOW))];
    const names = recs.map((r) => r.path).sort();
    for (const what of ['u_norm', 'su', 'inflow', 'dopU', 'dopV', 'dopW', 'samples']) {
      expect(names).toContain(`images/P5D_w3_${what}.svg`);
      expect(names).toContain(`images/P5D_w3_${what}.png`);
    }
    for (const r of recs) {
      expect(r.kind).toBe('image');
      expect(r.plane).toBe('P5D');
      expect(r.window).toBe(3);
      expect(existsSync(join(dir, r.path))).toBe(true);
    }
  });

  it('draws the wake centre, the width ellipse with sigma_y, sigma_z and the second estimator', async () => {
    const recs = await renderPlaneImages(f, wake, c, dir, LOW);
    const svgPath = join(dir, recs.find((r) => r.path.endsWith('u_norm.svg'))!.path);
    const { readFileSync } = await import('node:fs');
    const svg = readFileSync(svgPath, 'utf8');
    expect(svg).toContain('class="marker marker-cross" data-y="15" data-z="95"');
    expect(svg).toContain('class="marker marker-diamond" data-y="9" data-z="92"');
    const rotorR = attrs(/<g class="rotor"[^>]*><circle [^>]*>/.exec(svg)![0]).r; // 60 m
    const e = attrs(/<g class="ellipse"[^>]*><ellipse [^>]*>/.exec(svg)![0]);
    // Semi-axes in the rotor's scale: 35 m and 28 m against the 60 m radius, to the 0.01-unit rounding.
    expect(e.rx / rotorR).toBeCloseTo(35 / 60, 3);
    expect(e.ry / rotorR).toBeCloseTo(28 / 60, 3);
    // u/u_inf with a real subscript infinity (a tspan), and the inflow speed kept with its unit.
    expect(svg).toMatch(/u\/u<tspan dy="[0-9.]+" font-size="[0-9.]+">∞<\/tspan>/);
    expect(svg).toContain('inflow 8.0\u00a0m/s at hub height');
  });

  it('writes the summary plots', async () => {
    const recs = await renderSummaryPlots(fixtureAnalysis([wake]), c, dir, LOW);
    const names = recs.map((r) => r.path);
    for (const what of ['deficit', 'width', 'centre', 'steering', 'inflow']) expect(names).toContain(`images/summary_${what}.png`);
    const png = join(dir, 'images/summary_steering.png');
    expect(await distinctColours(png)).toBeGreaterThan(12); // not blank: paper, ink, series colours and anti-aliasing
  });
});

describe('renderRun', () => {
  it('draws the summary plots and one multi-panel figure per plane, and single windows only on request', async () => {
    const { renderRun } = await import('../src/render/renderRun.ts');
    const c = fixtureCampaign();
    const f0 = fixtureField(c.planes[0], 0), f1 = fixtureField(c.planes[0], 1);
    const runDir = join(dir, 'run');
    const calls: number[] = [];
    // Default: no single-window images.
    const plain = await renderRun([f1, f0], fixtureAnalysis([fixtureWake(f1)]), c, join(dir, 'run-default'), { density: 96, onFigure: (w) => calls.push(w) });
    const plainNames = new Set(plain.map((r) => r.path));
    expect(plainNames.has('images/summary_deficit.png')).toBe(true);
    expect(plainNames.has('images/P5D_panels.png')).toBe(true);
    expect([...plainNames].some((p) => /_w\d+_/.test(p))).toBe(false);
    expect(calls.at(-1)).toBe(plain.length / 2); // one call per figure (SVG and PNG each)
    // Every window: only window 1 has a wake row, so its image is normalised (u_norm) and window 0 shows u in m/s.
    const recs = await renderRun([f1, f0], fixtureAnalysis([fixtureWake(f1)]), c, runDir, { windowImages: 'all', density: 96 });
    const names = new Set(recs.map((r) => r.path));
    expect(names.has('images/P5D_w1_u_norm.png')).toBe(true);
    expect(names.has('images/P5D_w0_u.png')).toBe(true);
    expect(names.has('images/P5D_w0_dopU.png')).toBe(true);
    expect(names.has('images/P5D_w1_dopU.png')).toBe(true);
    expect(names.has('images/P5D_panels.png')).toBe(true);
    // A list selects those windows only.
    const one = await renderRun([f1, f0], undefined, c, join(dir, 'run-one'), { windowImages: [0], density: 96 });
    expect(one.some((r) => r.path === 'images/P5D_w0_u.png')).toBe(true);
    expect(one.some((r) => r.path.startsWith('images/P5D_w1_'))).toBe(false);
  });
});

describe('scalar map: degenerate fields', () => {
  it('an all-empty field draws the hatched mask, an empty colour bar saying so, and no arrow legend', async () => {
    const values = new Float64Array(N).fill(NaN);
    const codes = new Uint8Array(N).fill(MaskReason.tooFewInstruments);
    const nan = new Float64Array(N).fill(NaN);
    const svg = scalarMapSvg({ ...G, values }, { title: 'empty', colorbarLabel: 'u (m/s)', axes: { yLabel: 'y', zLabel: 'z' }, mask: { codes, names: maskReasonName }, arrows: { v: nan, w: nan } });
    expect(svg).toContain('>no values<');
    expect(svg).not.toContain('arrow-ref');
    expect(svg).not.toContain('class="band"');
    const words = [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]).join(' ');
    expect(words).toContain(`too few instruments (${N}\u00a0cells)`);
    const meta = await sharp(Buffer.from(svg), { density: 72 }).metadata();
    expect(meta.width).toBeGreaterThan(0); // renders
  });

  it('a constant field gets a non-empty colour range around its value', () => {
    const svg = scalarMapSvg({ ...G, values: new Float64Array(N).fill(2) }, { title: 'flat', colorbarLabel: 'x', axes: { yLabel: 'y', zLabel: 'z' } });
    // 2 opened by 5 % each side -> [1.9, 2.1]; colour-bar ticks: span 0.2 / 6 = 0.033 -> step 0.02 (1-2-5 rule),
    // so the labels run 1.90, 1.92, ..., 2.10.
    const cb = /<g class="colorbar">(.*?)<\/g>/s.exec(svg)![1];
    const labels = [...cb.matchAll(/<text[^>]*>([0-9.]+)<\/text>/g)].map((m) => m[1]);
    expect(labels[0]).toBe('1.90');
    expect(labels.at(-1)).toBe('2.10');
    expect(labels).toContain('2.00');
    expect(labels.length).toBe(11);
  });
});
