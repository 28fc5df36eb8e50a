import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { OutputRecord } from '../src/pipeline/manifest.ts';
import { reportStage } from '../src/pipeline/stages.ts';
import type { EnsembleRecord } from '../src/records/manifest.ts';
import { CAUTIONS, reportHtml } from '../src/render/report.ts';
import { ensembleReportTable, wakeReportTables } from '../src/render/reportTables.ts';
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
    // Name (title and heading), description, warning, assumption, settings, table title/header/cell, plan item. (The
    // campaign file is shown relative to its own folder, and the "/" of "</script>" ends that folder's name, so the
    // file itself no longer shows the opening tag.)
    expect(html.split('&lt;script&gt;').length - 1).toBeGreaterThanOrEqual(11);
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

  it('shows each instrument\'s CNR limit with how it was chosen, and the CNR figures beside it (not among the others)', () => {
    const m = fixtureManifest(campaign, [...outputs,
      { kind: 'image', path: 'images/qc_cnr_inconsistent.svg', description: 'share of inconsistent samples against CNR' },
      { kind: 'image', path: 'images/qc_cnr_inconsistent.png', description: 'share of inconsistent samples against CNR' }]);
    m.cnrLimits = {
      mode: 'mixed',
      perInstrument: {
        'lid-a': { min_db: -23, max_db: 5, status: 'break', note: `estimated -23 dB ${EVIL}`, rowsRead: 5000, referenced: 4800, scatter_ms: 0.512 },
        'lid-b': { min_db: -27, max_db: 5, status: 'fixed', note: 'fixed limit -27 dB (instruments[1].cnrMin_db)' },
      },
    };
    const html = reportHtml(m);
    const text = bodyText(html);
    expect(text).toMatch(/lid-a\s+-23\.0\s+break\s+5\u202f000\s+4\u202f800\s+0\.51\s+estimated -23 dB/);
    expect(text).toMatch(/lid-b\s+-27\.0\s+fixed\s+fixed limit -27 dB \(instruments\[1\]\.cnrMin_db\)/);
    expect(html.toLowerCase()).not.toContain('<script'); // the note is escaped
    // The long note wraps at the reading width (it ran off the page on one line); the short status does not.
    expect(html).toContain('<td class="long">fixed limit -27 dB (instruments[1].cnrMin_db)</td>');
    expect(html).toContain('<td>fixed</td>');
    // The figure sits in the quality-control section, once.
    const samples = html.slice(html.indexOf('<section id="samples">'), html.indexOf('</section>', html.indexOf('<section id="samples">')));
    expect(samples).toContain('images/qc_cnr_inconsistent.svg');
    expect(html.split('src="images/qc_cnr_inconsistent.svg"').length - 1).toBe(1);
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

  it('shows every row of a long table in a frame that scrolls, with a link to the full file', () => {
    const rows = Array.from({ length: 30 }, (_, i) => [i, i * 0.5]);
    const html = reportHtml(fixtureManifest(campaign, outputs), { wakeTables: [{ title: 'long', columns: ['i', 'half'], rows, link: 'wake/rows.csv' }] });
    expect(html).not.toContain('First 25');
    expect(html).toContain('<div class="scroll" data-rows="30">');
    expect(html).toContain('<a href="wake/rows.csv">wake/rows.csv</a>');
    expect(html).toContain('<td class="num">29</td>');
    expect(html).toMatch(/\.scroll \{ overflow: auto;/); // the frame scrolls both ways
  });

  it('gives a long text cell (a reason) a reading width instead of squeezing it between numeric columns', () => {
    const reason = 'horizontal plane: lateral track per downstream row instead of a cross-section fit';
    const html = reportHtml(fixtureManifest(campaign, outputs), { wakeTables: [{ title: 'w', columns: ['plane', 'x', 'reason'], rows: [['hub@TR-1', 1.5, reason], ['hub@TR-2', 2, 'ok']] }] });
    expect(html).toContain(`<td class="long">${reason}</td>`); // over 40 characters: the reading width
    expect(html).toContain('<td>ok</td>'); // a short text as before
    expect(html).toMatch(/td\.long \{ min-width: 32em; \}/);
  });

  it('rounds a value to its uncertainty in table cells, and plain numbers to the decimals of their column', () => {
    const html = reportHtml(fixtureManifest(campaign, outputs), {
      wakeTables: [{ title: 'u', columns: ['y_{c} (m) ± s.e.', 'γ (°)'], rows: [[{ value: 12.3456, uncertainty: 0.0712 }, -0.009]], decimals: [undefined, 1] }],
    });
    // Two significant digits of the uncertainty (0.071), the value to the same decimal place (GUM 7.2.6, from memory).
    expect(html).toContain('<td class="num">12.346\u00a0\u00b1\u00a00.071</td>');
    expect(html).toContain('<td class="num">0.0</td>'); // -0.009 to one decimal is 0.0, never "−0.0"
    expect(html).toContain('<th class="num">y<sub>c</sub> (m) ± s.e.</th>');
  });

  it('shows paths relative to the campaign folder and the manifest\'s own times and memory', () => {
    const m = fixtureManifest(campaign, outputs, {
      campaign: { name: 'c', file: '/data/invented/site/campaign.yaml', sha256: 'ab', description: '' },
      inputs: [{ file: '/data/invented/site/data/lid-a.csv', instrument: 'lid-a', bytes: 1, sha256: 'cd' }],
      settings: { sourceFile: '/data/invented/site/campaign.yaml', baseDir: '/data/invented/site', instruments: [{ files: ['/data/invented/site/data/lid-a.csv'] }] },
      timings_s: { ingest: 1.23456, images: 0.5, total: 2.71828 },
      peakRss_bytes: 123.4 * 2 ** 20,
    });
    const html = reportHtml(m);
    expect(html).not.toContain('/data/invented');
    expect(html).toContain('>data/lid-a.csv<');
    expect(html).toContain('&quot;baseDir&quot;: &quot;.&quot;');
    expect(html).toContain('&quot;sourceFile&quot;: &quot;campaign.yaml&quot;');
    // Three decimals of the manifest's seconds; memory in MiB with one decimal.
    expect(html).toContain('<td>ingest</td><td class="num">1.235</td>');
    expect(html).toContain('<td>total</td><td class="num">2.718</td>');
    expect(html).toContain('2.718 s (manifest: timings_s.total)');
    expect(html).toContain('123.4 MiB (manifest: peakRss_bytes)');
    // A run whose process had reached that peak before it started (the demo runs three campaigns and a simulation
    // in one process): the report gives the figure as an upper bound, not as the run's own peak.
    const earlier = reportHtml({ ...m, peakRssAtStart_bytes: 123.4 * 2 ** 20 });
    expect(earlier).toContain('at most 123.4 MiB: the process reached this peak before the run');
    const grew = reportHtml({ ...m, peakRssAtStart_bytes: 80 * 2 ** 20 });
    expect(grew).toContain("123.4 MiB, the process's peak (80.0 MiB when the run started)");
    expect(grew).not.toContain('at most');
  });

  it('puts the planner\'s maps in the planner section and the others under Figures', () => {
    const recs: OutputRecord[] = [
      ...outputs,
      { kind: 'image', path: 'plan/trust_P5D.svg', plane: 'P5D', description: 'trust map' },
      { kind: 'image', path: 'images/P5D_panels.svg', plane: 'P5D', description: 'u/u_inf of all windows' },
    ];
    const html = reportHtml(fixtureManifest(campaign, recs), { planSummary: { items: [['a', 'b']] } });
    const plan = /<section id="plan">([\s\S]*?)<\/section>/.exec(html)![1];
    const figs = /<section id="images">([\s\S]*?)<\/section>/.exec(html)![1];
    expect(plan).toContain('src="plan/trust_P5D.svg"');
    expect(figs).not.toContain('plan/trust_P5D.svg');
    expect(figs).toContain('src="images/P5D_panels.svg"');
    expect(figs.indexOf('summary_deficit')).toBeLessThan(figs.indexOf('P5D_panels')); // summary, planes, windows
    expect(figs.indexOf('P5D_panels')).toBeLessThan(figs.indexOf('P5D_w0_u_norm'));
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
    // The centre with its standard error from the fit (fixture: y_c = 15 m, s.e. 0.2 m).
    expect(tables[0].rows[0][8]).toEqual({ value: 15, uncertainty: 0.2 });
    expect(tables[0].link).toBe('wake/rows.csv');
  });

  it('gives the wake track of a horizontal plane its own table and headers', () => {
    const h = fixtureField(campaign.planes[1], 0);
    const tables = wakeReportTables(fixtureAnalysis([fixtureWake(h)]), { tracks: 'wake/track.csv' });
    const track = tables.find((t) => t.title.startsWith('Horizontal planes'))!;
    expect(track.columns).toEqual(['plane', 'window', 'x (m)', 'x/D', 'y_{c} (m) ± s.e.', 'σ_{y} (m)', 'amplitude']);
    // Fixture track: x = 255 m (D = 120 m), y_c = 14 m with s.e. 1 m, sigma_y 25 m, amplitude 0.4.
    expect(track.rows[0]).toEqual(['H90', 0, 255, 255 / 120, { value: 14, uncertainty: 1 }, 25, 0.4]);
    expect(track.rows.length).toBe(6);
    expect(track.link).toBe('wake/track.csv');
  });

  describe('condition bins (ensembles)', () => {
    // Three yaw-offset bins: 0 pools windows 0 and 3, 1 received none, 2 pools window 1. One ensemble row per plane
    // and non-empty bin, given out of order as the stages may finish them.
    const bins: EnsembleRecord[] = [
      { bin: 0, label: 'yaw_offset_deg in [-20, -5)', windows: [0, 3], empty: false },
      { bin: 1, label: 'yaw_offset_deg in [-5, 5)', windows: [], empty: true },
      { bin: 2, label: 'yaw_offset_deg in [5, 20)', windows: [1], empty: false },
    ];
    const ensembleRow = (plane: number, bin: number) => {
      const f = fixtureField(campaign.planes[plane], bin);
      f.window = { ...f.window, kind: 'ensemble', label: bins[bin].label, members: bins[bin].windows.map((w) => [w * 600, w * 600 + 600] as [number, number]) };
      return fixtureWake(f);
    };
    const rows = [ensembleRow(1, 2), ensembleRow(0, 2), ensembleRow(1, 0), ensembleRow(0, 0)];

    it('groups the rows by bin (label and windows pooled on the first row), planes in order, empty bins listed', () => {
      const t = ensembleReportTable(rows, bins, 'wake/ensembles.csv')!;
      expect(t.title).toBe('Condition bins (ensembles)');
      const col = (name: string) => t.columns.indexOf(name);
      expect(t.rows.map((r) => [r[0], r[1], r[2], r[3]])).toEqual([
        [0, 'yaw_offset_deg in [-20, -5)', 2, 'P5D'], [null, '', null, 'H90'],
        [1, 'yaw_offset_deg in [-5, 5)', 0, ''],
        [2, 'yaw_offset_deg in [5, 20)', 1, 'P5D'], [null, '', null, 'H90'],
      ]);
      // The fixture's cross-plane fit: y_c = 15 m (s.e. 0.2), sigma_y = 35 m (s.e. 0.2); yaw offset 8 deg; flag ok.
      // Exact values: the table passes the fit's numbers through, rounding happens when the page is written.
      expect(t.rows[0][col('y_{c} (m) ± s.e.')]).toEqual({ value: 15, uncertainty: 0.2 });
      expect(t.rows[0][col('σ_{y} (m) ± s.e.')]).toEqual({ value: 35, uncertainty: 0.2 });
      expect(t.rows[0][col('γ, yaw offset (°)')]).toBe(8);
      expect(t.rows[0][col('flag')]).toBe('ok');
      expect(t.rows[1][col('flag')]).toBe('horizontal_plane'); // no 2-D fit on a horizontal plane: centre empty
      expect(t.rows[1][col('y_{c} (m) ± s.e.')]).toBeNaN();
      expect(t.rows[2][col('flag')]).toBe('empty');
      expect(t.rows[2][col('reason')]).toBe('no window fell in this bin');
      expect(t.note).toContain('1 of 3 bins received no window');
      expect(t.link).toBe('wake/ensembles.csv');
      // No ensemble rows (no conditions, or no planes): no table.
      expect(ensembleReportTable([], bins)).toBeUndefined();
    });

    it('the report stage shows the table after the per-window rows, with the empty bin, linked to wake/ensembles.csv', async () => {
      const runDir = mkdtempSync(join(tmpdir(), 'wakeplane-report-'));
      const manifest = fixtureManifest(campaign, [...outputs, { kind: 'ensemble-table', path: 'wake/ensembles.csv', description: 'per plane and bin' }], { ensembles: bins });
      const shared = { wake: fixtureAnalysis([fixtureWake(fixtureField(campaign.planes[0], 0))]), ensembleRows: rows };
      await reportStage().finish!({ campaign, runDir, images: true, manifest, shared });
      const html = readFileSync(join(runDir, 'report.html'), 'utf8');
      const wake = /<section id="wake">([\s\S]*?)<\/section>/.exec(html)![1];
      const titles = [...wake.matchAll(/<h3>([^<]*)<\/h3>/g)].map((m) => m[1]);
      expect(titles.slice(0, 2)).toEqual(['Per plane and window', 'Condition bins (ensembles)']);
      const bySection = wake.slice(wake.indexOf('Condition bins (ensembles)'));
      expect(bySection).toContain('<div class="scroll" data-rows="5">');
      expect(bodyText(bySection)).toMatch(/1\s+yaw_offset_deg in \[-5, 5\)\s+0\s+–\s+empty/);
      // 15 m with a standard error of 0.2 m: two significant digits of the uncertainty (GUM 7.2.6, from memory).
      expect(bySection).toContain('<td class="num">15.00\u00a0\u00b1\u00a00.20</td>');
      expect(bySection).toContain('<a href="wake/ensembles.csv">wake/ensembles.csv</a>');
    });
  });
});

