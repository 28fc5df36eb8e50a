/**
 * The report opened in a real headless browser (Debian's chromium through playwright-core): no console errors, no
 * script run from campaign text, every image loaded; then the report of a whole run: tables with all their rows
 * inside frames that scroll (none cut by the page), figures at the page's width with readable ticks, no absolute
 * path, the manifest's times and memory, the planner's maps in its section; and the figures' text measured by the
 * browser itself: no two labels overlap. Screenshots go to output/report-screenshot*.png. Skipped, with a message,
 * only when /usr/bin/chromium is absent.
 */
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { homedir, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { loadCampaignFile } from '../src/campaign/load.ts';
import type { OutputRecord, RunManifest } from '../src/pipeline/manifest.ts';
import { runCampaign } from '../src/pipeline/run.ts';
import { defaultStages } from '../src/pipeline/stages.ts';
import { mibText, secondsText } from '../src/render/report.ts';
import { simulateCampaign } from '../src/sim/simulate.ts';
import { svgTexts } from './helpers/svgText.ts';
import { writeTinyCampaign } from './helpers/tinyCampaign.ts';
import { renderGeometryMaps, renderPlaneImages, renderSummaryPlots } from '../src/render/planeImages.ts';
import { writeReport } from '../src/render/report.ts';
import { wakeReportTables } from '../src/render/reportTables.ts';
import { fixtureAnalysis, fixtureCampaign, fixtureField, fixtureManifest, fixtureWake } from './render-fixture.ts';

const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);
if (!haveChromium) console.warn(`report-browser: skipped, ${CHROMIUM} is not installed (apt-get install chromium)`);

/** Screen density: the browser shows the SVGs; the PNGs are only linked (keeps the test fast). */
const LOW = { density: 96 };
const runDir = mkdtempSync(join(tmpdir(), 'wakeplane-report-'));
afterAll(() => rmSync(runDir, { recursive: true, force: true }));
const LAUNCH = {
  executablePath: CHROMIUM,
  headless: true,
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  viewport: { width: 1200, height: 900 },
};

describe.skipIf(!haveChromium)('report in headless chromium', () => {
  it('opens from file:// with no console errors, no dialogs, and every image loaded', async () => {
    const campaign = fixtureCampaign();
    const cross = fixtureField(campaign.planes[0], 0);
    const horiz = fixtureField(campaign.planes[1], 0);
    const wakes = [fixtureWake(cross), fixtureWake(horiz)];
    const outputs: OutputRecord[] = [
      ...(await renderSummaryPlots(fixtureAnalysis(wakes), campaign, runDir, LOW)),
      ...(await renderPlaneImages(cross, wakes[0], campaign, runDir, LOW)),
      ...(await renderGeometryMaps(cross, campaign, runDir, LOW)),
      ...(await renderPlaneImages(horiz, wakes[1], campaign, runDir, LOW)),
      { kind: 'field-table', path: 'tables/P5D.csv', plane: 'P5D', description: 'retrieved field' },
    ];
    mkdirSync(join(runDir, 'tables'), { recursive: true });
    writeFileSync(join(runDir, 'tables/P5D.csv'), 'y_m,z_m,u_ms\n');
    const manifest = fixtureManifest(campaign, outputs);
    const rec = await writeReport(manifest, runDir, { wakeTables: wakeReportTables(fixtureAnalysis(wakes)) });
    expect(rec.path).toBe('report.html');

    const { chromium } = await import('playwright-core');
    const userDataDir = mkdtempSync(join(tmpdir(), 'wakeplane-chromium-'));
    const context = await chromium.launchPersistentContext(userDataDir, LAUNCH);
    try {
      const page = await context.newPage();
      const errors: string[] = [];
      const dialogs: string[] = [];
      page.on('console', (m) => {
        if (m.type() === 'error') errors.push(m.text());
      });
      page.on('pageerror', (e) => errors.push(String(e)));
      page.on('dialog', async (d) => {
        dialogs.push(d.message());
        await d.dismiss();
      });
      await page.goto(pathToFileURL(join(runDir, 'report.html')).href, { waitUntil: 'load' });
      // (The project compiles without the DOM library, so the image element is typed structurally.)
      type Img = { getAttribute(name: string): string | null; naturalWidth: number; complete: boolean };
      const imgs = await page.$$eval('img', (els) => els.map((e) => {
        const im = e as unknown as Img;
        return { src: im.getAttribute('src'), w: im.naturalWidth, done: im.complete };
      }));
      // One <img> per figure: 5 summary plots (deficit, width, centre, steering, inflow) + (u_norm, su, inflow, 3 amplification maps, samples) + (u_norm, su, inflow).
      expect(imgs.length).toBe(5 + 7 + 3);
      for (const im of imgs) {
        expect(im.done, im.src ?? '').toBe(true);
        expect(im.w, im.src ?? '').toBeGreaterThan(0);
      }
      expect(errors).toEqual([]);
      // Every link in the page leads to an anchor in it or to a file in the run folder.
      const hrefs = await page.$$eval('a', (els) => els.map((e) => (e as unknown as { getAttribute(n: string): string | null }).getAttribute('href') ?? ''));
      expect(hrefs.length).toBeGreaterThan(20);
      for (const h of hrefs) {
        if (h.startsWith('#')) expect(await page.$(h), h).not.toBeNull();
        else expect(existsSync(join(runDir, decodeURIComponent(h))), h).toBe(true);
      }
      expect(dialogs).toEqual([]); // the campaign description carries <script>alert(...)</script>: it must not run
      const heading = await page.textContent('h1');
      expect(heading).toBe('testfield-alpha');
      const lead = await page.textContent('p.lead');
      expect(lead).toContain('<script>alert("x")</script>'); // shown as text, exactly as written
      const outDir = resolve(__dirname, '..', 'output');
      mkdirSync(outDir, { recursive: true });
      await page.screenshot({ path: join(outDir, 'report-screenshot.png'), fullPage: false });
      await page.screenshot({ path: join(outDir, 'report-screenshot-full.png'), fullPage: true });
    } finally {
      await context.close();
      rmSync(userDataDir, { recursive: true, force: true });
    }
  });

  it('a whole run: tables whole in scrolling frames, figures at full width, no absolute path, the manifest\'s times', async () => {
    const { dir, file } = writeTinyCampaign({
      name: 'browser-run',
      planes: [
        { id: 'p5', x_D: 5, y: { min: -180, max: 180 }, z: { min: 10, max: 190 }, cell_m: [30, 30], thickness_m: 24 },
        { id: 'h100', orientation: 'horizontal', z_m: 100, y: { min: -180, max: 180 }, xRange: { min: 300, max: 900 }, cell_m: [30, 60], thickness_m: 24 },
      ],
      output: { figures: { density: 72, windowImages: [1] } },
      plan: { directions_deg: [270] },
    });
    await simulateCampaign(loadCampaignFile(file));
    const res = await runCampaign(loadCampaignFile(file), { outRoot: join(dir, 'out'), images: true, stages: defaultStages({ plan: true }) });
    const run = res.runDir;
    const m = JSON.parse(readFileSync(join(run, 'manifest.json'), 'utf8')) as RunManifest;
    const { chromium } = await import('playwright-core');
    const userDataDir = mkdtempSync(join(tmpdir(), 'wakeplane-chromium-'));
    const context = await chromium.launchPersistentContext(userDataDir, LAUNCH);
    try {
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      page.on('console', (msg) => { if (msg.type() === 'error') errors.push(msg.text()); });
      await page.goto(pathToFileURL(join(run, 'report.html')).href, { waitUntil: 'load' });
      expect(errors).toEqual([]);
      type El = { scrollWidth: number; clientWidth: number; scrollHeight: number; clientHeight: number; getBoundingClientRect(): { left: number; right: number; width: number; top: number; bottom: number }; getAttribute(n: string): string | null; querySelectorAll(s: string): { length: number }; parentElement: El | null; naturalWidth: number; textContent: string | null };
      type Win = { getComputedStyle(e: El): { overflowX: string; overflowY: string }; document: { body: El; scrollingElement: El } };
      // Tables: every one sits in a frame that scrolls both ways, holds all its rows and stays inside the page.
      const tables = await page.$$eval('table', (els) => els.map((e) => {
        const t = e as unknown as El;
        const w = globalThis as unknown as Win;
        const frame = t.parentElement!;
        const st = w.getComputedStyle(frame);
        const body = w.document.body.getBoundingClientRect();
        return {
          cls: frame.getAttribute('class'), overflowX: st.overflowX, overflowY: st.overflowY, rows: t.querySelectorAll('tbody tr').length,
          expected: frame.getAttribute('data-rows'), frameRight: frame.getBoundingClientRect().right, bodyRight: body.right,
          reachable: frame.scrollWidth >= t.getBoundingClientRect().width - 1,
        };
      }));
      expect(tables.length).toBeGreaterThan(6);
      for (const t of tables) {
        expect(t.cls).toBe('scroll');
        expect(t.overflowX).toBe('auto');
        expect(t.overflowY).toBe('auto');
        expect(t.reachable).toBe(true);
        expect(t.frameRight).toBeLessThanOrEqual(t.bodyRight + 0.5);
        if (t.expected !== null) expect(t.rows).toBe(Number(t.expected));
      }
      // The windows table has one row per window; the per-plane-and-window table one per plane and window.
      const wakeRows = readFileSync(join(run, 'wake', 'wake_table.csv'), 'utf8').trim().split('\n').length - 1;
      expect(tables.some((t) => t.rows === wakeRows && t.expected === String(wakeRows))).toBe(true);
      // No horizontal scrolling of the page itself: nothing sticks out of it.
      const page2 = await page.evaluate(() => { const d = (globalThis as unknown as Win).document.scrollingElement; return { sw: d.scrollWidth, cw: d.clientWidth }; });
      expect(page2.sw).toBeLessThanOrEqual(page2.cw);
      // Figures: at the width of the text column, ticks at least 9 CSS pixels high, every image loaded.
      const figs = await page.$$eval('figure img', (els) => els.map((e) => {
        const im = e as unknown as El;
        const fig = im.parentElement!;
        return { src: im.getAttribute('src')!, width: im.getBoundingClientRect().width, column: fig.parentElement!.getBoundingClientRect().width, loaded: im.naturalWidth > 0 };
      }));
      expect(figs.length).toBeGreaterThan(10);
      for (const f of figs) {
        expect(f.loaded, f.src).toBe(true);
        expect(f.width / f.column, f.src).toBeGreaterThan(0.95);
        if (f.src.endsWith('.svg')) {
          const svg = readFileSync(join(run, decodeURIComponent(f.src)), 'utf8');
          const vbw = Number(/viewBox="0 0 ([0-9.]+)/.exec(svg)![1]);
          const tick = Math.min(...svgTexts(svg).filter((t) => t.cls === 'tick').map((t) => t.size));
          // A tick label's height on screen: its font size times the shown width over the figure's width.
          expect(tick * (f.width / vbw), f.src).toBeGreaterThanOrEqual(9);
        }
      }
      // The planner's maps are in the planner section.
      const planImgs = await page.$$eval('#plan img', (els) => els.map((e) => (e as unknown as El).getAttribute('src')));
      expect(planImgs.length).toBe(6);
      for (const p of planImgs) expect(p).toMatch(/^plan\//);
      // No absolute path of this machine anywhere in the page (text or links).
      const html = readFileSync(join(run, 'report.html'), 'utf8');
      for (const p of [dir, run, tmpdir(), homedir(), process.cwd()]) expect(html.includes(p), p).toBe(false);
      expect(html).not.toMatch(/file:\/\//);
      // The times and memory the report shows are the manifest's.
      const stages = await page.$$eval('#settings table tbody tr', (rows) => rows.map((r) => (r as unknown as El).textContent));
      expect(stages).toEqual(Object.entries(m.timings_s).map(([k, v]) => `${k}${secondsText(v)}`));
      const facts = (await page.textContent('#summary'))!;
      expect(facts).toContain(`${mibText(m.peakRss_bytes)} MiB`);
      expect(facts).toContain(`${secondsText(m.timings_s.total)} s`);
      const outDir = resolve(__dirname, '..', 'output');
      mkdirSync(outDir, { recursive: true });
      await page.screenshot({ path: join(outDir, 'report-screenshot-run.png'), fullPage: false });

      // Every figure's labels measured by the browser, all figures inlined in one page (one load): no two text boxes
      // overlap (0.5-unit tolerance), and our width estimates agree with the browser's.
      const svgs = [...readdirSync(join(run, 'images')).map((n) => join(run, 'images', n)), ...readdirSync(join(run, 'plan')).map((n) => join(run, 'plan', n))].filter((p) => p.endsWith('.svg'));
      expect(svgs.length).toBeGreaterThan(15);
      const texts = svgs.map((p) => readFileSync(p, 'utf8'));
      const page3 = join(dir, 'figures.html');
      writeFileSync(page3, `<!DOCTYPE html><html><body>${texts.map((t, k) => `<div data-k="${k}">${t.replace(/^<\?xml[^>]*>\s*/, '')}</div>`).join('')}</body></html>`);
      await page.goto(pathToFileURL(page3).href, { waitUntil: 'load' });
      type Txt = El & { getComputedTextLength(): number; ownerSVGElement: El };
      const measured = await page.$$eval('div[data-k]', (divs) => divs.map((d) => {
        const svg = (d as unknown as { querySelector(s: string): El }).querySelector('svg');
        const r0 = svg.getBoundingClientRect();
        const scale = r0.width / Number(svg.getAttribute('viewBox')!.split(' ')[2]);
        const els = (d as unknown as { querySelectorAll(s: string): Iterable<unknown> }).querySelectorAll('text');
        return [...els].map((e) => {
          const t = e as unknown as Txt;
          const r = t.getBoundingClientRect();
          // In figure units, relative to the SVG's corner.
          return { t: t.textContent ?? '', l: (r.left - r0.left) / scale, r: (r.right - r0.left) / scale, top: (r.top - r0.top) / scale, b: (r.bottom - r0.top) / scale, len: t.getComputedTextLength() };
        });
      }));
      measured.forEach((boxes, k) => {
        const name = svgs[k];
        // getBoundingClientRect spans the font's whole line box (ascent + descent of DejaVu Sans, 1.16 em): shrink
        // each box by 12 % of its height top and bottom to the glyphs' extent before comparing.
        const shrunk = boxes.map((x) => ({ ...x, top: x.top + 0.12 * (x.b - x.top), b: x.b - 0.12 * (x.b - x.top) }));
        const hits: string[] = [];
        for (let i = 0; i < shrunk.length; i++) for (let j = i + 1; j < shrunk.length; j++) {
          const a = shrunk[i], c = shrunk[j];
          if (!a.t.trim() || !c.t.trim()) continue;
          const ox = Math.min(a.r, c.r) - Math.max(a.l, c.l), oy = Math.min(a.b, c.b) - Math.max(a.top, c.top);
          if (ox > 0.5 && oy > 0.5) hits.push(`${a.t} / ${c.t}`);
        }
        expect(hits, name).toEqual([]);
        // Our width estimates (glyph advance widths, used to lay labels out) against the browser's text length in
        // figure units, labels of 8 characters or more: within 6 % (kerning, hinting of glyph positions).
        const est = svgTexts(texts[k]);
        expect(boxes.length, name).toBe(est.length);
        est.forEach((t, i) => {
          if (t.rotate || t.text.length < 8 || !boxes[i].len) return;
          const w = t.box[2] - t.box[0];
          expect(Math.abs(w - boxes[i].len) / w, `${name}: ${t.text}`).toBeLessThan(0.06);
        });
      });
    } finally {
      await context.close();
      rmSync(userDataDir, { recursive: true, force: true });
      rmSync(dir, { recursive: true, force: true });
    }
  }, 120_000);
});
