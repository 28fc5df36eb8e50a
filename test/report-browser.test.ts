/**
 * The report opened in a real headless browser (Debian's chromium through playwright-core): no console errors, no
 * script run from campaign text, every image loaded. A screenshot goes to output/report-screenshot.png. Skipped,
 * with a message, only when /usr/bin/chromium is absent.
 */
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import type { OutputRecord } from '../src/pipeline/manifest.ts';
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
    const context = await chromium.launchPersistentContext(userDataDir, {
      executablePath: CHROMIUM,
      headless: true,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
      viewport: { width: 1200, height: 900 },
    });
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
});
