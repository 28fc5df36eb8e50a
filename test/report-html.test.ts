import { describe, expect, it } from 'vitest';
import type { OutputRecord } from '../src/pipeline/manifest.ts';
import { CAUTIONS, reportHtml } from '../src/render/report.ts';
import { wakeReportTables } from '../src/render/reportTables.ts';
import { EVIL, fixtureAnalysis, fixtureCampaign, fixtureField, fixtureManifest, fixtureWake } from './render-fixture.ts';

const campaign = fixtureCampaign();
const outputs: OutputRecord[] = [
  { kind: 'image', path: 'images/P5D_w0_u_norm.svg', plane: 'P5D', window: 0, description: 'u / u_inf' },
  { kind: 'image', path: 'images/P5D_w0_u_norm.png', plane: 'P5D', window: 0, description: 'u / u_inf' },
  { kind: 'image', path: 'images/summary_deficit.svg', description: 'deficit downstream' },
  { kind: 'field-table', path: 'tables/P5D field.csv', plane: 'P5D', description: 'retrieved field' },
  { kind: 'rejected-rows', path: 'rejected.csv', description: 'rejected rows with file, line and reason' },
];

/** Text of the page without tags (entities left as they are). */
const bodyText = (html: string) => html.replace(/<style>[\s\S]*?<\/style>/, '').replace(/<[^>]+>/g, ' ');

describe('report HTML (pure)', () => {
  it('escapes every campaign and manifest string: no <script> survives', () => {
    const m = fixtureManifest(campaign, outputs, {
      campaign: { name: `alpha ${EVIL}`, file: `/x/${EVIL}.yaml`, sha256: 'ab', description: campaign.description },
      assumptions: [`assumed ${EVIL}`],
    });
    const html = reportHtml(m, { wakeTables: [{ title: `t ${EVIL}`, columns: [EVIL], rows: [[EVIL]] }], planSummary: { items: [[EVIL, EVIL]] } });
    expect(campaign.description).toContain('<script>'); // the fixture really carries markup
    expect(html.toLowerCase()).not.toContain('<script');
    expect(html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;');
    // Name (title and heading), description, file, warning, assumption, settings, table title/header/cell, plan item.
    expect(html.split('&lt;script&gt;').length - 1).toBeGreaterThanOrEqual(12);
  });

  it('accounts for samples per instrument: read = accepted + rejected by reason, only reasons that occurred', () => {
    const html = reportHtml(fixtureManifest(campaign, outputs));
    const text = bodyText(html);
    // Fixture: lid-a 1000 read, 900 accepted (60 low CNR, 40 outliers); lid-b 800, 700 (50 low CNR, 50 bad numbers).
    expect(text).toMatch(/lid-a\s+1\u202f000\s+900\s+90\.0\s+0\s+60\s+40\s+yes/);
    expect(text).toMatch(/lid-b\s+800\s+700\s+87\.5\s+50\s+50\s+0\s+yes/);
    expect(text).toMatch(/all instruments\s+1\u202f800\s+1\u202f600\s+88\.9\s+50\s+110\s+40\s+yes/);
    expect(html).toContain('<th colspan="3" class="group">rejected, by reason</th>'); // three reasons occurred
    expect(html).toContain('>bad number</th>');
    expect(html).toContain('>low CNR</th>');
    expect(html).toContain('>outlier</th>');
    expect(html).not.toContain('>bad time</th>'); // zero everywhere: no column
    expect(html).toContain('The accounting balances for every instrument.');
  });

  it('flags an accounting that does not balance', () => {
    const m = fixtureManifest(campaign, outputs);
    m.samples.perInstrument['lid-a'].accepted = 901;
    m.samples.balanced = false;
    const html = reportHtml(m);
    expect(html).toContain('does NOT balance');
    expect(html).toMatch(/lid-a<\/td>.*?<span class="bad">NO<\/span>/s);
  });

  it('shows every image once (from its SVG) with links to both files, summary first', () => {
    const html = reportHtml(fixtureManifest(campaign, outputs));
    const imgs = [...html.matchAll(/<img src="([^"]+)"/g)].map((m) => m[1]);
    expect(imgs).toEqual(['images/summary_deficit.svg', 'images/P5D_w0_u_norm.svg']);
    expect(html).toContain('<a href="images/P5D_w0_u_norm.png">PNG</a>');
  });

  it('links every data file (URI-encoded) and states the cautions', () => {
    const html = reportHtml(fixtureManifest(campaign, outputs));
    expect(html).toContain('<a href="tables/P5D%20field.csv">tables/P5D field.csv</a>');
    expect(html).toContain('<a href="rejected.csv">rejected.csv</a>');
    for (const c of CAUTIONS) expect(html).toContain(c); // no characters in the cautions need escaping
    expect(html).toMatch(/research measurements/);
    expect(html).toMatch(/manufacturer, the site rules and licensed engineering practice/);
    expect(html).toMatch(/safety instructions and local regulations/);
  });

  it('shows the first rows of long tables with a link to the full file', () => {
    const rows = Array.from({ length: 30 }, (_, i) => [i, i * 0.5]);
    const html = reportHtml(fixtureManifest(campaign, outputs), { wakeTables: [{ title: 'long', columns: ['i', 'half'], rows, link: 'wake/rows.csv' }], maxRows: 25 });
    expect(html).toContain('First 25 of 30 rows.');
    expect(html).toContain('<a href="wake/rows.csv">wake/rows.csv</a>');
    expect(html).toContain('<td class="num">24</td>');
    expect(html).not.toContain('<td class="num">25</td>');
  });

  it('copes with an empty run: no instruments, windows, outputs or timings', () => {
    const m = fixtureManifest(campaign, [], { windows: [], inputs: [], timings_s: {}, assumptions: [], warnings: [], startedAt: '', finishedAt: '' });
    m.samples = { total: { ...m.samples.total, read: 0, accepted: 0, rejected: Object.fromEntries(Object.keys(m.samples.total.rejected).map((k) => [k, 0])) as typeof m.samples.total.rejected }, perInstrument: {}, balanced: true };
    const html = reportHtml(m);
    expect(html).toContain('No data files were written.');
    expect(html).toContain('No warnings.');
    expect(html).not.toContain('id="images"'); // no image section without images
    expect(html).not.toContain('NaN');
  });

  it('builds wake tables from an analysis', () => {
    const f = fixtureField(campaign.planes[0], 0);
    const tables = wakeReportTables(fixtureAnalysis([fixtureWake(f)]), { rows: 'wake/rows.csv' });
    expect(tables.map((t) => t.title)).toEqual(['Per plane and window', 'Downstream summary (near-aligned windows)', 'Wake steering: yaw-offset bins']);
    expect(tables[0].rows[0].slice(0, 4)).toEqual(['P5D', 0, 5, 'ok']);
    expect(tables[0].link).toBe('wake/rows.csv');
  });
});
