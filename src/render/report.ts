/**
 * The run report: one static HTML file (report.html in the run folder) that opens without a server or network. It
 * shows the run summary, the sample accounting and quality control, the figures (summary plots, one multi-panel
 * figure per plane, single windows when drawn), the result tables with all their rows in frames that scroll, links
 * to every data file, the planner's results with its maps, the settings, assumptions, warnings, the time per stage
 * and the cautions. Every string from the campaign file, the data or the manifest is HTML-escaped; file paths are
 * shown relative to the campaign file's folder (never the machine's absolute paths); times and memory are the
 * manifest's own figures.
 */
import { dirname, isAbsolute, join, relative } from 'node:path';
import { writeFileAtomic } from '../io/atomic.ts';
import type { OutputRecord, RunManifest } from '../records/manifest.ts';
import { REJECT_REASONS, accountBalances, type SampleAccount } from '../qc/reasons.ts';
import { esc } from './escape.ts';
import { fixed, significant, withUncertainty } from './numbers.ts';
import { REPORT_CSS } from './reportCss.ts';
import { spans } from './richText.ts';
import { groupBy } from '../math/group.ts';

/** A table for the report: every row, in a frame that scrolls, with a link to the full file. */
export interface ReportTable {
  title: string;
  /** Column headings; sub/superscript markup (`y_{c}`) becomes <sub>/<sup>. */
  columns: string[];
  rows: ReportCell[][];
  /** Decimal places per column for plain numbers (default: 4 significant digits). */
  decimals?: (number | undefined)[];
  /** Path of the full table relative to the run folder. */
  link?: string;
  note?: string;
}

/** A table cell: text, a number, a yes/no, or a value with its uncertainty (both rounded to the uncertainty). */
export type ReportCell = string | number | boolean | null | undefined | { value: number; uncertainty: number };

export interface ReportExtras {
  /** Wake result tables (see reportTables.ts for tables made from a WakeAnalysis). */
  wakeTables?: ReportTable[];
  /** The planner's summary: label/value pairs, optional tables and notes. */
  planSummary?: { title?: string; items: [string, string][]; tables?: ReportTable[]; notes?: string[] };
  /** Sections of the single-instrument geometries (profiles, nacelle instruments, wake tracking). */
  geometry?: ReportSection[];
  /** The uncertainty budget (pipeline/budgetStage.ts). */
  uncertainty?: ReportSection;
}

/** A titled section: label/value pairs, tables and notes. */
export interface ReportSection { title: string; items: [string, string][]; tables?: ReportTable[]; notes?: string[] }

/** The cautions printed in every report. */
export const CAUTIONS = [
  'The results are research measurements. Each value carries the uncertainty stated beside it, and masked cells were not measured; do not read more into a map than its uncertainty and masks allow.',
  'Any change to turbine control, loads or operation follows the manufacturer, the site rules and licensed engineering practice, not these results alone.',
  'Laser instruments and any work near turbines follow the instruments\u2019 safety instructions and local regulations.',
];

/** Characters from which a table's text cell is given a reading width (td.long). */
const LONG_TEXT = 40;

export function reportHtml(manifest: RunManifest, extras: ReportExtras = {}): string {
  const m = manifest;
  const show = pathShower(m);
  const images = m.outputs.filter((o) => o.kind === 'image' && !o.path.startsWith('plan/') && !o.path.startsWith('images/qc_cnr_')); // the CNR figures stand with the quality control
  const planImages = m.outputs.filter((o) => o.kind === 'image' && o.path.startsWith('plan/'));
  const dataFiles = m.outputs.filter((o) => o.kind !== 'image' && o.kind !== 'report');
  const sections: string[] = [];
  const toc: [string, string][] = [];
  const section = (id: string, title: string, body: string) => {
    toc.push([id, title]);
    sections.push(`<section id="${id}"><h2>${esc(title)}</h2>\n${body}</section>`);
  };

  // Run summary.
  const tot = m.samples.total;
  const dur = Date.parse(m.finishedAt) - Date.parse(m.startedAt);
  const facts: [string, string][] = [
    ['Campaign file', `${esc(show(m.campaign.file))}`],
    ['Campaign file SHA-256', `<code>${esc(m.campaign.sha256)}</code>`],
    ['Started', esc(m.startedAt)],
    ...(m.finishedAt ? [['Finished', `${esc(m.finishedAt)}${Number.isFinite(dur) ? ` (${(dur / 1000).toFixed(1)} s)` : ''}`] as [string, string]] : []),
    ['Input files', String(m.inputs.length)],
    ['Averaging windows', String(m.windows.length)],
    ['Samples read', num(tot.read)],
    ['Samples accepted', `${num(tot.accepted)}${tot.read ? ` (${((100 * tot.accepted) / tot.read).toFixed(1)} %)` : ''}`],
    ['Throughput', `${num(Math.round(m.samplesPerSecond))} samples/s`],
    ...(Number.isFinite(m.timings_s.total) ? [['Run time', `${secondsText(m.timings_s.total)} s (manifest: timings_s.total)`] as [string, string]] : []),
    ...(m.peakRss_bytes > 0 ? [['Peak memory', peakText(m)] as [string, string]] : []),
    ['Tool', `${esc(m.tool.name)} ${esc(m.tool.version)}`],
  ];
  section('summary', 'Run summary', `<dl class="facts">${facts.map(([k, v]) => `<dt>${esc(k)}</dt><dd>${v}</dd>`).join('')}</dl>`);

  // Sample accounting and the quality-control settings.
  section('samples', 'Samples and quality control', accountingHtml(m) + cnrLimitsHtml(m) + qcSettingsHtml(m.settings));

  // Windows.
  if (m.windows.length) {
    // Why each window exists (kind, label, state level) and its condition bin, where the run has them.
    const labels = m.windows.some((w) => w.label !== '');
    const levels = m.windows.some((w) => w.level_deg !== undefined);
    const bins = m.windows.some((w) => w.bin !== undefined);
    const ensembleLabel = new Map((m.ensembles ?? []).map((e) => [e.bin, e.label]));
    section('windows', 'Averaging windows', tableHtml({
      title: '',
      columns: ['window', 'kind', ...(labels ? ['label'] : []), ...(levels ? ['state level (°)'] : []), 'start (UTC)', 'end (UTC)', 'wind from (°)', 'accepted samples', ...(bins ? ['condition bin'] : [])],
      rows: m.windows.map((w) => [
        w.index, w.kind, ...(labels ? [w.label] : []), ...(levels ? [w.level_deg ?? ''] : []), shortIso(w.start), shortIso(w.end), w.direction_deg, w.samples,
        ...(bins ? [w.bin === undefined || w.bin < 0 ? 'none' : `${w.bin}${ensembleLabel.has(w.bin) ? ` (${ensembleLabel.get(w.bin)})` : ''}`] : []),
      ]),
      decimals: [0, undefined, ...(labels ? [undefined] : []), ...(levels ? [1] : []), undefined, undefined, 1, 0, ...(bins ? [undefined] : [])],
    }));
  }

  // Figures.
  if (images.length) section('images', 'Figures', READING_GUIDE + imagesHtml(images));

  // Tables.
  if (extras.wakeTables?.length) section('wake', 'Wake results', extras.wakeTables.map((t) => tableHtml(t)).join('\n'));
  if (extras.planSummary || planImages.length) {
    const p = extras.planSummary ?? { items: [] };
    section('plan', p.title ?? 'Campaign plan',
      `<dl class="facts">${p.items.map(([k, v]) => `<dt>${esc(k)}</dt><dd>${esc(v)}</dd>`).join('')}</dl>` +
        (p.tables ?? []).map((t) => tableHtml(t)).join('\n') +
        (p.notes?.length ? `<ul class="note">${p.notes.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>` : '') +
        (planImages.length ? `<h3>Planner maps</h3>${galleryHtml(planImages)}` : ''));
  }

  if (extras.uncertainty) {
    const u = extras.uncertainty;
    section('uncertainty', u.title,
      `<dl class="facts">${u.items.map(([a, b]) => `<dt>${esc(a)}</dt><dd>${esc(b)}</dd>`).join('')}</dl>` +
        (u.tables ?? []).map((t) => tableHtml(t)).join('\n') +
        (u.notes?.length ? `<ul class="note">${u.notes.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>` : ''));
  }

  (extras.geometry ?? []).forEach((p, k) => section(`geometry-${k}`, p.title,
    `<dl class="facts">${p.items.map(([a, b]) => `<dt>${esc(a)}</dt><dd>${esc(b)}</dd>`).join('')}</dl>` +
      (p.tables ?? []).map((t) => tableHtml(t)).join('\n') +
      (p.notes?.length ? `<ul class="note">${p.notes.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>` : '')));

  // Data files and inputs.
  section('files', 'Data files',
    (dataFiles.length
      ? tableHtmlRaw(['kind', 'file', 'plane', 'window', 'description'], dataFiles.map((o) => [esc(o.kind), link(o.path), esc(o.plane ?? ''), o.window === undefined ? '' : String(o.window), esc(o.description ?? '')]))
      : '<p class="note">No data files were written.</p>') +
      `<h3>Inputs</h3><p class="note">Paths relative to the campaign file's folder.</p>` +
      tableHtmlRaw(['file', 'instrument', 'bytes', 'SHA-256'], m.inputs.map((f) => [esc(show(f.file)), esc(f.instrument), num(f.bytes), `<code>${esc(f.sha256)}</code>`]), [2]));

  // Assumptions and warnings.
  section('assumptions', 'Assumptions and warnings',
    `<h3>Assumptions</h3>` + listHtml(m.assumptions, 'None stated.') +
      `<h3>Warnings</h3>` + listHtml(m.warnings, 'No warnings.', 'warnings'));

  // Settings and timings.
  section('settings', 'Settings',
    `<p class="note">The campaign after defaults, as this run used it (paths relative to the campaign file's folder).</p>` +
      `<details><summary>Show the settings</summary><pre>${esc(JSON.stringify(relativePaths(m.settings, show), null, 2))}</pre></details>` +
      `<h3>Time per stage</h3>` +
      `<p class="note">As in manifest.json (timings_s), seconds; the total runs to the start of this report.${m.rendered ? ` Figures and report redone by <code>wakeplane render</code> at ${esc(m.rendered.at)} in ${secondsText(m.rendered.seconds)} s.` : ''}</p>` +
      tableHtmlRaw(['stage', 'seconds'], Object.entries(m.timings_s).map(([k, v]) => [esc(k), secondsText(v)]), [1]));

  const cautions = `<aside class="caution" id="cautions"><h2>Read before use</h2><ul>${CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></aside>`;
  const title = `${m.campaign.name} \u2014 run report`;
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(title)}</title>
<style>${REPORT_CSS}</style>
</head>
<body>
<header class="run">
<div class="kicker">wakeplane run report</div>
<h1>${esc(m.campaign.name)}</h1>
${m.campaign.description ? `<p class="lead">${esc(m.campaign.description)}</p>` : ''}
<nav class="toc">${toc.map(([id, t]) => `<a href="#${id}">${esc(t)}</a>`).join('')}<a href="#cautions">Read before use</a></nav>
</header>
${cautions}
${sections.join('\n')}
<footer>Written by ${esc(m.tool.name)} ${esc(m.tool.version)}${m.finishedAt ? ` at ${esc(m.finishedAt)}` : ''}. The manifest (manifest.json) in this folder lists every input and output with checksums.</footer>
</body>
</html>
`;
}

/** Writes report.html into the run folder (atomically) and returns its output record. */
export async function writeReport(manifest: RunManifest, runDir: string, extras: ReportExtras = {}): Promise<OutputRecord> {
  writeFileAtomic(join(runDir, 'report.html'), reportHtml(manifest, extras));
  return { kind: 'report', path: 'report.html', description: 'run report (static HTML)' };
}

const READING_GUIDE = `<details><summary>How to read the maps</summary><ul class="note">
<li>Cross planes are seen looking downstream and horizontal planes from above with the flow going up the page: in both, +y (rotor frame, to the left looking downstream) is on the left. Axes are in metres, with rotor diameters from the hub on the top and right.</li>
<li>Colours are filled contour bands (cividis, readable with colour-vision deficiencies) on one range for every plane and window of the run (or the range fixed in the campaign), so maps compare. Values beyond the range take the end colours; the triangles at the ends of the colour bar count them.</li>
<li>Grey and hatched cells were not retrieved; the legend names each reason and counts its cells. A mark on the colour bar shows a masking threshold.</li>
<li>Arrows show the in-plane velocity (v, w) on one scale for the whole run; the reference arrow in the legend gives it. Grey arrows with an open head are cells where only two instruments saw the flow: w was not measured but taken as 0, so the arrow shows v alone. The dash-dotted circle is the rotor disk with its hub; on horizontal planes the bar is the turbine's rotor seen from above.</li>
<li>\u00d7 is the wake centre of the 2D Gaussian fit, with its width ellipse (\u03c3<sub>y</sub>, \u03c3<sub>z</sub>) dashed; \u25c7 is the centre of the minimum-power rotor disk, a second estimate that assumes no wake shape. Values in labels and tables are rounded to their uncertainty.</li>
</ul></details>`;

function accountingHtml(m: RunManifest): string {
  const per = Object.entries(m.samples.perInstrument);
  const all: [string, SampleAccount][] = [...per, ['all instruments', m.samples.total]];
  const reasons = REJECT_REASONS.filter((r) => all.some(([, a]) => (a.rejected[r] ?? 0) > 0));
  const reasonLabel = (r: string) => r.replace(/_/g, ' ').replace(/\bcnr\b/, 'CNR');
  const head = ['instrument', 'read', 'accepted', 'accepted %', ...reasons.map(reasonLabel), 'balances'];
  const rows = all.map(([id, a], i) => {
    const ok = accountBalances(a);
    const cells = [
      esc(id), num(a.read), num(a.accepted), a.read ? ((100 * a.accepted) / a.read).toFixed(1) : '\u2013',
      ...reasons.map((r) => num(a.rejected[r] ?? 0)),
      ok ? '<span class="ok">yes</span>' : '<span class="bad">NO</span>',
    ];
    return { cells, total: i === all.length - 1 };
  });
  const numeric = head.map((_, i) => i).filter((i) => i > 0 && i < head.length - 1);
  // Two header rows: the fixed columns span both; the rejection reasons sit under one "rejected, by reason" heading.
  const fixed = (i: number) => `<th rowspan="2"${numeric.includes(i) ? ' class="num"' : ''}>${esc(head[i])}</th>`;
  const top = [0, 1, 2, 3].map(fixed).join('') + (reasons.length ? `<th colspan="${reasons.length}" class="group">rejected, by reason</th>` : '') + fixed(head.length - 1);
  const sub = reasons.map((r) => `<th class="num reason">${esc(reasonLabel(r))}</th>`).join('');
  const table = `<div class="scroll"><table class="accounting"><thead><tr>${top}</tr>${sub ? `<tr>${sub}</tr>` : ''}</thead><tbody>` +
    rows.map((r) => `<tr${r.total ? ' class="total"' : ''}>${r.cells.map((c, i) => `<td${numeric.includes(i) ? ' class="num"' : ''}>${c}</td>`).join('')}</tr>`).join('') +
    `</tbody></table></div>`;
  const balanced = m.samples.balanced;
  return `<p>Every sample read is either accepted (used in a cell of a plane) or counted under exactly one rejection reason: read = accepted + rejected.</p>` +
    table +
    `<p class="${balanced ? 'ok' : 'bad'}">${balanced ? 'The accounting balances for every instrument.' : 'The accounting does NOT balance: see the warnings.'}</p>`;
}

/** The CNR limit of each instrument: value, how it was chosen, the pre-pass figures, and the figure when drawn. */
function cnrLimitsHtml(m: RunManifest): string {
  const l = m.cnrLimits;
  if (!l) return '';
  const rows = Object.entries(l.perInstrument).map(([id, x]) => [
    esc(id), x.min_db.toFixed(1), esc(x.status), x.rowsRead === undefined ? '' : num(x.rowsRead), x.referenced === undefined ? '' : num(x.referenced),
    x.scatter_ms === undefined || !Number.isFinite(x.scatter_ms) ? '' : x.scatter_ms.toFixed(2), esc(x.note),
  ]);
  const figs = m.outputs.filter((o) => o.kind === 'image' && /^images\/qc_cnr_/.test(o.path));
  const intro = l.mode !== 'fixed'
    ? '<p>The lower CNR limit of each instrument set to <code>auto</code> (the default of <code>qc.cnr_db.min</code>; <code>instruments[].cnrMin_db</code> overrides it per instrument) was estimated from the data before the run: from rows spread through every file (the first rows of compressed and NetCDF files), each sample is compared with the median of its stronger-signal neighbours (same instrument, place and direction, time block), and the limit is where the share of inconsistent samples rises above that of the strongest signals enough that accepting them costs more than rejecting them (idea after Beck &amp; Kuhn 2017, Remote Sensing 9(6) 561). The same limits apply to every part of a run.</p>'
    : '<p>The lower CNR limits are fixed (<code>qc.cnr_db.min</code>, or <code>instruments[].cnrMin_db</code> per instrument).</p>';
  return `<h3>CNR limits</h3>${intro}` +
    tableHtmlRaw(['instrument', 'limit (dB)', 'status', 'rows read', 'with reference', 'good scatter (m/s)', 'how'], rows, [1, 3, 4, 5]) +
    (figs.length ? galleryHtml(figs) : '');
}

/** The qc block of the settings, flattened to key = value lines (absent when the settings carry none). */
function qcSettingsHtml(settings: unknown): string {
  const qc = settings && typeof settings === 'object' ? (settings as Record<string, unknown>).qc : undefined;
  if (!qc || typeof qc !== 'object') return '';
  const items: [string, string][] = [];
  const walk = (o: Record<string, unknown>, prefix: string) => {
    for (const [k, v] of Object.entries(o)) {
      if (v && typeof v === 'object' && !Array.isArray(v)) walk(v as Record<string, unknown>, `${prefix}${k}.`);
      else items.push([`${prefix}${k}`, JSON.stringify(v)]);
    }
  };
  walk(qc as Record<string, unknown>, 'qc.');
  return `<h3>Quality-control settings</h3><dl class="facts">${items.map(([k, v]) => `<dt><code>${esc(k)}</code></dt><dd>${esc(v)}</dd>`).join('')}</dl>`;
}

/** Figures grouped: summary plots, one multi-panel figure per plane, then single windows folded per window. */
function imagesHtml(images: OutputRecord[]): string {
  const summary = images.filter((o) => o.plane === undefined);
  const planes = images.filter((o) => o.plane !== undefined && o.window === undefined && o.bin === undefined);
  const windows = images.filter((o) => o.plane !== undefined && o.window !== undefined);
  const bins = images.filter((o) => o.plane !== undefined && o.bin !== undefined);
  const out: string[] = [];
  if (summary.length) out.push(`<h3>Summary</h3>${galleryHtml(summary)}`);
  if (planes.length) out.push(`<h3>Planes</h3><p class="note">One figure per plane (and one per plane for the condition bins, when there are any): the windows or bins side by side on one colour scale and one arrow scale.</p>${galleryHtml(planes)}`);
  const folded = (title: string, recs: OutputRecord[], key: (o: OutputRecord) => string) => {
    const byKey = groupBy(recs, key);
    out.push(`<h3>${esc(title)}</h3>`);
    let folds = 0;
    for (const [k, group] of byKey) {
      const n = new Set(group.map((r) => r.path.replace(/\.(svg|png)$/i, ''))).size;
      out.push(`<details class="fold"${folds++ === 0 ? ' open' : ''}><summary>${esc(k)} <span class="note">(${n} figures)</span></summary>${galleryHtml(group)}</details>`);
    }
  };
  if (bins.length) folded('Single condition bins', bins, (o) => `Plane ${o.plane}, condition bin ${o.bin}`);
  if (windows.length) folded('Single windows', windows, (o) => `Plane ${o.plane}, window ${o.window}`);
  return out.join('\n');
}

/** One figure per image base name, shown from its SVG (or PNG) at the full width of the page, with links to both files. */
function galleryHtml(images: OutputRecord[]): string {
  const byBase = groupBy(images, (o) => o.path.replace(/\.(svg|png)$/i, ''));
  const figs: string[] = [];
  for (const [base, recs] of byBase) {
    const shown = recs.find((r) => /\.svg$/i.test(r.path)) ?? recs[0];
    const r0 = recs[0];
    const links = recs.map((r) => `<a href="${href(r.path)}">${esc(r.path.slice(r.path.lastIndexOf('.') + 1).toUpperCase())}</a>`).join(' \u00b7 ');
    figs.push(`<figure><img src="${href(shown.path)}" alt="${esc(r0.description ?? base)}"><figcaption>${esc(r0.description ?? '')} \u2014 <code>${esc(base.slice(base.lastIndexOf('/') + 1))}</code> \u00b7 ${links}</figcaption></figure>`);
  }
  return `<div class="gallery">${figs.join('\n')}</div>`;
}

/** A table with all its rows, in a frame that scrolls both ways when the table is wider or longer than the page. */
function tableHtml(t: ReportTable): string {
  const numericCol = t.columns.map((_, j) => t.rows.length > 0 && t.rows.every((r) => r[j] === null || r[j] === undefined || typeof r[j] === 'number' || typeof r[j] === 'object'));
  const head = `<tr>${t.columns.map((c, j) => `<th${numericCol[j] ? ' class="num"' : ''}>${richHtml(c)}</th>`).join('')}</tr>`;
  // A long text (a reason, a note) gets a column wide enough to read in a few lines: squeezed between numeric columns
  // it made rows a dozen lines tall; the table scrolls sideways instead.
  const tdClass = (v: unknown, j: number) => (numericCol[j] ? ' class="num"' : typeof v === 'string' && v.length > LONG_TEXT ? ' class="long"' : '');
  const body = t.rows.map((r) => `<tr>${r.map((v, j) => `<td${tdClass(v, j)}>${esc(cell(v, t.decimals?.[j]))}</td>`).join('')}</tr>`).join('');
  const foot = t.link || t.note ? `<p class="note">${t.link ? `Full table: ${link(t.link)}. ` : ''}${esc(t.note ?? '')}</p>` : '';
  return `${t.title ? `<h3>${esc(t.title)}</h3>` : ''}<div class="scroll" data-rows="${t.rows.length}"><table><thead>${head}</thead><tbody>${body}</tbody></table></div>${foot}`;
}

/** A label with sub/superscript markup as HTML (escaped). */
function richHtml(label: string): string {
  return spans(label).map((p) => (p.shift === 'base' ? esc(p.text) : `<${p.shift}>${esc(p.text)}</${p.shift}>`)).join('');
}

/** A table whose cells are already markup (escaped by the caller); long texts wrap as in tableHtml. */
function tableHtmlRaw(columns: string[], rows: string[][], numericCols: number[] = []): string {
  const tdClass = (v: string, j: number) => (numericCols.includes(j) ? ' class="num"' : v.replace(/<[^>]*>/g, '').length > LONG_TEXT ? ' class="long"' : '');
  return `<div class="scroll"><table><thead><tr>${columns.map((c, j) => `<th${numericCols.includes(j) ? ' class="num"' : ''}>${esc(c)}</th>`).join('')}</tr></thead><tbody>` +
    rows.map((r) => `<tr>${r.map((v, j) => `<td${tdClass(v, j)}>${v}</td>`).join('')}</tr>`).join('') +
    `</tbody></table></div>`;
}

function listHtml(items: string[], empty: string, cls = ''): string {
  if (!items.length) return `<p class="note">${esc(empty)}</p>`;
  return `<ul${cls ? ` class="${cls}"` : ''}>${items.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>`;
}

/** A relative link to a file in the run folder (each path segment URI-encoded, then escaped). */
function href(path: string): string {
  return esc(path.split('/').map(encodeURIComponent).join('/'));
}

function link(path: string): string {
  return `<a href="${href(path)}">${esc(path)}</a>`;
}

function cell(v: ReportCell, decimals?: number): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'object') return Number.isFinite(v.value) ? withUncertainty(v.value, v.uncertainty) : '\u2013';
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return '\u2013';
    if (decimals !== undefined) return fixed(v, decimals);
    if (Number.isInteger(v)) return String(v);
    return significant(v, 4);
  }
  return v;
}

/** Seconds as the report and its test show them: three decimals. */
export function secondsText(s: number): string {
  return Number.isFinite(s) ? s.toFixed(3) : '\u2013';
}

/** The run's peak memory, or an upper bound when the process had reached its peak before the run started. */
function peakText(m: RunManifest): string {
  const before = m.peakRssAtStart_bytes;
  if (before !== undefined && before >= m.peakRss_bytes) {
    return `at most ${mibText(m.peakRss_bytes)} MiB: the process reached this peak before the run (earlier work in the same process, such as the demo's simulation or another campaign) (manifest: peakRss_bytes, peakRssAtStart_bytes)`;
  }
  // the process's peak counts what it held before the run (modules; in the demo, the simulation and earlier campaigns)
  if (before !== undefined && before > 0) return `${mibText(m.peakRss_bytes)} MiB, the process's peak (${mibText(before)} MiB when the run started) (manifest: peakRss_bytes, peakRssAtStart_bytes)`;
  return `${mibText(m.peakRss_bytes)} MiB (manifest: peakRss_bytes)`;
}

/** Bytes as MiB with one decimal. */
export function mibText(bytes: number): string {
  return (bytes / 2 ** 20).toFixed(1);
}

/**
 * Shows a path relative to the campaign file's folder (paths already relative stay as they are), so that the
 * report never carries the machine's folders. A campaign given in memory shows paths relative to the working
 * folder of the run.
 */
export function pathShower(m: RunManifest): (p: string) => string {
  const file = m.campaign.file;
  const base = isAbsolute(file) ? dirname(file) : process.cwd();
  return (p: string) => {
    if (!isAbsolute(p)) return p;
    const r = relative(base, p);
    return r === '' ? '.' : r;
  };
}

/** A copy of a settings object with every absolute path shown relative (see pathShower). */
export function relativePaths(v: unknown, show: (p: string) => string): unknown {
  if (typeof v === 'string') return isAbsolute(v) && v.length > 1 ? show(v) : v;
  if (Array.isArray(v)) return v.map((x) => relativePaths(x, show));
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, relativePaths(x, show)]));
  return v;
}

function num(v: number): string {
  return Number.isFinite(v) ? Math.round(v).toLocaleString('en-US').replace(/,/g, '\u202f') : '\u2013';
}

/** "2026-06-14T10:00:00.000Z" -> "2026-06-14 10:00:00" (other text unchanged). */
function shortIso(t: string): string {
  return t.replace(/^(\d{4}-\d{2}-\d{2})T(\d{2}:\d{2}:\d{2})(\.0+)?Z$/, '$1 $2');
}

